"""Tooth segmentation and flank / crest / root fits on analytic thread profiles (mm).

Check values come from the profile geometry itself: the ISO 68-1 basic profile
(H = sqrt(3)/2 P, crest flat P/8, root flat P/4, depth 5H/8, pitch line 3H/8 below the
crest; ../shared/standards-notes.md section 1) and the BS 84 Whitworth form (55 deg,
r = 0.137329P; standards-notes section 5), drawn exactly and sampled densely.
"""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from profilecheck.errors import MeasurementError, QualityError
from profilecheck.measure._thread_profile import analyse_limb, find_crossings


def _sample(verts, step=0.002):
    pts = []
    for a, b in zip(verts[:-1], verts[1:]):
        n = max(int(np.hypot(*(b - a)) / step), 1)
        t = np.arange(n) / n
        pts.append(a + (b - a) * t[:, None])
    return np.vstack(pts)


def flat_profile(pitch, left_deg, right_deg, crest_flat, root_flat, n_teeth, *, y0=0.0,
                 x0=0.0, crest_drop=None):
    """Trapezoidal profile, root at y0: root flat, left flank, crest flat, right flank.
    ``crest_drop`` = {tooth: dy} lowers single crests (a chipped tooth)."""
    tl, tr = math.tan(math.radians(left_deg)), math.tan(math.radians(right_deg))
    h = (pitch - crest_flat - root_flat) / (tl + tr)
    v, x = [], x0
    for i in range(n_teeth):
        dy = (crest_drop or {}).get(i, 0.0)
        xa = x + root_flat + (h - dy) * tl
        xb = x + root_flat + h * tl + crest_flat + dy * tr
        v += [(x, y0), (x + root_flat, y0), (xa, y0 + h - dy), (xb, y0 + h - dy)]
        x += pitch
    v += [(x, y0), (x + root_flat, y0)]
    return _sample(np.array(v)), h


def whitworth_profile(pitch, n_teeth, *, step=0.001):
    """BS 84 form: 55 deg, H = 0.960491P, H/6 rounded at crest and root with
    r = 0.137329P (standards-notes section 5). Crest at y = 2H/3, root at 0."""
    th = math.radians(27.5)
    H = pitch / (2 * math.tan(th))
    r = 0.137329 * pitch
    depth = 2 * H / 3
    # Crest arc centre: r below the crest; root arc centre: r above the root.
    pts = []
    for i in range(n_teeth + 1):
        xc = i * pitch + pitch / 2  # crest centre
        xr = i * pitch              # root centre
        # root arc from angle -(90-27.5) .. +(90-27.5) around the bottom
        a = np.linspace(-(math.pi / 2 - th), (math.pi / 2 - th), 60)
        root = np.column_stack([xr + r * np.sin(a), r - r * np.cos(a)])
        crest_a = np.linspace(-(math.pi / 2 - th), (math.pi / 2 - th), 60)
        crest = np.column_stack([xc + r * np.sin(crest_a), depth - r + r * np.cos(crest_a)])
        pts.append(root)
        if i < n_teeth:
            pts.append(crest)
    v = np.vstack(pts)
    return _sample(v, step), depth, r


def test_crossings_known_answer():
    # Triangle wave of period 2 crossing 0.5 at x = 0.5, 1.5, 2.5 (geometry).
    x = np.linspace(0, 3, 301)
    y = 1 - np.abs((x % 2) - 1)
    c = find_crossings(x, y, 0.5, 0.1)
    assert [k for _, k in c] == [1, -1, 1]
    assert_allclose([p for p, _ in c], [0.5, 1.5, 2.5], atol=1e-9)


def test_iso_basic_profile():
    # ISO 68-1 basic profile, P = 1 mm: flats P/8 and P/4, depth 5H/8, pitch line 3H/8
    # below the crest (standards-notes section 1).
    P = 1.0
    H = math.sqrt(3) / 2 * P
    rng = np.random.default_rng(1)
    xy, h = flat_profile(P, 30, 30, P / 8, P / 4, 8)
    xy = xy + rng.normal(0, 0.0005, xy.shape)
    r = analyse_limb(xy, sigma_e_mm=0.004)
    assert_allclose(r.pitch, P, atol=2e-5)
    assert_allclose(math.degrees(r.mean_angle("left")[0]), 30.0, atol=0.02)
    assert_allclose(math.degrees(r.mean_angle("right")[0]), 30.0, atol=0.02)
    assert_allclose(r.flat_stats("crest", "width")[0], P / 8, atol=3e-4)
    assert_allclose(r.flat_stats("root", "width")[0], P / 4, atol=3e-4)
    depth = r.flat_stats("crest", "level")[0] - r.flat_stats("root", "level")[0]
    assert_allclose(depth, 5 * H / 8, atol=3e-4)
    assert_allclose(r.pitch_line_y, 5 * H / 8 - 3 * H / 8, atol=3e-4)
    assert r.n_full_teeth >= 7
    assert not r.warnings


