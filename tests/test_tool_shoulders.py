"""A tool point ground on a wider shank, with square shoulders out to the shank sides.

Truth is the polygon of ``tests/_independent_render.py`` (``flank_length_mm`` gives square
shoulders): flanks at 30 deg from the shank axis (ISO 68-1 / ASME B1.1 60 deg form), a tip
flat square to the axis, shoulder corners of exactly 90 deg (analytic geometry of the
outline). The point, not a 90 deg shoulder corner, must be measured, to the tool targets
(included angle 0.1 deg, half-angles 0.15 deg, tip flat 3 um; project targets, common
practice, no source).
"""

from __future__ import annotations

import math

import pytest

import _independent_render as R
from profilecheck.calibration import Calibration
from profilecheck.measure._tool_point import MAX_TOOL_INCLUDED_DEG, choose_point
from profilecheck.measure.tool import measure_tool

S, SIZE = 0.008, (480, 400)
CAL = Calibration(S, 0.0, SIZE)


def _img(**geo):
    geo.setdefault("half_left_deg", 30.0)
    geo.setdefault("half_right_deg", 30.0)
    geo.setdefault("shank_width_mm", 2.6)
    geo.setdefault("flank_length_mm", 1.0)
    img = R.render([R.tool_polygon(**geo)], R.View(S, SIZE, centre_mm=(0.05, -0.65)),
                   blur_px=1.2, vignetting=0.15, seed=7)
    return R.as_float(img)


@pytest.mark.parametrize("rotation_deg", [0.0, 8.0])
def test_point_not_shoulder_corner_flat_tip(rotation_deg):
    r = measure_tool(_img(tip_flat_mm=0.125, rotation_deg=rotation_deg), CAL)
    m = r.measurements
    assert m["included_angle"].value == pytest.approx(60.0, abs=0.1)
    assert m["half_left"].value == pytest.approx(30.0, abs=0.15)
    assert m["half_right"].value == pytest.approx(30.0, abs=0.15)
    assert m["tip_flat"].value == pytest.approx(0.125, abs=3e-3)
    assert r.reference == "shank"


def test_point_not_shoulder_corner_nose_radius_with_spec():
    r = measure_tool(_img(nose_radius_mm=0.15, rotation_deg=-20.0), CAL, spec="M6x1-6g")
    m = r.measurements
    assert m["included_angle"].value == pytest.approx(60.0, abs=0.1)
    assert m["tip_radius"].value == pytest.approx(0.15, abs=5e-3)
    assert next(c for c in r.checks if c.name == "included_angle").result == "pass"


def test_shoulder_corners_are_found_but_not_chosen():
    # the view holds 90 deg corners (shank side + shoulder); with the width limit lifted
    # they are candidates, and the choice still falls on the 60 deg point
    from profilecheck.measure import _runs
    from profilecheck.measure.tool import _find_point

    edges, xy, sigma_e, std, runs, wedges, _w = _find_point(_img(tip_flat_mm=0.125), CAL, None)
    wide = _runs.find_wedges(runs, min_included_deg=15.0, max_included_deg=100.0)
    angles = sorted(round(math.degrees(w.included_rad)) for w in wide)
    assert 90 in angles and 60 in angles
    assert math.degrees(choose_point(wide, runs).included_rad) == pytest.approx(60.0, abs=0.1)
    assert all(math.degrees(w.included_rad) <= MAX_TOOL_INCLUDED_DEG for w in wedges)


def test_sharp_corner_on_a_shank_side_is_never_the_point():
    # shoulders rising 20 deg outward make 70 deg corners with the shank sides (analytic:
    # 90 - 20), sharper than the flat-tipped point and inside the width limit; a corner
    # with a shank side as one edge must still not be read as the point
    poly = R.tool_polygon(half_left_deg=30.0, half_right_deg=30.0, tip_flat_mm=0.125,
                          shank_width_mm=2.6, flank_length_mm=1.0)
    rise = (1.3 - 0.5) * math.tan(math.radians(20.0))  # shoulder run 0.8 mm (W - 1.0 sin 30)
    poly[1, 1] += rise
    poly[-2, 1] += rise
    img = R.render([poly], R.View(S, SIZE, centre_mm=(0.05, -0.65)), blur_px=1.2,
                   vignetting=0.15, seed=7)
    r = measure_tool(R.as_float(img), CAL)
    assert r.measurements["included_angle"].value == pytest.approx(60.0, abs=0.1)
    assert r.measurements["tip_flat"].value == pytest.approx(0.125, abs=3e-3)
