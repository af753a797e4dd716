"""measure_tool against a thread's requirements.

Limits: ASME B1.1 UN external root for 1/4-40 UNS-2A (tip flat from P/8 = 0.0794 mm, the
usual tool flat, to the basic root flat P/4 = 0.1588 mm; standards-notes sections 3, 10);
internal root: tip flat at most P/8 (standards-notes section 10 [D]); included angle 60 deg
(ASME B1.1 / ISO 68-1) with the +/-0.5 deg shop tolerance (common practice, no source).
Truth: the rendered outline's plane geometry.
"""

import math

import pytest

from profilecheck.calibration import Calibration
from profilecheck.measure.tool import measure_tool
from profilecheck.scenario._shapes import tool_top_view
from profilecheck.standards import thread_spec
from profilecheck.synth import Camera, render

S = 0.005
SIZE = (640, 480)
CAL = Calibration(S, 0.0, SIZE)
P_40TPI = 25.4 / 40


def _img(**outline):
    poly, _ = tool_top_view(shank_width_mm=1.4, **outline)
    img, _ = render([poly], Camera(S, SIZE, rotation_deg=1.0, centre_mm=(0.0, -0.7)),
                    blur_px=1.3, noise=2.0, dark=28, bright=225, seed=11, supersample=4)
    return img


@pytest.fixture(scope="module")
def spec():
    return thread_spec("1/4-40 UNS-2A")


def test_good_tool_passes_every_check(spec):
    r = measure_tool(_img(tip_flat_mm=1.6 * P_40TPI / 8), CAL, spec=spec)
    names = {c.name: c.result for c in r.checks}
    assert names == {"included_angle": "pass", "bisector_tilt": "pass", "tip_flat": "pass"}
    assert r.verdict == "pass" and r.advice == ()


def test_wide_flat_fails_and_says_how_much_to_take_off_each_flank(spec):
    w = 0.20  # wider than the basic P/4 = 0.159 mm
    r = measure_tool(_img(tip_flat_mm=w), CAL, spec=spec)
    tip = next(c for c in r.checks if c.name == "tip_flat")
    assert tip.result == "fail"
    assert r.verdict == "fail"
    text = " ".join(r.advice)
    assert "too wide" in text and "too shallow" in text
    # plane geometry: each flank moved in by d along its normal narrows the flat by
    # 2 d / cos(30 deg); the target is the middle of the limits
    target = (P_40TPI / 8 + P_40TPI / 4) / 2
    w_meas = r.measurements["tip_flat"].value
    assert w_meas == pytest.approx(w, abs=0.003)
    per_flank_um = (w_meas - target) * math.cos(math.radians(30)) / 2 * 1000
    assert f"{per_flank_um:.1f} um" in text


def test_narrow_flat_fails_and_says_how_far_to_stone_back(spec):
    w = 0.04  # narrower than P/8 = 0.079 mm
    r = measure_tool(_img(tip_flat_mm=w), CAL, spec=spec)
    assert next(c for c in r.checks if c.name == "tip_flat").result == "fail"
    target = (P_40TPI / 8 + P_40TPI / 4) / 2
    # plane geometry: stoning the tip back t along the bisector widens it by 2 t tan 30
    back_um = (target - r.measurements["tip_flat"].value) / (2 * math.tan(math.radians(30))) * 1000
    assert f"stone the tip back {back_um:.1f} um" in " ".join(r.advice)


def test_lopsided_point_fails_the_symmetry_check(spec):
    r = measure_tool(_img(tip_flat_mm=0.1, half_left_deg=29.2, half_right_deg=30.8), CAL,
                     spec=spec)
    checks = {c.name: c.result for c in r.checks}
    assert checks["included_angle"] == "pass"  # 60.0 deg in all
    assert checks["bisector_tilt"] == "fail"  # leans 0.8 deg
    assert any("leans" in a and "left" in a for a in r.advice)


def test_wrong_included_angle_fails(spec):
    r = measure_tool(_img(tip_flat_mm=0.1, half_left_deg=27.5, half_right_deg=27.5), CAL,
                     spec=spec)  # a 55 deg Whitworth-form tool offered for a 60 deg thread
    assert next(c for c in r.checks if c.name == "included_angle").result == "fail"


def test_internal_tool_is_checked_against_the_internal_root(spec):
    # a 0.10 mm flat suits the external root but is wider than P/8 for the internal one
    img = _img(tip_flat_mm=0.10)
    ext = measure_tool(img, CAL, spec=spec)
    inn = measure_tool(img, CAL, spec=spec, internal=True)
    assert next(c for c in ext.checks if c.name == "tip_flat").result == "pass"
    c = next(c for c in inn.checks if c.name == "tip_flat")
    assert c.result == "fail" and c.high == pytest.approx(P_40TPI / 8, abs=1e-6)
    assert any("internal" in a for a in inn.advice)


def test_spec_given_as_a_designation_string():
    r = measure_tool(_img(tip_flat_mm=0.1), CAL, spec="1/4-40 UNS-2A")
    assert r.spec["designation"] == "1/4-40 UNS-2A"


def test_whitworth_form_tool_against_a_model_engineer_thread():
    # BS 84 / ME: 55 deg included, rounded root r = 0.137329 P (standards-notes section 5)
    spec = thread_spec("3/16-40 ME")
    r55 = measure_tool(_img(half_left_deg=27.5, half_right_deg=27.5,
                            tip_radius_mm=0.137329 * P_40TPI), CAL, spec=spec)
    assert r55.tip_kind == "radius"
    assert r55.measurements["tip_radius"].value == pytest.approx(0.137329 * P_40TPI, abs=0.005)
    assert next(c for c in r55.checks if c.name == "included_angle").result == "pass"
    r60 = measure_tool(_img(tip_radius_mm=0.137329 * P_40TPI), CAL, spec=spec)
    assert next(c for c in r60.checks if c.name == "included_angle").result == "fail"


def test_metric_external_root_radius_band():
    # ISO 965-1 clause 11 as given by profilecheck.standards for M6x1-6g: root radius from
    # 0.125 P to H/6 = 0.1443 P (standards-notes sections 2, 10)
    spec = thread_spec("M6x1-6g")
    r = measure_tool(_img(tip_radius_mm=0.135), CAL, spec=spec)
    c = next(c for c in r.checks if c.name == "tip_radius")
    assert c.low == pytest.approx(0.125, abs=1e-9) and c.high == pytest.approx(0.144338, abs=1e-6)
    assert c.result == "pass"
