"""Known-answer tests of the tool-form geometry on analytic point sets (no images).

Sources of the check values are named beside each: plane geometry (exact), the corner
recession table of vision-notes section 1.2 (derived there numerically, [D]) and the
centre-height formulas of standards-notes section 10.
"""

import math

import numpy as np
import pytest

from profilecheck.measure import _runs
from profilecheck.measure._tool_tip import _coverage, _tangent_radius, recession_px
from profilecheck.measure.height import cut_effects


def _polyline(vertices, step=0.5, noise=0.0, seed=0):
    """Points every ``step`` px along a polyline, with outward normals for a CCW-in-image
    (dark on the right of travel) outline, plus Gaussian scatter across the path."""
    rng = np.random.default_rng(seed)
    pts, nrm = [], []
    v = np.asarray(vertices, float)
    for a, b in zip(v[:-1], v[1:]):
        d = b - a
        L = np.hypot(*d)
        t = np.arange(0, L, step)[:, None] / L
        u = d / L
        n = np.array([u[1], -u[0]])
        p = a + t * d + rng.normal(0, noise, (len(t), 1)) * n
        pts.append(p)
        nrm.append(np.repeat(n[None], len(t), 0))
    return np.concatenate(pts), np.concatenate(nrm)


def _tool_points(beta_l_deg, beta_r_deg, apex=(300.0, 100.0), flank=250.0, shank=200.0,
                 noise=0.02):
    """A point-up tool outline in image px (y down): shank side, flank, apex, flank, side."""
    bl, br = math.radians(beta_l_deg), math.radians(beta_r_deg)
    ax, ay = apex
    cl = (ax - flank * math.sin(bl), ay + flank * math.cos(bl))
    cr = (ax + flank * math.sin(br), ay + flank * math.cos(br))
    verts = [(cl[0], cl[1] + shank), cl, apex, cr, (cr[0], cr[1] + shank)]
    return _polyline(verts, noise=noise)


def test_runs_split_a_tool_outline_into_its_four_straight_edges():
    xy, nrm = _tool_points(30, 30)
    runs = _runs.straight_runs(xy, nrm, np.zeros(len(xy), int), min_length_px=30, trim_px=4)
    assert len(runs) == 4
    # each run is one straight edge: residual at the added scatter (0.02 px)
    assert all(r.line.rms_px < 0.05 for r in runs)


def test_wedge_apex_and_included_angle_are_the_exact_flank_intersection():
    # asymmetric point 28 + 33 = 61 deg (plane geometry: angle between the flank lines)
    xy, nrm = _tool_points(28.0, 33.0, apex=(321.3, 87.6))
    runs = _runs.straight_runs(xy, nrm, np.zeros(len(xy), int), min_length_px=30, trim_px=4)
    w = _runs.find_wedges(runs)[0]
    assert math.degrees(w.included_rad) == pytest.approx(61.0, abs=0.01)
    np.testing.assert_allclose(w.apex, [321.3, 87.6], rtol=0, atol=0.02)
    # the bisector points out through the apex: up in the image, leaning toward the steeper
    # (left, 28 deg) flank by half the difference (plane geometry)
    assert w.bisector[1] < -0.99
    tilt = math.degrees(math.atan2(w.bisector[0], -w.bisector[1]))
    assert tilt == pytest.approx((28.0 - 33.0) / 2, abs=0.02)


def test_shank_sides_form_a_parallel_pair_with_the_dark_between():
    xy, nrm = _tool_points(30, 30)
    runs = _runs.straight_runs(xy, nrm, np.zeros(len(xy), int), min_length_px=30, trim_px=4)
    w = _runs.find_wedges(runs)[0]
    pairs = _runs.find_parallel_pairs([r for r in runs if r is not w.a and r is not w.b])
    assert len(pairs) == 1
    a, b = pairs[0]
    # both are vertical (the shank sides), 2 * 250 sin 30 = 250 px apart
    assert abs(a.line.direction[0]) < 1e-3
    assert abs(float((b.line.point - a.line.point) @ a.line.normal)) == pytest.approx(250.0, abs=0.05)


