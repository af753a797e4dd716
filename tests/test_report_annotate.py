"""Annotated PNG: overlay geometry checked against analytic positions (pixel-centre
convention of docs/conventions.md), palette provenance, verdict words, file output."""

from __future__ import annotations

import math

import cv2
import numpy as np
import pytest
from numpy.testing import assert_allclose

from profilecheck.overlays import Arc, InfiniteLine, Label, Marker, Polyline, ScaleBar, Segment
from profilecheck.report import annotate
from profilecheck.report._palette import PENS
from profilecheck.report.annotate import (draw_overlays, label_text, to_rgb8,
                                          write_annotated_png)


def _ink(rgb: np.ndarray) -> np.ndarray:
    """Darkness against a white field, summed over the channels (weights for centroids)."""
    return (255.0 * 3 - rgb.astype(float).sum(axis=2))


def _centroid_rows(weights: np.ndarray, col: int) -> float:
    w = weights[:, col]
    return float((w * np.arange(w.size)).sum() / w.sum())


@pytest.mark.parametrize("y", [20.0, 20.25, 20.5, 20.8125])
def test_subpixel_segment_lands_on_its_row(y):
    # Analytic geometry: a horizontal segment at row y; with integer coordinates at pixel
    # centres its ink centroid must sit at y (cv2 shift = 4 -> 1/16 px steps).
    img = np.ones((41, 61))  # non-square, to catch a row/column swap
    out = draw_overlays(img, [Segment((5.0, y), (55.0, y), "fit")], legend=False)
    for col in (20, 30, 40):
        assert _centroid_rows(_ink(out), col) == pytest.approx(y, abs=0.1)


def test_vertical_segment_column_not_row():
    img = np.ones((50, 70))
    out = draw_overlays(img, [Segment((33.5, 5.0), (33.5, 45.0), "fit")], legend=False)
    ink = _ink(out)
    w = ink[25, :]
    assert float((w * np.arange(w.size)).sum() / w.sum()) == pytest.approx(33.5, abs=0.1)
    assert ink[2, :].sum() == 0  # nothing drawn above the segment's end (row 5, halo ~2 px)


def test_infinite_line_clipped_to_image_rectangle():
    # Line through (10, 30) along (2, 1): meets x = -0.5 at y = 30 - 10.5/2 = 24.75 and
    # x = W - 0.5 = 99.5 at y = 30 + 89.5/2 = 74.75 (analytic geometry, Liang-Barsky).
    canvas = annotate._Canvas(np.full((120, 100, 3), 255, np.uint8), 1.0)
    seg = canvas.clip_line((10.0, 30.0), (2.0, 1.0))
    assert_allclose(seg, [[-0.5, 24.75], [99.5, 74.75]], rtol=0, atol=1e-9)
    assert canvas.clip_line((10.0, 300.0), (1.0, 0.0)) is None  # wholly outside
    out = draw_overlays(np.ones((120, 100)), [InfiniteLine((10.0, 30.0), (2.0, 1.0), "axis")],
                        legend=False)
    ink = _ink(out)
    assert ink[:, 1].sum() > 0 and ink[:, 98].sum() > 0  # runs edge to edge
    # drawn near y = 30 + (x - 10)/2 at x = 60 (within the halo width)
    rows = np.nonzero(ink[:, 60])[0]
    assert rows.min() <= 55.0 <= rows.max()


def test_arc_follows_image_angle_convention():
    # Image angles: 0 along +x, positive toward +y (docs/conventions.md). A quarter arc from
    # 0 to 90 deg about (50, 50), r = 30, covers the lower-right quadrant only.
    out = draw_overlays(np.ones((101, 121)), [Arc((50.0, 50.0), 30.0, 0.0, 90.0, "fit")],
                        legend=False)
    ink = _ink(out)
    assert ink[50 + 21, 50 + 21] > 0          # 45 deg: (50 + 30 cos45, 50 + 30 sin45)
    assert ink[50 - 21, 50 + 21] == 0         # -45 deg: not drawn
    assert ink[50 - 21, 50 - 21] == 0
    yy, xx = np.nonzero(ink > 100)
    r = np.hypot(xx - 50.0, yy - 50.0)
    assert np.median(r) == pytest.approx(30.0, abs=0.5)


def test_max_side_maps_coordinates_with_pixel_centres():
    # 800 x 400 image shrunk to max side 200: s = 0.25, x' = (x + 0.5) s - 0.5.
    x, y = 401.5, 203.5
    out = draw_overlays(np.ones((400, 800)), [Polyline(((x - 200, y), (x + 200, y)), "fit")],
                        max_side=200, legend=False)
    assert out.shape == (100, 200, 3)
    assert _centroid_rows(_ink(out), 100) == pytest.approx((y + 0.5) * 0.25 - 0.5, abs=0.15)


