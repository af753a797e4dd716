"""Annotated images: draw the Qt-free overlays of a measurement onto its image.

The picture shows what the report says: every measurement returns a tuple of
:mod:`profilecheck.overlays` primitives in image pixels, and :func:`draw_overlays` draws
them with OpenCV (anti-aliased, sub-pixel coordinates through ``cv2``'s fixed-point
``shift`` argument) in the report palette (:mod:`profilecheck.report._palette`).

Coordinates follow ``docs/conventions.md``: (x, y) = (col, row), integer values at pixel
centres. ``cv2`` drawing functions use the same convention (an integer coordinate is a pixel
centre), so no half-pixel shift is applied at full size.
"""

from __future__ import annotations

import math
import os
from pathlib import Path
from typing import Iterable, Sequence

import numpy as np

from .._files import atomic_write_bytes
from ..errors import ImageError, ProfilecheckError
from ..overlays import Arc, InfiniteLine, Label, Marker, Polyline, ScaleBar, Segment
from ._palette import PENS, Pen, pen_for

__all__ = ["draw_overlays", "write_annotated_png", "encode_png", "to_rgb8", "label_text",
           "ascii_text", "write_bytes_atomic"]

#: Fixed-point fraction bits passed to cv2 as ``shift`` (1/16 px resolution).
_SHIFT = 4
_ONE = 1 << _SHIFT

_ASCII = {"\u00b1": "+/-", "\u00b5": "u", "\u03bc": "u", "\u00b0": " deg", "\u2212": "-",
          "\u00d7": "x", "\u2013": "-", "\u2014": "-", "\u2264": "<=", "\u2265": ">="}


def to_rgb8(img: np.ndarray) -> np.ndarray:
    """Convert a grey or RGB image to an (H, W, 3) uint8 RGB copy.

    Parameters
    ----------
    img : ndarray
        (H, W) or (H, W, 3); uint8, uint16 (scaled by 1/257) or float in [0, 1] (clipped).

    Raises
    ------
    TypeError
        ``img`` is not a numpy array.
    ValueError
        Wrong number of dimensions, wrong channel count, empty, or non-finite floats.
    """
    if not isinstance(img, np.ndarray):
        raise TypeError(f"img must be a numpy array, got {type(img).__name__}")
    if img.ndim not in (2, 3):
        raise ValueError(f"img must be 2-D grey or (H, W, 3) RGB, got ndim={img.ndim}")
    if img.ndim == 3 and img.shape[2] != 3:
        raise ValueError(f"img must have 3 colour channels, got shape {img.shape}")
    if img.shape[0] == 0 or img.shape[1] == 0:
        raise ValueError(f"img is empty (shape {img.shape})")
    if img.dtype == np.uint8:
        a = img.copy()
    elif img.dtype == np.uint16:
        a = (img.astype(np.float64) / 257.0 + 0.5).astype(np.uint8)
    elif np.issubdtype(img.dtype, np.floating):
        if not np.all(np.isfinite(img)):
            raise ValueError("img contains NaN or infinite values")
        a = (np.clip(img, 0.0, 1.0) * 255.0 + 0.5).astype(np.uint8)
    elif img.dtype == np.bool_:
        a = img.astype(np.uint8) * 255
    else:
        raise ValueError(f"img dtype {img.dtype} not supported (uint8, uint16 or float)")
    if a.ndim == 2:
        a = np.repeat(a[:, :, None], 3, axis=2)
    return np.ascontiguousarray(a)


