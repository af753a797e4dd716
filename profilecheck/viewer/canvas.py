"""The picture area: the image with the measurement overlays, zoom and pan (PyQt5).

Scene coordinates *are* image pixel coordinates with integer values at pixel centres
(docs/conventions.md): the picture item is offset by (-0.5, -0.5) so pixel (c, r) covers
[c - 0.5, c + 0.5) x [r - 0.5, r + 0.5). Overlays are drawn with cosmetic pens (a fixed
width on screen) and text that ignores the zoom, so lines stay crisp at any magnification.
"""

from __future__ import annotations

import math

import numpy as np
from PyQt5.QtCore import QPointF, QRectF, Qt
from PyQt5.QtGui import QBrush, QColor, QFont, QImage, QPainter, QPainterPath, QPen, QPixmap
from PyQt5.QtWidgets import (QGraphicsItem, QGraphicsItemGroup, QGraphicsPathItem,
                             QGraphicsPixmapItem, QGraphicsScene, QGraphicsView)

from .. import overlays as ov
from .model import ViewerModel
from .palette import OVERLAY_DASHED, OVERLAY_WORDS, overlay_colour

__all__ = ["ImageCanvas", "array_to_qimage", "clip_line_to_rect", "legend_html"]

ZOOM_STEP = 1.25
ZOOM_MIN, ZOOM_MAX = 0.02, 64.0


def array_to_qimage(a: np.ndarray) -> QImage:
    """A numpy picture as a QImage that owns its pixels.

    uint8 grey, uint16 grey, uint8 BGR (OpenCV order) or float grey in [0, 1]."""
    if a.ndim == 2 and a.dtype == np.uint8:
        fmt, bpl, data = QImage.Format_Grayscale8, a.shape[1], np.ascontiguousarray(a)
    elif a.ndim == 2 and a.dtype == np.uint16:
        fmt, bpl, data = QImage.Format_Grayscale16, 2 * a.shape[1], np.ascontiguousarray(a)
    elif a.ndim == 3 and a.shape[2] == 3 and a.dtype == np.uint8:
        fmt, bpl, data = QImage.Format_BGR888, 3 * a.shape[1], np.ascontiguousarray(a)
    elif a.ndim == 2:
        data = np.ascontiguousarray(np.clip(np.nan_to_num(a) * 255.0 + 0.5, 0, 255).astype(np.uint8))
        fmt, bpl = QImage.Format_Grayscale8, a.shape[1]
    else:
        raise ValueError(f"cannot show a picture of shape {a.shape} and type {a.dtype}")
    h, w = a.shape[:2]
    return QImage(data.data, w, h, bpl, fmt).copy()


def clip_line_to_rect(point, direction, rect: tuple[float, float, float, float]):
    """Clip the infinite line ``point + t * direction`` to ``rect`` = (x0, y0, x1, y1).

    Returns the two end points ((x, y), (x, y)) or None when the line misses the rectangle
    (Liang-Barsky parametric clipping)."""
    px, py = float(point[0]), float(point[1])
    dx, dy = float(direction[0]), float(direction[1])
    n = math.hypot(dx, dy)
    if n == 0 or not math.isfinite(n):
        return None
    dx, dy = dx / n, dy / n
    x0, y0, x1, y1 = rect
    t0, t1 = -math.inf, math.inf
    for d, p, lo, hi in ((dx, px, x0, x1), (dy, py, y0, y1)):
        if abs(d) < 1e-15:
            if p < lo or p > hi:
                return None
            continue
        a, b = (lo - p) / d, (hi - p) / d
        t0, t1 = max(t0, min(a, b)), min(t1, max(a, b))
    if t0 > t1:
        return None
    return (px + t0 * dx, py + t0 * dy), (px + t1 * dx, py + t1 * dy)


def legend_html(overlays) -> str:
    """Key of the overlay styles in use: a line sample (dashed where drawn dashed) in the
    style's colour, then its meaning in words ('' when nothing is drawn)."""
    seen = []
    for o in overlays:
        st = getattr(o, "style", "")
        if st in OVERLAY_WORDS and st not in seen and not isinstance(o, (ov.Label, ov.ScaleBar)):
            seen.append(st)
    parts = []
    for st in seen:
        sample = "\u2012 \u2012 \u2012" if st in OVERLAY_DASHED else "\u2014\u2014\u2014"
        parts.append(f'<span style="color:{overlay_colour(st)}; font-weight:bold">{sample}</span>'
                     f'&nbsp;{OVERLAY_WORDS[st]}')
    return "&nbsp;&nbsp;&nbsp;".join(parts)


