"""The picture area: overlays land on the pixel-centre grid of docs/conventions.md
(pixel (c, r) covers [c - 0.5, c + 0.5) x [r - 0.5, r + 0.5)), arcs turn the documented way,
lines stay thin at any zoom (cosmetic pens)."""

import math

import numpy as np
import pytest

pytest.importorskip("pytestqt")
from PyQt5.QtCore import QRectF  # noqa: E402
from PyQt5.QtGui import QColor, QImage, QPainter  # noqa: E402

from profilecheck import overlays as ov  # noqa: E402
from profilecheck.viewer.canvas import ImageCanvas, array_to_qimage, clip_line_to_rect  # noqa: E402
from profilecheck.viewer.jobs import JobOutcome  # noqa: E402
from profilecheck.viewer.model import ViewerModel  # noqa: E402

W, H = 48, 36  # non-square, to catch row/column swaps


def _scene_pixels(qtbot, overlays, image=None):
    m = ViewerModel()
    m.set_image(np.zeros((H, W)) if image is None else image)
    c = ImageCanvas(m)
    qtbot.addWidget(c)
    m.set_outcome(JobOutcome("thread", {}, tuple(overlays), ()))
    img = QImage(W, H, QImage.Format_RGB32)
    img.fill(QColor(0, 0, 0))
    p = QPainter(img)
    # one output pixel per image pixel: the image rect [-0.5, W - 0.5) maps onto [0, W)
    c.scene().render(p, QRectF(0, 0, W, H), QRectF(-0.5, -0.5, W, H))
    p.end()
    ptr = img.constBits()
    ptr.setsize(img.byteCount())
    a = np.frombuffer(ptr, np.uint8).reshape(H, img.bytesPerLine() // 4, 4)[:, :W, :3]
    return a[:, :, ::-1].astype(int).sum(axis=2)  # brightness, RGB summed


def test_picture_pixel_and_overlay_point_coincide(qtbot):
    # A marker at (x, y) = (7, 3) must sit on the picture's pixel col 7, row 3.
    img = np.zeros((H, W))
    img[3, 7] = 1.0
    m = ViewerModel()
    m.set_image(img)
    c = ImageCanvas(m)
    qtbot.addWidget(c)
    r = c._pix.sceneBoundingRect()
    assert (r.left(), r.top(), r.width(), r.height()) == (-0.5, -0.5, W, H)
    b = _scene_pixels(qtbot, [], image=img)
    assert tuple(np.argwhere(b == b.max())[0]) == (3, 7)


def test_horizontal_segment_is_centred_on_its_pixel_row(qtbot):
    b = _scene_pixels(qtbot, [ov.Segment((5.0, 10.0), (40.0, 10.0), "fit")])
    col = b[:, 20]
    assert int(np.argmax(col)) == 10            # y = 10 is the centre of row 10
    assert col[9] == pytest.approx(col[11], abs=12)  # spill symmetric about the row
    assert col[10] > 2 * col[9]
    assert b[10, 2] == 0 and b[10, 45] == 0      # ends at x = 5 and x = 40


def test_vertical_segment_is_centred_on_its_pixel_column(qtbot):
    b = _scene_pixels(qtbot, [ov.Segment((30.0, 4.0), (30.0, 30.0), "fit")])
    row = b[15, :]
    assert int(np.argmax(row)) == 30
    assert row[29] == pytest.approx(row[31], abs=12)


def test_arc_turns_toward_plus_y(qtbot):
    # Image angles: 0 along +x, positive toward +y, i.e. clockwise on screen (conventions.md):
    # a quarter arc from 0 deg sweeping +90 deg ends straight below the centre.
    cx, cy, r = 20.0, 12.0, 10.0
    b = _scene_pixels(qtbot, [ov.Arc((cx, cy), r, 0.0, 90.0, "fit")])
    lower = (round(cx + r * math.cos(math.radians(45))), round(cy + r * math.sin(math.radians(45))))
    upper = (round(cx + r * math.cos(math.radians(-45))), round(cy + r * math.sin(math.radians(-45))))
    assert b[lower[1], lower[0]] > 100
    assert b[upper[1], upper[0]] == 0


def test_marker_cross_centre(qtbot):
    b = _scene_pixels(qtbot, [ov.Marker((12.0, 20.0), 8.0, "fit")])
    assert b[20, 12] == b.max()
    assert b[20, 20] == 0 and b[28, 12] == 0    # half-size 4 px: nothing 8 px away


def test_clip_infinite_line_to_image():
    # Line y = x through the origin, clipped to [-0.5, 47.5] x [-0.5, 35.5]: analytic ends.
    ends = clip_line_to_rect((0.0, 0.0), (1.0, 1.0), (-0.5, -0.5, W - 0.5, H - 0.5))
    np.testing.assert_allclose(ends, [(-0.5, -0.5), (35.5, 35.5)], rtol=0, atol=1e-12)
    assert clip_line_to_rect((0.0, 100.0), (1.0, 0.0), (-0.5, -0.5, 10, 10)) is None


def test_infinite_line_spans_the_picture(qtbot):
    b = _scene_pixels(qtbot, [ov.InfiniteLine((0.0, 18.0), (1.0, 0.0), "fit")])
    assert b[18, 0] > 0 and b[18, W - 1] > 0 and int(np.argmax(b[:, 24])) == 18


def test_lines_stay_thin_when_zoomed(qtbot):
    m = ViewerModel()
    m.set_image(np.zeros((H, W)))
    c = ImageCanvas(m)
    qtbot.addWidget(c)
    c.resize(500, 400)
    c.show()
    m.set_outcome(JobOutcome("thread", {}, (ov.Segment((0.0, 18.0), (47.0, 18.0), "fit"),), ()))
    c.set_zoom(8.0)
    c.centerOn(24.0, 18.0)
    qtbot.wait(20)
    g = c.viewport().grab().toImage().convertToFormat(QImage.Format_RGB32)
    x = g.width() // 2
    lit = [y for y in range(g.height()) if QColor(g.pixel(x, y)).red() > 120]
    assert lit, "the line is not drawn"
    assert len(lit) <= 4   # a cosmetic pen: ~2 screen px at x8, not 8 x 1.6 = 13 px


def test_qimage_from_arrays_keeps_values():
    q = array_to_qimage(np.array([[0, 128, 255]], np.uint8))
    assert [QColor(q.pixel(i, 0)).red() for i in range(3)] == [0, 128, 255]
    q = array_to_qimage(np.zeros((2, 3, 3), np.uint8) + np.array([255, 0, 0], np.uint8))
    assert QColor(q.pixel(0, 0)).blue() == 255   # OpenCV frames are B, G, R
    with pytest.raises(ValueError):
        array_to_qimage(np.zeros((2, 2, 2)))
