"""measure_tool on renders of known outlines.

Truth: the outline's own plane geometry (``profilecheck.scenario._shapes.tool_top_view``),
rendered by ``profilecheck.synth.render``. Tolerances are the accuracy targets of the tool
check (included angle 0.1 deg, half-angles 0.15 deg, tip flat 3 um, nose radius 5 um),
which the renders must meet with margin.
"""

import dataclasses
import math

import numpy as np
import pytest

from profilecheck.calibration import Calibration
from profilecheck.errors import MeasurementError
from profilecheck.measure.tool import measure_tool
from profilecheck.scenario._shapes import bar_side_view, tool_top_view
from profilecheck.synth import Camera, render

S = 0.006  # mm/px
SIZE = (640, 480)
CAL = Calibration(S, 0.0, SIZE)


def _view(direction_deg=90.0, rotation_deg=0.0, seed=0, back_mm=0.8, **outline):
    outline.setdefault("shank_width_mm", 1.6)
    d = math.radians(direction_deg)
    apex = (0.0, 0.0)
    centre = (-back_mm * math.cos(d), -back_mm * math.sin(d))
    poly, truth = tool_top_view(direction_deg=direction_deg, apex_mm=apex, **outline)
    cam = Camera(S, SIZE, rotation_deg=rotation_deg, centre_mm=centre)
    img, _ = render([poly], cam, blur_px=1.3, noise=2.0, dark=28, bright=225, seed=seed, supersample=4)
    return img, truth


def _close(result, truth):
    m = result.measurements
    assert m["included_angle"].value == pytest.approx(truth["included_angle"], abs=0.1)
    assert m["half_left"].value == pytest.approx(truth["half_left"], abs=0.15)
    assert m["half_right"].value == pytest.approx(truth["half_right"], abs=0.15)
    assert m["bisector_tilt"].value == pytest.approx(truth["bisector_tilt"], abs=0.15)
    if "tip_flat" in truth:
        assert m["tip_flat"].value == pytest.approx(truth["tip_flat"], abs=0.003)
    else:
        assert m["tip_radius"].value == pytest.approx(truth["tip_radius"], abs=0.005)


@pytest.fixture(scope="module")
def lopsided():
    img, truth = _view(half_left_deg=28.0, half_right_deg=32.5, tip_flat_mm=0.10,
                       rotation_deg=2.0, seed=3)
    return img, truth, measure_tool(img, CAL)


def test_symmetric_tool_with_flat_tip():
    img, truth = _view(tip_flat_mm=0.08, rotation_deg=-1.5, seed=1)
    r = measure_tool(img, CAL)
    assert r.reference == "shank" and r.tip_kind == "flat"
    _close(r, truth)


def test_lopsided_point_keeps_left_and_right(lopsided):
    img, truth, r = lopsided
    _close(r, truth)
    # the two flanks differ by 4.5 deg: a swap could not pass the check above, and the
    # point leans toward the steeper (left) flank
    assert r.measurements["bisector_tilt"].value < -2.0


def test_mirrored_view_swaps_left_and_right(lopsided):
    img, truth, r = lopsided
    rm = measure_tool(np.ascontiguousarray(img[:, ::-1]), CAL)
    m = rm.measurements
    assert m["half_left"].value == pytest.approx(truth["half_right"], abs=0.15)
    assert m["half_right"].value == pytest.approx(truth["half_left"], abs=0.15)
    assert m["bisector_tilt"].value == pytest.approx(-truth["bisector_tilt"], abs=0.15)


@pytest.mark.parametrize("direction_deg", [0.0, 205.0])
def test_point_facing_any_direction(direction_deg):
    img, truth = _view(direction_deg=direction_deg, half_left_deg=30.5, half_right_deg=29.0,
                       tip_flat_mm=0.12, rotation_deg=4.0, seed=5)
    r = measure_tool(img, CAL)
    _close(r, truth)


def test_rounded_tip_is_reported_as_a_nose_radius():
    img, truth = _view(tip_radius_mm=0.06, rotation_deg=3.0, seed=7)
    r = measure_tool(img, CAL)
    assert r.tip_kind == "radius"
    assert "tip_flat" not in r.measurements
    _close(r, truth)


def test_flat_tip_is_not_called_round():
    img, truth = _view(tip_flat_mm=0.15, direction_deg=60.0, seed=8)
    r = measure_tool(img, CAL)
    assert r.tip_kind == "flat"
    _close(r, truth)


def test_only_the_point_in_view_is_measured_from_its_bisector():
    # the shank sides leave the frame: the flanks run to the image edge (back 0.2 mm only)
    img, truth = _view(tip_flat_mm=0.1, shank_width_mm=4.0, back_mm=0.1, seed=9)
    r = measure_tool(img, CAL)
    assert r.reference == "bisector"
    assert any("no shank" in w for w in r.warnings)
    assert r.measurements["included_angle"].value == pytest.approx(60.0, abs=0.1)
    assert r.measurements["half_left"].value == pytest.approx(30.0, abs=0.1)


def test_result_is_frozen_and_reports_design_keys(lopsided):
    _, _, r = lopsided
    with pytest.raises(dataclasses.FrozenInstanceError):
        r.verdict = "pass"
    d = r.to_dict()
    assert d["kind"] == "tool"
    assert set(d["measurements"]) == {"included_angle", "half_left", "half_right",
                                      "bisector_tilt", "tip_flat"}
    assert d["measurements"]["tip_flat"]["unit"] == "mm"
    assert d["measurements"]["included_angle"]["unit"] == "deg"
    assert d["verdict"]["overall"] == "none"  # no spec given
    assert all(v["u"] > 0 for v in d["measurements"].values())


