"""Lens helpers: undistortion, lines of sight, cylinder perspective; grid calibration."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from profilecheck.calibration import (Lens, undistort_points, distort_points, ray_tilt_rad,
                                      ray_directions, cylinder_apparent_diameter_mm,
                                      cylinder_axial_diameter_mm, calibrate_lens_from_points,
                                      calibrate_grid, grid_record)
from profilecheck.calibration.grid import grid_object_points
from profilecheck.errors import CalibrationError
from profilecheck.synth import Camera


def _lens(k1=-0.75, k2=0.0):
    return Lens(fx_px=5000.0, fy_px=5000.0, cx_px=799.5, cy_px=599.5, dist=(k1, k2, 0.0, 0.0, 0.0))


def test_undistort_matches_the_synthetic_camera():
    # Reference: synth.Camera's own fixed-point inverse of x_d = x (1 + k1 r^2 + k2 r^4)
    # (an implementation independent of OpenCV). Corner of a 1600 x 1200 frame, 3 % barrel.
    cam = Camera(mm_per_px=0.01, image_size=(1600, 1200), working_distance_mm=50.0, k1=-0.75, k2=0.2)
    lens = Lens(fx_px=cam.focal_px, fy_px=cam.focal_px, cx_px=cam.principal[0],
                cy_px=cam.principal[1], dist=tuple(cam.dist_coeffs()))
    world = np.array([[-7.9, -5.9], [7.9, 5.9], [0.3, -0.2], [6.0, -1.0]])
    seen = cam.world_to_px(world)
    ideal = Camera(mm_per_px=0.01, image_size=(1600, 1200), working_distance_mm=50.0).world_to_px(world)
    und = undistort_points(seen, lens)
    np.testing.assert_allclose(und, ideal, rtol=0, atol=1e-6)
    np.testing.assert_allclose(distort_points(ideal, lens), seen, rtol=0, atol=1e-6)


def test_undistort_without_distortion_is_identity_and_validates():
    pts = np.array([[0.0, 0.0], [1599.0, 1199.0]])
    np.testing.assert_array_equal(undistort_points(pts, _lens(0.0)), pts)
    with pytest.raises(ValueError, match="xy"):
        undistort_points(np.zeros((3, 3)), _lens())
    with pytest.raises(TypeError, match="lens"):
        undistort_points(pts, {"fx_px": 1})


def test_ray_tilt_is_atan_of_offset_over_focal():
    # pinhole geometry: a point 500 px right of the principal point at f = 5000 px is seen
    # atan(0.1) = 5.7106 deg off axis (analytic)
    lens = _lens(0.0)
    t = ray_tilt_rad(np.array([[799.5 + 500.0, 599.5 - 250.0]]), lens)
    assert t[0, 0] == pytest.approx(math.atan(0.1), abs=1e-12)
    assert t[0, 1] == pytest.approx(-math.atan(0.05), abs=1e-12)
    v = ray_directions(np.array([[799.5, 599.5]]), lens)
    np.testing.assert_allclose(v, [[0.0, 0.0, 1.0]], atol=1e-12)


def test_cylinder_perspective_against_tangent_construction():
    # vision-notes section 0: D = 6 mm at Z = 30/50/100 mm reads +30/+11/+2.7 um.
    for z, plus_um in ((30.0, 30.0), (50.0, 11.0), (100.0, 2.7)):
        a = cylinder_apparent_diameter_mm(6.0, z)
        assert (a - 6.0) * 1000 == pytest.approx(plus_um, abs=0.5)
        # independent: tangent from the projection centre at half-angle asin(r/Z) meets
        # the axial plane at Z tan(asin(r/Z)) (analytic geometry)
        assert a == pytest.approx(2 * z * math.tan(math.asin(3.0 / z)), rel=1e-12)
        assert cylinder_axial_diameter_mm(a, z) == pytest.approx(6.0, rel=1e-12)
    with pytest.raises(ValueError, match="working_distance_mm"):
        cylinder_axial_diameter_mm(6.0, -1.0)


def _views(n_views, tilt_range=(10.0, 20.0), noise=0.02, seed=1, k1=-0.75):
    import cv2

    f = 5000.0
    k = np.array([[f, 0, 799.5], [0, f, 599.5], [0, 0, 1.0]])
    d = np.array([k1, 0.0, 0.0, 0.0, 0.0])
    objp = grid_object_points((11, 8), 1.0)
    rng = np.random.default_rng(seed)
    obj, img = [], []
    for i in range(n_views):
        ax = np.array([math.cos(2.4 * i), math.sin(2.4 * i), 0.0])
        ang = math.radians(rng.uniform(*tilt_range)) if i else 0.0
        r, _ = cv2.Rodrigues(ax * ang)
        t = np.array([rng.uniform(-1, 1), rng.uniform(-1, 1), 50.0]) - r @ objp.mean(axis=0)
        p, _ = cv2.projectPoints(objp, cv2.Rodrigues(r)[0], t, k, d)
        obj.append(objp)
        img.append(p.reshape(-1, 2) + rng.normal(0.0, noise, (len(objp), 2)))
    return obj, img


def test_grid_recovers_focal_length_and_distortion():
    # Truth: pinhole f = 5000 px (Z = 50 mm at 10 um/px), k1 = -0.75 (3 % barrel in the
    # corners), corners projected by cv2.projectPoints with 0.02 px noise. Zhang 2000:
    # tilted views fix f; target (issue 8): f within 0.2 %.
    obj, img = _views(8)
    g = calibrate_lens_from_points(obj, img, (1600, 1200), terms="k1k2")
    assert g.lens.fx_px == pytest.approx(5000.0, rel=0.002)
    assert g.lens.dist[0] == pytest.approx(-0.75, abs=0.05)
    assert g.rms_px < 0.05
    assert max(g.holdout_rms_px) < 0.1
    assert len(g.holdout_rms_px) == 8
    rec = grid_record(g, label="t")
    assert rec.lens is not None and rec.mm_per_px == pytest.approx(0.01, rel=0.01)


def test_grid_refuses_fronto_parallel_views():
    obj, img = _views(6, tilt_range=(0.0, 0.5))
    with pytest.raises(CalibrationError, match="tilt the board"):
        calibrate_lens_from_points(obj, img, (1600, 1200), terms="k1k2")


def test_grid_refuses_too_few_views():
    obj, img = _views(3)
    with pytest.raises(CalibrationError, match="at least"):
        calibrate_lens_from_points(obj, img, (1600, 1200))


def test_grid_pattern_not_found_and_bad_pattern():
    blank = np.full((120, 160), 0.8)
    with pytest.raises(CalibrationError, match="checkerboard"):
        calibrate_grid([blank] * 4, 1.0, pattern=(7, 5))
    with pytest.raises(ValueError, match="pattern"):
        calibrate_grid([blank] * 4, 1.0, pattern=(2, 5))



@settings(max_examples=40, deadline=None)
@given(x=st.floats(0.0, 1599.0), y=st.floats(0.0, 1199.0), k1=st.floats(-0.9, 0.5))
def test_distort_then_undistort_is_identity(x, y, k1):
    # inverse pair over the whole 1600 x 1200 field at f = 5000 px (|k1 r^2| <= 3.6 %)
    lens = _lens(k1)
    p = np.array([[x, y]])
    np.testing.assert_allclose(undistort_points(distort_points(p, lens), lens), p, rtol=0, atol=1e-7)


@settings(max_examples=60, deadline=None)
@given(d=st.floats(0.1, 30.0), z=st.floats(20.0, 500.0))
def test_cylinder_inverse_property(d, z):
    a = cylinder_apparent_diameter_mm(d, z)
    assert a >= d
    assert cylinder_axial_diameter_mm(a, z) == pytest.approx(d, rel=1e-12)