class _Tag(QGraphicsItem):
    """Text on a dark box, a fixed size on screen whatever the zoom."""

    def __init__(self, text: str, colour: QColor) -> None:
        super().__init__()
        self.setFlag(QGraphicsItem.ItemIgnoresTransformations, True)
        self.text = text
        self._colour = colour
        self._font = QFont()
        self._font.setPointSize(10)
        from PyQt5.QtGui import QFontMetricsF
        fm = QFontMetricsF(self._font)
        lines = text.splitlines() or [""]
        w = max(fm.horizontalAdvance(s) for s in lines)
        self._rect = QRectF(0, 0, w + 8, fm.height() * len(lines) + 4)

    def boundingRect(self) -> QRectF:
        return self._rect

    def paint(self, p: QPainter, option, widget=None) -> None:
        p.setPen(Qt.NoPen)
        p.setBrush(QColor(0, 0, 0, 170))
        p.drawRect(self._rect)
        p.setPen(self._colour)
        p.setFont(self._font)
        p.drawText(self._rect.adjusted(4, 2, -4, -2), Qt.AlignLeft | Qt.AlignTop, self.text)


class ImageCanvas(QGraphicsView):
    """Shows ``model.image`` (or its raw frame) and ``model.overlays``; wheel zooms about
    the cursor, dragging pans. Only draws: it never changes the model."""

    def __init__(self, model: ViewerModel, parent=None) -> None:
        super().__init__(parent)
        self.model = model
        self.setScene(QGraphicsScene(self))
        self.setRenderHint(QPainter.Antialiasing, True)
        self.setDragMode(QGraphicsView.ScrollHandDrag)
        self.setTransformationAnchor(QGraphicsView.AnchorUnderMouse)
        self.setResizeAnchor(QGraphicsView.AnchorViewCenter)
        self.setBackgroundBrush(QBrush(QColor("#202428")))
        self._pix = QGraphicsPixmapItem()
        self._pix.setOffset(-0.5, -0.5)  # pixel (c, r) covers [c-0.5, c+0.5) (conventions.md)
        self._pix.setTransformationMode(Qt.FastTransformation)  # show true pixels when zoomed
        self._pix.setZValue(0)
        self.scene().addItem(self._pix)
        self._hint = _Tag("Open a picture (File \u2192 Open picture\u2026) or start the camera.",
                          QColor("#e0e0e0"))
        self.scene().addItem(self._hint)
        self._group: QGraphicsItemGroup | None = None
        self._size: tuple[int, int] | None = None
        self._auto_fit = True
        self.overlay_items: list[QGraphicsItem] = []
        model.subscribe("image", self._on_image)
        model.subscribe("result", self._on_result)
        self._on_image()
        self._on_result()

    # -- model -> screen -------------------------------------------------------------------
    def _on_image(self) -> None:
        a = self.model.raw_frame
        self._hint.setVisible(a is None)
        if a is None:
            self._pix.setPixmap(QPixmap())
            self._size = None
            self.scene().setSceneRect(self._hint.boundingRect())
            return
        self._pix.setPixmap(QPixmap.fromImage(array_to_qimage(a)))
        size = (int(a.shape[1]), int(a.shape[0]))
        if size != self._size:
            self._size = size
            w, h = size
            self.scene().setSceneRect(QRectF(-0.5, -0.5, w, h))
            if self._auto_fit:
                self.fit_to_window()

    def _on_result(self) -> None:
        if self._group is not None:
            self.scene().removeItem(self._group)
            self._group = None
        self.overlay_items = []
        if self._size is None:
            return
        items = [it for o in self.model.overlays for it in self._items_for(o)]
        if items:
            self._group = self.scene().createItemGroup(items)
            self._group.setZValue(1)
        self.overlay_items = items

    def _pen(self, style: str) -> QPen:
        pen = QPen(QColor(overlay_colour(style)))
        pen.setCosmetic(True)  # constant width on screen: crisp at any zoom
        pen.setWidthF(1.6)
        if style in OVERLAY_DASHED:
            pen.setStyle(Qt.DashLine)
        return pen

    def _path_item(self, path: QPainterPath, style: str) -> QGraphicsPathItem:
        it = QGraphicsPathItem(path)
        it.setPen(self._pen(style))
        it.setData(0, style)
        return it

    def _items_for(self, o) -> list[QGraphicsItem]:
        w, h = self._size
        path = QPainterPath()
        if isinstance(o, ov.Segment):
            path.moveTo(*o.p0)
            path.lineTo(*o.p1)
            return [self._path_item(path, o.style)]
        if isinstance(o, ov.InfiniteLine):
            ends = clip_line_to_rect(o.point, o.direction, (-0.5, -0.5, w - 0.5, h - 0.5))
            if ends is None:
                return []
            path.moveTo(*ends[0])
            path.lineTo(*ends[1])
            return [self._path_item(path, o.style)]
        if isinstance(o, ov.Polyline):
            pts = list(o.points)
            if len(pts) < 2:
                return []
            path.moveTo(*pts[0])
            for q in pts[1:]:
                path.lineTo(*q)
            if o.closed:
                path.closeSubpath()
            return [self._path_item(path, o.style)]
        if isinstance(o, ov.Arc):
            cx, cy = o.centre
            r = float(o.radius)
            rect = QRectF(cx - r, cy - r, 2 * r, 2 * r)
            # Image angles grow toward +y (clockwise on screen); Qt's grow counter-clockwise.
            path.arcMoveTo(rect, -o.start_deg)
            path.arcTo(rect, -o.start_deg, -o.span_deg)
            return [self._path_item(path, o.style)]
        if isinstance(o, ov.Marker):
            x, y = o.point
            s = float(o.size) / 2.0
            path.moveTo(x - s, y)
            path.lineTo(x + s, y)
            path.moveTo(x, y - s)
            path.lineTo(x, y + s)
            return [self._path_item(path, o.style)]
        if isinstance(o, ov.Label):
            tag = _Tag(o.text, QColor(overlay_colour(o.style)))
            tag.setPos(QPointF(*o.point))
            tag.setData(0, o.style)
            return [tag]
        if isinstance(o, ov.ScaleBar):
            x0, y0 = 0.04 * w, 0.95 * h
            x1 = x0 + float(o.length_px)
            t = 0.012 * h
            path.moveTo(x0, y0)
            path.lineTo(x1, y0)
            path.moveTo(x0, y0 - t)
            path.lineTo(x0, y0 + t)
            path.moveTo(x1, y0 - t)
            path.lineTo(x1, y0 + t)
            bar = self._path_item(path, o.style)
            tag = _Tag(o.text or f"{o.length_mm:g} mm", QColor(overlay_colour(o.style)))
            tag.setPos(QPointF(x0, y0 - 3 * t - 18.0 / max(self.zoom, 1e-6)))
            return [bar, tag]
        return []

    # -- zoom and pan ----------------------------------------------------------------------
    @property
    def zoom(self) -> float:
        """Screen pixels per image pixel."""
        return float(self.transform().m11())

    def set_zoom(self, factor: float) -> None:
        """Set the magnification (screen px per image px), clamped to [0.02, 64]."""
        if not (isinstance(factor, (int, float)) and math.isfinite(factor) and factor > 0):
            raise ValueError(f"factor must be a positive number, got {factor!r}")
        f = min(max(float(factor), ZOOM_MIN), ZOOM_MAX)
        self._auto_fit = False
        self.resetTransform()
        self.scale(f, f)

    def zoom_by(self, steps: float) -> None:
        self.set_zoom(self.zoom * ZOOM_STEP ** steps)

    def fit_to_window(self) -> None:
        """Show the whole picture; the view then follows the window size."""
        if self._size is None:
            return
        w, h = self._size
        self.fitInView(QRectF(-0.5, -0.5, w, h), Qt.KeepAspectRatio)
        self._auto_fit = True

    def wheelEvent(self, event) -> None:  # noqa: N802 (Qt name)
        steps = event.angleDelta().y() / 120.0
        if steps:
            self.zoom_by(steps)
        event.accept()

    def resizeEvent(self, event) -> None:  # noqa: N802 (Qt name)
        super().resizeEvent(event)
        if self._auto_fit:
            self.fit_to_window()

    def image_point_at(self, view_pos) -> tuple[float, float]:
        """Image (x, y) px under a widget position."""
        p = self.mapToScene(view_pos)
        return float(p.x()), float(p.y())
