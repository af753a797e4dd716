"""measure_height on side views of known geometry.

Truth: exact outlines (``profilecheck.scenario._shapes``): the spindle axis is world y = 0,
the tool's tip is placed at a known height. Tolerance 2 um on the offset (the accuracy target
of the centre-height check at 8 um/px); cut effects against standards-notes section 10.
"""

import math

import numpy as np
import pytest

from profilecheck.calibration import Calibration
from profilecheck.errors import CalibrationError, MeasurementError
from profilecheck.measure._axis_line import load_axis, save_axis
from profilecheck.measure.height import cut_effects, measure_height
from profilecheck.scenario._shapes import bar_side_view, centre_side_view, tool_side_view
from profilecheck.synth import Camera, render

S = 0.008
SIZE = (800, 600)
CAL = Calibration(S, 0.0, SIZE)


def _view(reference, e_mm, *, rotation_deg=0.0, slope_deg=0.0, seed=0, tool=True):
    shapes = []
    if reference == "point":
        shapes.append(centre_side_view(apex_mm=(-0.4, 0.0), diameter_mm=3.0)[0])
    elif reference == "bar":
        shapes.append(bar_side_view(diameter_mm=3.0, x1_mm=-0.4)[0])
    if tool:
        shapes.append(tool_side_view(tip_mm=(0.25, e_mm), top_slope_deg=slope_deg,
                                     thickness_mm=1.5)[0])
    cam = Camera(S, SIZE, rotation_deg=rotation_deg, centre_mm=(0.0, 0.2))
    img, _ = render(shapes, cam, blur_px=1.4, noise=2.5, dark=30, bright=215, seed=seed, supersample=4)
    return img


@pytest.fixture(scope="module")
def above():
    img = _view("point", 0.12, rotation_deg=3.0, slope_deg=1.5, seed=1)
    return img, measure_height(img, CAL, reference="point", work_diameter_mm=3.0)


def test_tool_above_a_centre(above):
    _, r = above
    m = r.measurements["height_offset"]
    assert m.value == pytest.approx(0.12, abs=0.002)
    assert m.unit == "mm" and m.u > 0
    # + when the top edge rises toward the tip (the render's 1.5 deg)
    assert r.measurements["top_slope"].value == pytest.approx(1.5, abs=0.05)
    # rule of thumb +/-0.1 mm (common practice, no source): 0.12 mm fails, lower the tool
    assert r.verdict == "fail"
    assert any(a.startswith("lower the tool") for a in r.advice)


def test_offset_as_what_it_does_to_the_work(above):
    _, r = above
    e = r.measurements["height_offset"].value
    derr, theta = cut_effects(e, 3.0)
    # chord geometry and tan(th_ax) = tan(th) / cos(phi), standards-notes section 10
    assert r.measurements["diameter_error"].value == pytest.approx(
        2 * (math.hypot(1.5, e) - 1.5), abs=1e-9)
    assert r.measurements["flank_angle_change"].value == pytest.approx(theta - 30.0, abs=1e-9)


def test_tool_below_a_bar_axis():
    img = _view("bar", -0.07, rotation_deg=-4.5, seed=2)
    r = measure_height(img, CAL, reference="bar")
    assert r.measurements["height_offset"].value == pytest.approx(-0.07, abs=0.002)
    assert r.verdict == "pass"  # inside +/-0.1 mm with its U
    assert r.reference == "bar"


def test_tool_on_centre_in_a_rotated_camera():
    img = _view("point", 0.0, rotation_deg=-5.0, seed=3)
    r = measure_height(img, CAL, reference="point")
    assert r.measurements["height_offset"].value == pytest.approx(0.0, abs=0.002)


def test_saved_axis_line_checks_a_tool_with_no_reference_in_view(above, tmp_path):
    img, r = above
    path = tmp_path / "axis.json"
    save_axis(r.axis_line, path)
    axis = load_axis(path)
    assert axis.image_size == SIZE
    # same camera (rotation 3 deg), no centre in view, tool 0.05 mm below
    img2 = _view("none", -0.05, rotation_deg=3.0, seed=4)
    r2 = measure_height(img2, CAL, reference="line", axis=str(path))
    assert r2.measurements["height_offset"].value == pytest.approx(-0.05, abs=0.002)
    assert r2.reference == "line" and r2.axis_line is None


def test_saved_axis_of_another_image_size_is_refused(above, tmp_path):
    _, r = above
    path = tmp_path / "axis.json"
    save_axis(r.axis_line, path)
    img = np.full((300, 400), 0.85)
    cal = Calibration(S, 0.0, (400, 300))
    with pytest.raises(CalibrationError, match="save the axis again"):
        measure_height(img, cal, reference="line", axis=path)


def test_no_reference_in_view_is_refused():
    img = _view("none", 0.0, seed=5)
    with pytest.raises(MeasurementError, match="no lathe centre"):
        measure_height(img, CAL, reference="point")
    with pytest.raises(MeasurementError, match="no bar"):
        measure_height(img, CAL, reference="bar")


def test_no_tool_in_view_is_refused():
    img = _view("point", 0.0, tool=False, seed=6)
    with pytest.raises(MeasurementError, match="no tool tip"):
        measure_height(img, CAL, reference="point")


def test_bad_calls_name_the_parameter():
    img = np.full(SIZE[::-1], 0.85)
    with pytest.raises(ValueError, match="reference"):
        measure_height(img, CAL, reference="chuck")
    with pytest.raises(ValueError, match="axis"):
        measure_height(img, CAL, reference="line")
    with pytest.raises(ValueError, match="work_diameter_mm"):
        measure_height(img, CAL, work_diameter_mm=-3.0)


def test_out_of_focus_view_is_refused():
    from profilecheck.errors import QualityError

    shapes = [centre_side_view(apex_mm=(-0.4, 0.0), diameter_mm=3.0)[0],
              tool_side_view(tip_mm=(0.25, 0.05), thickness_mm=1.5)[0]]
    img, _ = render(shapes, Camera(S, SIZE, centre_mm=(0.0, 0.2)), blur_px=6.0, noise=2.5,
                    dark=30, bright=215, seed=7, supersample=2)
    with pytest.raises(QualityError, match="out of focus"):
        measure_height(img, CAL, reference="point")


def test_tool_on_the_other_side_of_the_centre():
    # centre pointing -x on the right, tool on the left with its tip facing +x, 0.06 mm
    # below; top edge rising 1 deg toward the tip (outline geometry)
    shapes = [centre_side_view(apex_mm=(0.4, 0.0), diameter_mm=3.0, pointing_deg=180.0)[0],
              tool_side_view(tip_mm=(-0.2, -0.06), top_slope_deg=1.0, thickness_mm=1.5,
                             facing=1)[0]]
    img, _ = render(shapes, Camera(S, SIZE, rotation_deg=-3.0, centre_mm=(0.0, 0.2)),
                    blur_px=1.4, noise=2.5, seed=8, supersample=4)
    r = measure_height(img, CAL, reference="point")
    assert r.measurements["height_offset"].value == pytest.approx(-0.06, abs=0.002)
    assert r.measurements["top_slope"].value == pytest.approx(1.0, abs=0.05)