def test_lines_that_cross_are_not_a_point():
    # an X: two straight strokes crossing; no run pair forms a convex point ahead of both
    xy1, n1 = _polyline([(0, 0), (100, 100)])
    xy2, n2 = _polyline([(0, 100), (100, 0)])
    xy = np.concatenate([xy1, xy2])
    nrm = np.concatenate([n1, n2])
    cid = np.r_[np.zeros(len(xy1), int), np.ones(len(xy2), int)]
    runs = _runs.straight_runs(xy, nrm, cid, min_length_px=30, trim_px=2)
    assert _runs.find_wedges(runs) == []


@pytest.mark.parametrize("included_deg, expected_sigma", [
    (60.0, 1.29), (55.0, 1.41), (29.0, 2.69), (90.0, 0.77), (120.0, 0.45)])
def test_corner_recession_matches_the_vision_notes_table(included_deg, expected_sigma):
    # vision-notes 1.2 [D]: 50 % contour apex lies inside the tool by these multiples of sigma
    r = recession_px(math.radians(included_deg / 2), 1.0)
    assert r == pytest.approx(expected_sigma, abs=0.006)


def test_recession_of_a_wide_flat_is_the_flat_itself():
    # a flat many sigma wide: its middle is a straight edge, 50 % on the boundary (exact)
    beta = math.radians(30)
    depth_of_flat = 40.0 / (2 * math.tan(beta))
    assert recession_px(beta, 1.0, 40.0) == pytest.approx(depth_of_flat, abs=1e-6)


def test_coverage_of_a_straight_edge_is_one_half_on_it():
    # far from the tip the wedge's flank is a straight edge: coverage 0.5 on the line (exact)
    beta = math.radians(30)
    depth = 50.0
    lat = depth * math.tan(beta)  # on the right flank
    c = _coverage(np.array([lat]), np.array([depth]), beta, 0.0, 1.3)
    # across the flank the boundary is depth = lat / tan(beta); at this point it sits on it
    assert float(c[0]) == pytest.approx(0.5, abs=1e-3)


def test_tangent_radius_recovers_an_exact_arc():
    # arc of radius 12 px tangent to both flanks of a 60 deg point (plane geometry)
    beta = math.radians(30)
    apex = np.array([100.0, 50.0])
    bis = np.array([0.0, -1.0])
    r = 12.0
    c = apex - bis * (r / math.sin(beta))
    ang = np.radians(np.linspace(-50, 50, 41)) - math.pi / 2
    pts = c + r * np.c_[np.cos(ang), np.sin(ang)]
    est, std, _ = _tangent_radius(pts, apex, bis, beta, 1e-6, 10.0)
    assert est == pytest.approx(12.0, abs=1e-3)


def test_tangent_radius_corrects_the_blur_bias_of_a_curved_edge():
    # vision-notes 1.2: a blurred arc's 50 % contour sits sigma^2 / (2 R) inside; undo it
    beta = math.radians(30)
    apex = np.array([0.0, 0.0])
    bis = np.array([0.0, -1.0])
    r, sigma = 10.0, 1.5
    c = apex - bis * (r / math.sin(beta))
    ang = np.radians(np.linspace(-50, 50, 41)) - math.pi / 2
    pts = c + (r - sigma ** 2 / (2 * r)) * np.c_[np.cos(ang), np.sin(ang)]
    est, _, _ = _tangent_radius(pts, apex, bis, beta, sigma, 9.0)
    assert est == pytest.approx(10.0, abs=0.02)


@pytest.mark.parametrize("e_mm, expected_deg", [(0.1, 30.014), (0.25, 30.09)])
def test_flank_angle_cut_off_centre_matches_standards_notes(e_mm, expected_deg):
    # standards-notes 10 [D]: M6 (R = 3 mm), e = 0.1 mm -> 30.014 deg; 0.25 mm -> 30.09 deg
    _, theta = cut_effects(e_mm, 6.0, 30.0)
    assert theta == pytest.approx(expected_deg, abs=0.001 if e_mm == 0.1 else 0.005)


def test_diameter_error_off_centre_is_the_chord_geometry():
    # plane geometry: tool at height e, dial set to radius R -> cuts radius sqrt(R^2 + e^2)
    derr, _ = cut_effects(0.3, 10.0)
    assert derr == pytest.approx(2 * (math.sqrt(25 + 0.09) - 5), abs=1e-12)
    assert cut_effects(-0.3, 10.0)[0] == pytest.approx(derr, abs=1e-12)  # even in e


def test_cut_effects_refuses_a_tool_outside_the_work():
    with pytest.raises(ValueError, match="work_diameter_mm"):
        cut_effects(4.0, 6.0)
