"""Checkerboard lens calibration on rendered views, and a pin through the same lens.

Truth: a synth pinhole camera (f = Z / s = 40 mm / 0.01 mm/px = 4000 px, k1 = -4, i.e.
-2.5 % barrel in the corners of a 640 x 480 frame); board corners and squares projected by
cv2.projectPoints from known poses; the pin is the exact cylinder silhouette (tangent rays
from the projection centre, analytic geometry).
"""

from __future__ import annotations

import math

import cv2
import numpy as np
import pytest

from profilecheck.calibration import (attach_lens, calibrate_from_pin, calibrate_grid,
                                      find_grid_corners, load_calibration, measure_pin)
from profilecheck.cli import main
from profilecheck.scenario.calibration import board_views, cylinder_silhouette_px
from profilecheck.synth import Camera, render

CAM = dict(mm_per_px=0.01, image_size=(640, 480), working_distance_mm=40.0, k1=-4.0)
PATTERN, SQUARE = (7, 5), 0.6


def _render(cam, shapes_px, seed):
    img, _ = render(None, cam, shapes_px=shapes_px, blur_px=1.0, noise=2.0, dark=28, bright=225,
                    vignetting=0.15, seed=seed)
    return img


@pytest.fixture(scope="module")
def views():
    cam = Camera(**CAM)
    vs = board_views(cam, PATTERN, SQUARE, n_views=6, seed=1)
    return cam, [(_render(cam, p, 10 + i), c) for i, (p, c, _) in enumerate(vs)]


@pytest.fixture(scope="module")
def grid(views):
    return calibrate_grid([v[0] for v in views[1]], SQUARE, pattern=PATTERN)


def test_corners_match_projected_truth(views):
    # vision-notes section 0: findChessboardCornersSB + CALIB_CB_ACCURACY 0.028 px RMS at
    # blur 1 px, noise 2 DN
    cam, vs = views
    img, truth = vs[2]
    found = find_grid_corners(img, PATTERN)
    d = np.linalg.norm(found[:, None, :] - truth[None, :, :], axis=2).min(axis=1)
    assert np.sqrt(np.mean(d ** 2)) < 0.05


def test_focal_length_and_reprojection(views, grid):
    cam, _ = views
    assert grid.lens.fx_px == pytest.approx(cam.focal_px, rel=0.005)
    assert grid.lens.dist[0] == pytest.approx(-4.0, rel=0.05)
    assert grid.rms_px < 0.05
    assert len(grid.holdout_rms_px) == 6 and max(grid.holdout_rms_px) < 0.06
    assert grid.terms == "k1k2"  # no tangential or k3 in the truth: the simple model is kept
    assert any("6 views" in w for w in grid.warnings)


def test_pin_through_the_lens(grid):
    # pin axis turned 2 deg; without the lens model barrel distortion and the cylinder's
    # perspective fold into the scale (about +1 %); with it the scale is within 0.05 %.
    pcam = Camera(**CAM, rotation_deg=2.0)
    pin = _render(pcam, [cylinder_silhouette_px(pcam, 2.0)], 20)
    plain = calibrate_from_pin(pin, 2.0)
    cal = attach_lens(calibrate_from_pin(pin, 2.0, lens=grid.lens), grid)
    assert abs(cal.mm_per_px / 0.01 - 1.0) < 0.0005
    assert abs(plain.mm_per_px / 0.01 - 1.0) > 0.005
    assert cal.lens.working_distance_mm == pytest.approx(40.0, rel=0.005)  # Z = f s
    small = _render(pcam, [cylinder_silhouette_px(pcam, 1.2)], 21)
    m = measure_pin(small, cal)
    assert abs(m.value - 1.2) <= m.u


def test_cli_grid_then_pin_with_lens(views, tmp_path, capsys):
    _, vs = views
    names = []
    for i, (img, _) in enumerate(vs):
        p = tmp_path / f"v{i}.png"
        cv2.imwrite(str(p), img)
        names.append(str(p))
    lens_file = tmp_path / "lens.json"
    assert main(["calibrate", *names, "--grid", "0.6mm", "--pattern", "7x5", "--out", str(lens_file)]) == 0
    rec = load_calibration(lens_file)
    assert rec.lens is not None and rec.gauge["kind"] == "grid"
    assert rec.lens.fx_px == pytest.approx(4000.0, rel=0.005)
    assert "held-out" in capsys.readouterr().out
    # fewer views than the minimum: exit 2, nothing written
    out = tmp_path / "few.json"
    assert main(["calibrate", *names[:3], "--grid", "0.6mm", "--pattern", "7x5", "--out", str(out)]) == 2
    assert not out.exists()
    # wrong pattern: board not found
    assert main(["calibrate", *names, "--grid", "0.6mm", "--pattern", "8x5", "--out", str(out)]) == 2
    assert "checkerboard" in capsys.readouterr().err
    pcam = Camera(**CAM, rotation_deg=-1.5)
    pin = tmp_path / "pin.png"
    cv2.imwrite(str(pin), _render(pcam, [cylinder_silhouette_px(pcam, 2.0)], 22))
    cal_file = tmp_path / "cam.json"
    assert main(["calibrate", str(pin), "--pin", "2mm", "--lens", str(lens_file), "--out", str(cal_file)]) == 0
    cal = load_calibration(cal_file)
    assert abs(cal.mm_per_px / 0.01 - 1.0) < 0.0005
    assert cal.lens.working_distance_mm == pytest.approx(40.0, rel=0.005)
    assert not math.isnan(cal.lens.rms_reprojection_px)