def test_scale_bar_lower_left_and_its_length():
    img = np.ones((400, 600))
    out = draw_overlays(img, [ScaleBar(2.0, 250.0)], legend=False)
    black = np.all(out < 60, axis=2)
    rows, cols = np.nonzero(black)
    assert rows.min() > 200 and cols.max() < 300  # lower-left quadrant
    # the bar row: its end ticks are 250 px apart (length_px); caps add < th on each side
    bar_row = np.bincount(rows).argmax()
    run = np.nonzero(black[bar_row])[0]
    th = max(2, 2 * max(1, round(600 / 700)))
    assert 250 - 1 <= run.max() - run.min() <= 250 + th + 2


def test_verdict_labels_carry_words():
    assert label_text("pitch diameter 5.295 mm", "fail").endswith("[FAIL]")
    assert label_text("pitch diameter", "pass").endswith("[PASS]")
    assert label_text("PASS 5.295", "pass") == "PASS 5.295"  # not doubled
    assert label_text("note", "info") == "note"
    assert label_text("\u00b1 2 \u00b5m at 30\u00b0", "info") == "+/- 2 um at 30 deg"


def test_palette_is_okabe_ito_and_patterns_differ():
    # Colours from Okabe & Ito (2008), "Color Universal Design", the 8-colour set.
    okabe_ito = {(0, 0, 0), (230, 159, 0), (86, 180, 233), (0, 158, 115), (240, 228, 66),
                 (0, 114, 178), (213, 94, 0), (204, 121, 167), (255, 255, 255)}
    for pen in PENS.values():
        assert pen.rgb in okabe_ito, pen.name
    # colour is never the only cue: no two styles share colour, pattern and marker at once
    keys = [(p.rgb, p.dash, p.marker, p.width) for p in PENS.values()]
    assert len(set(keys)) == len(keys)
    sigs = [(p.dash, p.marker, p.width) for p in PENS.values() if p.name != "info"]
    assert len(set(sigs)) == len(sigs)


def test_every_style_and_marker_draws_something():
    for style in PENS:
        out = draw_overlays(np.ones((60, 80)), [Marker((40.0, 30.0), 10.0, style)],
                            legend=False)
        assert np.any(out != 255), style


def test_legend_and_labels_draw_inside_image():
    img = np.zeros((300, 500), np.uint8) + 200
    ovs = [Segment((10, 10), (100, 100), "envelope_max"), Label((480, 290), "far corner", "fail")]
    out = draw_overlays(img, ovs)
    assert out.shape == (300, 500, 3)
    assert np.any(out[:60, -120:] != 200)  # legend upper right


def test_inputs_validated_and_not_modified():
    img = np.linspace(0, 1, 30 * 40).reshape(30, 40)
    before = img.copy()
    draw_overlays(img, [Segment((0, 0), (39, 29))])
    assert np.array_equal(img, before)
    with pytest.raises(TypeError, match="img"):
        draw_overlays([[0.0]], [])
    with pytest.raises(ValueError, match="ndim"):
        draw_overlays(np.zeros((2, 2, 2, 2)), [])
    with pytest.raises(ValueError, match="NaN"):
        draw_overlays(np.full((4, 4), np.nan), [])
    with pytest.raises(ValueError, match="max_side"):
        draw_overlays(img, [], max_side=4)
    assert to_rgb8(np.array([[0.0, 1.0]]))[0].tolist() == [[0, 0, 0], [255, 255, 255]]
    assert to_rgb8(np.array([[65535]], np.uint16))[0, 0, 0] == 255


def test_unknown_objects_are_skipped():
    out = draw_overlays(np.ones((20, 30)), [object(), Segment((0, 0), (math.nan, 3))],
                        legend=False)
    assert np.all(out == 255)


def test_write_png_round_trip(tmp_path):
    img = np.ones((48, 64))
    ovs = [Segment((3, 3), (60, 40), "fail"), Label((5, 5), "x", "undecided")]
    path = tmp_path / "a.png"
    data = write_annotated_png(path, img, ovs)
    assert path.read_bytes() == data and data[:8] == b"\x89PNG\r\n\x1a\n"
    back = cv2.imread(str(path), cv2.IMREAD_COLOR)[:, :, ::-1]
    assert np.array_equal(back, draw_overlays(img, ovs))
    assert list(tmp_path.iterdir()) == [path]  # no temporary file left behind