def draw_overlays(img: np.ndarray, overlays: Iterable[object], *, max_side: int | None = None,
                  scale_bar: ScaleBar | None = None, legend: bool = True) -> np.ndarray:
    """Draw measurement overlays on an image.

    Parameters
    ----------
    img : ndarray
        Grey (H, W) float in [0, 1] or uint8/uint16, or (H, W, 3) RGB uint8. Not modified.
    overlays : iterable
        :mod:`profilecheck.overlays` primitives (``Segment``, ``InfiniteLine``, ``Polyline``,
        ``Arc``, ``Marker``, ``Label``, ``ScaleBar``) in image px, (x, y) = (col, row).
        Unknown objects are skipped (a newer primitive must not stop a report).
    max_side : int, optional
        If given and the longer image side exceeds it, the picture is shrunk (area
        averaging) so its longer side is ``max_side`` px; overlay coordinates are mapped with
        the pixel-centre convention, ``x' = (x + 0.5) s - 0.5``.
    scale_bar : ScaleBar, optional
        Extra scale bar (in full-size px), drawn lower-left like one in ``overlays``.
    legend : bool
        Draw a key of the styles used (pattern + name) in the upper-right corner.

    Returns
    -------
    ndarray
        (H', W', 3) uint8 RGB.

    Notes
    -----
    Each stroke is drawn twice: a wider halo in a contrasting colour, then the stroke, so
    lines read on the bright field and on the dark silhouette alike. Dashed patterns are
    cut along the arc length of the densified path. Text uses a Hershey font, which is
    ASCII only: '±', 'µ', '°' are written '+/-', 'u', ' deg'.

    Examples
    --------
    >>> import numpy as np
    >>> from profilecheck.overlays import Segment
    >>> out = draw_overlays(np.ones((40, 60)), [Segment((5, 20), (55, 20))], legend=False)
    >>> out.shape, out.dtype.name
    ((40, 60, 3), 'uint8')
    """
    if max_side is not None:
        if isinstance(max_side, bool) or not isinstance(max_side, (int, np.integer)):
            raise TypeError(f"max_side must be an int, got {type(max_side).__name__}")
        if max_side < 16:
            raise ValueError(f"max_side must be >= 16 px, got {max_side}")
    rgb = to_rgb8(img)
    h0, w0 = rgb.shape[:2]
    s = 1.0
    if max_side is not None and max(h0, w0) > max_side:
        import cv2

        s = max_side / max(h0, w0)
        size = (max(1, int(round(w0 * s))), max(1, int(round(h0 * s))))
        rgb = cv2.resize(rgb, size, interpolation=cv2.INTER_AREA)
        s = size[0] / w0  # the exact factor used along x (y differs by < 1 px in rounding)
    canvas = _Canvas(rgb, s)
    items = list(overlays)
    if scale_bar is not None:
        items.append(scale_bar)
    used: list[str] = []
    bars: list[ScaleBar] = []
    labels: list[Label] = []
    for ov in items:  # strokes first, text last so labels sit on top
        if isinstance(ov, ScaleBar):
            bars.append(ov)
            continue
        if isinstance(ov, Label):
            labels.append(ov)
            continue
        if canvas.draw(ov) and ov.style not in used:
            used.append(ov.style)
    for lab in labels:
        canvas.label(lab)
    for i, bar in enumerate(bars):
        canvas.scale_bar(bar, i)
    if legend and used:
        canvas.legend(used)
    return canvas.img


def encode_png(rgb: np.ndarray) -> bytes:
    """PNG bytes of an (H, W, 3) uint8 RGB image."""
    import cv2

    if not (isinstance(rgb, np.ndarray) and rgb.ndim == 3 and rgb.shape[2] == 3
            and rgb.dtype == np.uint8):
        raise ValueError("rgb must be an (H, W, 3) uint8 array")
    ok, buf = cv2.imencode(".png", np.ascontiguousarray(rgb[:, :, ::-1]))
    if not ok:  # pragma: no cover - cv2 failure
        raise ImageError("could not encode the annotated image as PNG")
    return buf.tobytes()


def write_annotated_png(path: str | os.PathLike[str], img: np.ndarray,
                        overlays: Iterable[object], *, max_side: int | None = None,
                        scale_bar: ScaleBar | None = None) -> bytes:
    """Draw ``overlays`` on ``img`` and write a PNG at ``path`` atomically.

    The file is written to a temporary name in the same folder, flushed and renamed, so a
    failure leaves any existing file untouched. Returns the PNG bytes (for embedding in a
    job sheet).
    """
    data = encode_png(draw_overlays(img, overlays, max_side=max_side, scale_bar=scale_bar))
    write_bytes_atomic(path, data)
    return data


def write_bytes_atomic(path: str | os.PathLike[str], data: bytes) -> None:
    """Write ``data`` to ``path`` atomically (temp file in the same folder, fsync, rename)."""
    atomic_write_bytes(path, data)