def test_unequal_flanks_not_swapped_and_mirror_swaps():
    # Left flank 25 deg, right 35 deg (drawn that way): left must read 25.
    xy, _ = flat_profile(1.25, 25, 35, 0.15, 0.3, 7)
    r = analyse_limb(xy, sigma_e_mm=0.003)
    assert_allclose(math.degrees(r.mean_angle("left")[0]), 25.0, atol=0.01)
    assert_allclose(math.degrees(r.mean_angle("right")[0]), 35.0, atol=0.01)
    # Mirror image (x -> -x): the flanks change sides.
    m = analyse_limb(xy * [-1, 1], sigma_e_mm=0.003)
    assert_allclose(math.degrees(m.mean_angle("left")[0]), 35.0, atol=0.01)
    assert_allclose(math.degrees(m.mean_angle("right")[0]), 25.0, atol=0.01)
    assert_allclose(m.pitch, 1.25, atol=1e-5)


def test_fine_pitch_and_order_independent():
    # P = 0.35 mm (M1.6 coarse pitch, standards-notes section 1), points shuffled.
    P = 0.35
    xy, _ = flat_profile(P, 30, 30, P / 8, P / 4, 6, x0=-1.0)
    rng = np.random.default_rng(2)
    r = analyse_limb(rng.permutation(xy), sigma_e_mm=0.002)
    assert_allclose(r.pitch, P, atol=1e-5)
    assert_allclose(r.flat_stats("crest", "width")[0], P / 8, atol=5e-4)


def test_whitworth_radii():
    # BS 84: r = 0.137329P, depth 0.640327P (standards-notes section 5).
    P = 25.4 / 40
    xy, depth, rad = whitworth_profile(P, 6)
    r = analyse_limb(xy, sigma_e_mm=0.002, crest_drop_mm=rad * (1 - math.sin(math.radians(27.5))),
                     root_drop_mm=rad * (1 - math.sin(math.radians(27.5))), radiused_crest=True,
                     radiused_root=True)
    # the blur-bias term sigma_e^2/(2R) is added on purpose; allow for it
    assert_allclose(r.flat_stats("crest", "radius")[0], 0.137329 * P, atol=2e-4)
    assert_allclose(r.flat_stats("root", "radius")[0], 0.137329 * P, atol=2e-4)
    d = r.flat_stats("crest", "level")[0] - r.flat_stats("root", "level")[0]
    assert_allclose(d, 0.640327 * P, atol=3e-4)
    assert_allclose(math.degrees(r.mean_angle("left")[0]), 27.5, atol=0.02)
    assert_allclose(r.pitch, P, atol=1e-5)


def test_too_few_teeth_refused():
    xy, _ = flat_profile(1.0, 30, 30, 0.125, 0.25, 2)
    with pytest.raises(QualityError, match="complete teeth"):
        analyse_limb(xy, sigma_e_mm=0.003)


def test_straight_edge_is_not_a_thread():
    x = np.linspace(0, 5, 2000)
    with pytest.raises(MeasurementError):
        analyse_limb(np.column_stack([x, np.zeros_like(x)]), sigma_e_mm=0.003)


def test_chipped_crest_left_out_with_warning():
    # Tooth 4 lost 0.08 mm of its crest; the others are ISO basic (P = 1).
    xy, h = flat_profile(1.0, 30, 30, 0.125, 0.25, 9, crest_drop={4: 0.08})
    r = analyse_limb(xy, sigma_e_mm=0.003)
    assert r.warnings and "damaged" in r.warnings[0]
    assert 4 in r.outlier_teeth or 5 in r.outlier_teeth
    assert_allclose(r.flat_stats("crest", "width")[0], 0.125, atol=3e-4)


def test_many_damaged_teeth_refused():
    drops = {i: 0.06 + 0.02 * (i % 3) for i in range(1, 9, 2)}
    xy, h = flat_profile(1.0, 30, 30, 0.125, 0.25, 9, crest_drop=drops)
    with pytest.raises(QualityError):
        analyse_limb(xy, sigma_e_mm=0.003)


def test_drunken_tooth_flagged():
    # One tooth displaced axially by 0.1 P: the lead is not uniform.
    xy, _ = flat_profile(1.0, 30, 30, 0.125, 0.25, 9)
    sel = (xy[:, 0] > 4.0) & (xy[:, 0] < 5.0)
    xy[sel, 0] += 0.1
    xy = xy[np.argsort(xy[:, 0])]
    r = analyse_limb(xy, sigma_e_mm=0.003)
    assert r.outlier_teeth
    assert_allclose(r.pitch, 1.0, atol=1e-3)


def test_bad_arguments():
    with pytest.raises(ValueError, match="xy_mm"):
        analyse_limb(np.zeros((10, 3)), sigma_e_mm=0.01)
    with pytest.raises(ValueError, match="sigma_e_mm"):
        analyse_limb(np.zeros((30, 2)), sigma_e_mm=0.0)