def test_blank_image_is_refused():
    img = np.full(SIZE[::-1], 0.85)
    with pytest.raises(MeasurementError, match="no tool"):
        measure_tool(img, CAL)


def test_a_bar_without_a_point_is_refused():
    poly, _ = bar_side_view(diameter_mm=1.0, x0_mm=-5, x1_mm=5, axis_deg=8.0)
    img, _ = render([poly], Camera(S, SIZE), blur_px=1.3, noise=2.0, dark=28, bright=225, supersample=4)
    with pytest.raises(MeasurementError, match="point"):
        measure_tool(img, CAL)


def test_bad_calls_name_the_parameter():
    img = np.full(SIZE[::-1], 0.85)
    with pytest.raises(TypeError, match="calibration"):
        measure_tool(img, {"mm_per_px": S})
    with pytest.raises(TypeError, match="internal"):
        measure_tool(img, CAL, internal="yes")
    with pytest.raises(ValueError, match="roi"):
        measure_tool(img, CAL, roi=(10, 10, 5, 5))


def test_boring_bar_point_is_measured_from_the_normal_to_the_bar():
    # a point ground on the side of a bar (internal tool), turned 1 deg anticlockwise from
    # square: from the bar's normal the flanks make 29 and 31 deg (plane geometry)
    bar, _ = bar_side_view(diameter_mm=1.2, x0_mm=-5.0, x1_mm=5.0)  # y from -0.6 to 0.6
    point, _ = tool_top_view(shank_width_mm=1.0, shank_length_mm=1.0, tip_flat_mm=0.08,
                             direction_deg=91.0, apex_mm=(0.2, 1.3))
    cam = Camera(S, SIZE, rotation_deg=2.0, centre_mm=(0.0, 0.3))
    img, _ = render([bar, point], cam, blur_px=1.3, noise=2.0, dark=28, bright=225, seed=12,
                    supersample=4)
    r = measure_tool(img, CAL, internal=True)
    assert r.reference == "shank normal"
    m = r.measurements
    assert m["included_angle"].value == pytest.approx(60.0, abs=0.1)
    assert m["half_left"].value == pytest.approx(29.0, abs=0.15)
    assert m["half_right"].value == pytest.approx(31.0, abs=0.15)
    assert m["bisector_tilt"].value == pytest.approx(-1.0, abs=0.15)
    assert m["tip_flat"].value == pytest.approx(0.08, abs=0.003)


def test_squareness_to_a_centre_in_the_same_top_view():
    from profilecheck.measure.tool import measure_squareness
    from profilecheck.scenario._shapes import centre_side_view

    # centre along world x (its bisector is the axis); tool turned 0.5 deg anticlockwise:
    # the bisector is 0.5 deg off the axis normal, -0.5 in the image convention (clockwise +)
    centre, _ = centre_side_view(apex_mm=(-0.3, 0.9), diameter_mm=0.8, pointing_deg=0.0)
    tool, _ = tool_top_view(shank_width_mm=1.2, tip_flat_mm=0.08, direction_deg=90.5,
                            apex_mm=(0.4, 0.35))
    img, _ = render([centre, tool], Camera(S, SIZE, rotation_deg=-2.0, centre_mm=(0.0, 0.0)),
                    blur_px=1.3, noise=2.0, dark=28, bright=225, seed=13, supersample=4)
    r = measure_squareness(img, CAL)
    assert r.details["reference"] == "centre"
    assert r.measurements["squareness"].value == pytest.approx(-0.5, abs=0.05)


def test_roi_picks_one_of_two_tools():
    # two tools side by side: 60 deg on the left, 55 deg (Whitworth form) on the right;
    # the region of interest (x0, y0, x1, y1 px) holds only the right-hand one
    left, _ = tool_top_view(shank_width_mm=1.0, tip_flat_mm=0.06, apex_mm=(-0.9, 0.6))
    right, truth = tool_top_view(shank_width_mm=1.0, tip_flat_mm=0.06, apex_mm=(0.9, 0.6),
                                 half_left_deg=27.5, half_right_deg=27.5)
    img, _ = render([left, right], Camera(S, SIZE), blur_px=1.3, noise=2.0, dark=28,
                    bright=225, seed=14, supersample=4)
    r = measure_tool(img, CAL, roi=(330, 0, 639, 479))
    assert r.measurements["included_angle"].value == pytest.approx(55.0, abs=0.1)
    r = measure_tool(img, CAL, roi=(0, 0, 310, 479))
    assert r.measurements["included_angle"].value == pytest.approx(60.0, abs=0.1)


def test_quarter_turn_keeps_and_transpose_swaps_the_flanks(lopsided):
    # exact image symmetries: a quarter turn keeps handedness, a transpose mirrors it
    img, truth, r = lopsided
    turned = measure_tool(np.ascontiguousarray(np.rot90(img)), Calibration(S, 0.0, SIZE[::-1]))
    flipped = measure_tool(np.ascontiguousarray(img.T), Calibration(S, 0.0, SIZE[::-1]))
    for k in ("half_left", "half_right", "included_angle"):
        assert turned.measurements[k].value == pytest.approx(r.measurements[k].value, abs=0.02)
    assert flipped.measurements["half_left"].value == pytest.approx(
        r.measurements["half_right"].value, abs=0.02)
    assert flipped.measurements["half_right"].value == pytest.approx(
        r.measurements["half_left"].value, abs=0.02)


def test_sharp_point_reads_no_flat():
    # a dead-sharp point: the 50 % contour recedes 1.29 sigma (vision-notes 1.2) but the
    # blurred-wedge model of the tip accounts for it, so no flat is reported
    img, truth = _view(tip_flat_mm=0.0, rotation_deg=2.5, seed=15)
    r = measure_tool(img, CAL)
    m = r.measurements["tip_flat"]
    assert m.value <= m.u and m.value < 0.003