def label_text(text: str, style: str) -> str:
    """The text a :class:`~profilecheck.overlays.Label` shows: ASCII, and for a verdict
    style ('pass', 'fail', 'undecided') with its word added unless already present, so the
    verdict never rests on colour alone."""
    pen = pen_for(style)
    out = ascii_text(text)
    if pen.word and pen.word.lower() not in out.lower():
        out = f"{out} [{pen.word}]" if out else pen.word
    return out


def ascii_text(text: str) -> str:
    """Transliterate the few non-ASCII symbols reports use; drop anything else."""
    out = "".join(_ASCII.get(ch, ch) for ch in str(text))
    return out.encode("ascii", "replace").decode("ascii")


class _Canvas:
    """Drawing state: the RGB image, the coordinate scale and line widths."""

    def __init__(self, img: np.ndarray, s: float) -> None:
        import cv2

        self.cv2 = cv2
        self.img = img
        self.s = s
        h, w = img.shape[:2]
        self.h, self.w = h, w
        side = max(h, w)
        self.lw = max(1, int(round(side / 700.0)))  # base line width px
        self.font = cv2.FONT_HERSHEY_SIMPLEX
        self.font_scale = max(0.4, side / 1600.0)
        self.font_th = max(1, int(round(self.font_scale * 1.6)))

    # -- coordinates -------------------------------------------------------------------------
    def xy(self, p: Sequence[float]) -> tuple[float, float]:
        x, y = float(p[0]), float(p[1])
        if self.s != 1.0:  # pixel-centre convention (docs/conventions.md)
            x, y = (x + 0.5) * self.s - 0.5, (y + 0.5) * self.s - 0.5
        return x, y

    def fixed(self, pts: np.ndarray) -> np.ndarray:
        return np.round(pts * _ONE).astype(np.int32)

    # -- primitives --------------------------------------------------------------------------
    def draw(self, ov: object) -> bool:
        """Draw one stroke primitive; return False when it is not drawable."""
        try:
            if isinstance(ov, Segment):
                pts = np.array([self.xy(ov.p0), self.xy(ov.p1)])
                return self.path(pts, pen_for(ov.style), closed=False)
            if isinstance(ov, InfiniteLine):
                seg = self.clip_line(self.xy(ov.point), ov.direction)
                return seg is not None and self.path(seg, pen_for(ov.style), closed=False)
            if isinstance(ov, Polyline):
                pts = np.array([self.xy(p) for p in ov.points], dtype=float).reshape(-1, 2)
                if pts.shape[0] < 2:
                    return False
                return self.path(pts, pen_for(ov.style), closed=bool(ov.closed))
            if isinstance(ov, Arc):
                return self.arc(ov)
            if isinstance(ov, Marker):
                return self.marker(ov)
        except (TypeError, ValueError, IndexError):
            return False
        return False

    def clip_line(self, p: tuple[float, float], d: Sequence[float]) -> np.ndarray | None:
        """Clip the line p + t d to the image rectangle [-0.5, W-0.5] x [-0.5, H-0.5]
        (Liang-Barsky parametric clipping)."""
        dx, dy = float(d[0]), float(d[1])
        n = math.hypot(dx, dy)
        if not (n > 0 and math.isfinite(n)):
            return None
        dx, dy = dx / n, dy / n
        t0, t1 = -math.inf, math.inf
        for pc, dc, lo, hi in ((p[0], dx, -0.5, self.w - 0.5), (p[1], dy, -0.5, self.h - 0.5)):
            if abs(dc) < 1e-12:
                if pc < lo or pc > hi:
                    return None
                continue
            a, b = (lo - pc) / dc, (hi - pc) / dc
            t0, t1 = max(t0, min(a, b)), min(t1, max(a, b))
        if not t0 < t1:
            return None
        return np.array([[p[0] + t0 * dx, p[1] + t0 * dy], [p[0] + t1 * dx, p[1] + t1 * dy]])

    def path(self, pts: np.ndarray, pen: Pen, *, closed: bool) -> bool:
        if not np.all(np.isfinite(pts)):
            return False
        if closed:
            pts = np.vstack([pts, pts[:1]])
        width = max(1, int(round(self.lw * pen.width)))
        pieces = _dash(pts, [v * max(width, 2) * 1.5 for v in pen.dash]) if pen.dash else [pts]
        cv2 = self.cv2
        for colour, th in ((pen.halo_rgb, width + 2), (pen.rgb, width)):
            polys = [self.fixed(q) for q in pieces if q.shape[0] >= 2]
            if polys:
                cv2.polylines(self.img, polys, False, colour, th, cv2.LINE_AA, _SHIFT)
        return True

    def arc(self, ov: Arc) -> bool:
        c = self.xy(ov.centre)
        r = float(ov.radius) * self.s
        if not (r > 0 and math.isfinite(r)):
            return False
        span = float(ov.span_deg)
        n = max(8, int(abs(span) / 360.0 * 2 * math.pi * r / 2.0) + 2)
        n = min(n, 20000)
        # image angles: 0 along +x, positive toward +y (docs/conventions.md)
        t = np.radians(float(ov.start_deg) + np.linspace(0.0, span, n))
        pts = np.column_stack([c[0] + r * np.cos(t), c[1] + r * np.sin(t)])
        return self.path(pts, pen_for(ov.style), closed=False)

    def marker(self, ov: Marker) -> bool:
        x, y = self.xy(ov.point)
        if not (math.isfinite(x) and math.isfinite(y)):
            return False
        pen = pen_for(ov.style)
        r = max(2.0, float(ov.size) * max(self.s, 0.5) / 2.0)
        solid = Pen(pen.name, pen.rgb, pen.halo_rgb, (), pen.width, pen.marker)
        shape = pen.marker
        if shape == "dot":
            cv2 = self.cv2
            ctr = (int(round(x * _ONE)), int(round(y * _ONE)))
            rad = int(round(max(1.0, r / 3.0) * _ONE))
            cv2.circle(self.img, ctr, rad + _ONE, pen.halo_rgb, -1, cv2.LINE_AA, _SHIFT)
            cv2.circle(self.img, ctr, rad, pen.rgb, -1, cv2.LINE_AA, _SHIFT)
            return True
        if shape in ("plus", "x"):
            a = 0.0 if shape == "plus" else math.pi / 4
            for k in range(2):
                ang = a + k * math.pi / 2
                dx, dy = r * math.cos(ang), r * math.sin(ang)
                self.path(np.array([[x - dx, y - dy], [x + dx, y + dy]]), solid, closed=False)
            return True
        if shape == "diamond":
            pts = np.array([[x, y - r], [x + r, y], [x, y + r], [x - r, y]])
            return self.path(pts, solid, closed=True)
        t = np.linspace(0, 2 * math.pi, 33)  # circle
        self.path(np.column_stack([x + r * np.cos(t), y + r * np.sin(t)]), solid, closed=False)
        return True

    # -- text --------------------------------------------------------------------------------
    def text_box(self, x: float, y: float, text: str, fg: tuple[int, int, int],
                 bg: tuple[int, int, int], *, scale: float | None = None) -> None:
        """Text with its top-left at (x, y), on a filled box, kept inside the image."""
        cv2 = self.cv2
        fs = self.font_scale if scale is None else scale
        (tw, th), base = cv2.getTextSize(text, self.font, fs, self.font_th)
        pad = max(2, th // 4)
        x0 = int(round(min(max(x, 0), self.w - tw - 2 * pad)))
        y0 = int(round(min(max(y, 0), self.h - th - base - 2 * pad)))
        x0, y0 = max(0, x0), max(0, y0)
        x1, y1 = x0 + tw + 2 * pad, y0 + th + base + 2 * pad
        roi = self.img[y0:y1, x0:x1]
        if roi.size:
            roi[...] = (0.25 * roi + 0.75 * np.array(bg, dtype=float)).astype(np.uint8)
        cv2.putText(self.img, text, (x0 + pad, y0 + pad + th), self.font, fs, fg,
                    self.font_th, cv2.LINE_AA)

    def label(self, lab: Label) -> None:
        pen = pen_for(lab.style)
        text = label_text(lab.text, lab.style)
        if not text:
            return
        x, y = self.xy(lab.point)
        if not (math.isfinite(x) and math.isfinite(y)):
            return
        if lab.style == "info" or lab.style not in PENS:
            fg, bg = (255, 255, 255), (0, 0, 0)
        else:
            fg, bg = pen.rgb, (0, 0, 0)
            if pen.name in ("fail", "pass"):
                fg, bg = (255, 255, 255), pen.rgb
        self.text_box(x, y, text, fg, bg)

    def scale_bar(self, bar: ScaleBar, index: int) -> None:
        """Scale bar in the lower-left corner: end ticks, black bar on a white halo, text."""
        cv2 = self.cv2
        length = float(bar.length_px) * self.s
        if not (length > 0 and math.isfinite(length)):
            return
        margin = max(8.0, 0.03 * min(self.w, self.h))
        th = max(2, 2 * self.lw)
        y = self.h - 1 - margin - index * (margin * 2.5)
        x0, x1 = margin, margin + length
        tick = 2.5 * th
        segs = [np.array([[x0, y], [x1, y]]), np.array([[x0, y - tick], [x0, y + tick]]),
                np.array([[x1, y - tick], [x1, y + tick]])]
        for colour, w in (((255, 255, 255), th + 4), ((0, 0, 0), th)):
            cv2.polylines(self.img, [self.fixed(q) for q in segs], False, colour, w,
                          cv2.LINE_AA, _SHIFT)
        text = ascii_text(bar.text) if bar.text else f"{float(bar.length_mm):g} mm"
        (tw, tht), base = cv2.getTextSize(text, self.font, self.font_scale, self.font_th)
        self.text_box(x0, y - tick - tht - base - 3 * max(2, tht // 4), text,
                      (0, 0, 0), (255, 255, 255))

    def legend(self, styles: list[str]) -> None:
        """Key of the styles drawn: a sample stroke in each pattern and its name."""
        cv2 = self.cv2
        fs = self.font_scale * 0.8
        names = [s.replace("_", " ") + (f" ({pen_for(s).word})" if pen_for(s).word else "")
                 for s in styles]
        sizes = [cv2.getTextSize(n, self.font, fs, self.font_th) for n in names]
        line_h = max(sz[0][1] + sz[1] for sz in sizes) + 6
        sample = 3.0 * line_h
        box_w = int(sample + 12 + max(sz[0][0] for sz in sizes) + 8)
        box_h = int(line_h * len(styles) + 8)
        x0 = self.w - box_w - 4
        y0 = 4
        if x0 < 0 or box_h > self.h // 2:
            return  # too small a picture for a key
        roi = self.img[y0:y0 + box_h, x0:x0 + box_w]
        roi[...] = (0.3 * roi + 0.7 * 128).astype(np.uint8)
        for i, (style, name) in enumerate(zip(styles, names)):
            yc = y0 + 4 + line_h * (i + 0.5)
            pts = np.array([[x0 + 6, yc], [x0 + 6 + sample, yc]])
            self.path(pts, pen_for(style), closed=False)
            cv2.putText(self.img, name, (int(x0 + 12 + sample), int(yc + line_h * 0.3)),
                        self.font, fs, (255, 255, 255), self.font_th, cv2.LINE_AA)


def _dash(pts: np.ndarray, pattern: Sequence[float]) -> list[np.ndarray]:
    """Cut a polyline into the 'on' pieces of an on/off ``pattern`` (lengths in px),
    following the arc length so the pattern runs on around corners and arcs."""
    pattern = [max(0.5, float(v)) for v in pattern]
    if len(pattern) % 2:
        pattern = pattern * 2
    seg = np.diff(pts, axis=0)
    seglen = np.hypot(seg[:, 0], seg[:, 1])
    s = np.concatenate([[0.0], np.cumsum(seglen)])
    total = float(s[-1])
    if total <= 0:
        return []
    period = sum(pattern)
    bounds: list[tuple[float, float]] = []
    start = 0.0
    while start < total:
        pos = start
        for i in range(0, len(pattern), 2):
            a, b = pos, min(pos + pattern[i], total)
            if a < total:
                bounds.append((a, b))
            pos += pattern[i] + pattern[i + 1]
        start += period
    pieces = []
    for a, b in bounds:
        inner = s[(s > a) & (s < b)]
        ts = np.concatenate([[a], inner, [b]])
        x = np.interp(ts, s, pts[:, 0])
        y = np.interp(ts, s, pts[:, 1])
        pieces.append(np.column_stack([x, y]))
    return pieces
