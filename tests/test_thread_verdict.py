"""Limits and infeed still to go, against the ISO 965-1 limits of M6x1-6g and the
compound-slide rule travel = radial / cos(compound angle) at 29.5 deg
(../shared/standards-notes.md sections 10 and 11: d2 5.212..5.324)."""

import math

from numpy.testing import assert_allclose

from profilecheck.measure._thread_verdict import remaining_infeed, thread_checks
from profilecheck.quantity import Measured
from profilecheck.standards import thread_spec


def test_infeed_to_mid_tolerance_external():
    spec = thread_spec("M6x1-6g")
    pd = Measured(5.368, 0.004)
    inf = remaining_infeed(pd, spec)
    # mid of 5.212..5.324 is 5.268; radial = (5.368 - 5.268) / 2 = 0.050 mm
    assert_allclose(inf["radial"]["value"], 0.050, atol=1e-9)
    assert_allclose(inf["compound"]["value"], 0.050 / math.cos(math.radians(29.5)), atol=1e-9)
    assert_allclose(inf["radial"]["u"], 0.002, atol=1e-12)
    assert "above" in inf["note"]


def test_no_infeed_when_past_the_middle_and_scrap_below_limit():
    spec = thread_spec("M6x1-6g")
    inf = remaining_infeed(Measured(5.200, 0.003), spec)
    assert inf["radial"]["value"] == 0.0 and inf["compound"]["value"] == 0.0
    assert "scrap" in inf["note"]
    inf = remaining_infeed(Measured(5.250, 0.003), spec)
    assert inf["radial"]["value"] == 0.0 and "scrap" not in inf["note"]


def test_internal_thread_infeed_sign():
    # 6H: D2 5.350..5.500 (standards-notes section 11); a nut at 5.400 needs (5.425-5.400)/2.
    spec = thread_spec("M6x1-6H")
    inf = remaining_infeed(Measured(5.400, 0.004), spec)
    assert_allclose(inf["radial"]["value"], 0.0125, atol=1e-9)


def test_checks_follow_the_guard_band_rule():
    spec = thread_spec("M6x1-6g")
    meas = {"pitch_diameter": Measured(5.320, 0.006), "major_diameter": Measured(5.900, 0.002)}
    checks = {c.name: c.result for c in thread_checks(meas, spec)}
    assert checks == {"pitch_diameter": "undecided", "major_diameter": "pass"}


# Pitch against the spec. Spec pitches: M6x1 1 mm, M6x0.75 0.75 mm (ISO 261), 1/4-20 UNC
# 25.4 / 20 = 1.27 mm (ASME B1.1); tolerance PITCH_TOL_FRAC = 0.3 % of the pitch (common
# practice, no source). 6H is an internal class (ISO 965-1), 6g external.

def _pitch_row(checks):
    return next(c for c in checks if c.name == "pitch")


def test_pitch_check_passes_for_the_right_spec():
    from profilecheck.measure._thread_verdict import PITCH_TOL_FRAC

    c = _pitch_row(thread_checks({"pitch": Measured(1.0004, 0.003)}, thread_spec("M6x1-6g")))
    assert c.result == "pass"  # 0.4 um off, inside U (3 um) + 3 um
    assert_allclose([c.low, c.high], [1.0 - PITCH_TOL_FRAC, 1.0 + PITCH_TOL_FRAC], atol=1e-12)
    assert "no source" in c.source


def test_pitch_check_fails_for_a_wrong_pitch_spec():
    meas = {"pitch": Measured(1.0000, 0.003), "pitch_diameter": Measured(5.30, 0.004)}
    for designation in ("M6x0.75-6g", "1/4-20 UNC-2A"):
        checks = thread_checks(meas, thread_spec(designation))
        assert checks[0].name == "pitch" and checks[0].result == "fail"


def test_pitch_check_fails_only_beyond_u_plus_tolerance():
    # U + tol = 0.002 + 0.003 = 0.005 mm about 1.000 mm: never 'undecided'
    spec = thread_spec("M6x1-6g")
    assert _pitch_row(thread_checks({"pitch": Measured(1.0045, 0.002)}, spec)).result == "pass"
    assert _pitch_row(thread_checks({"pitch": Measured(0.9945, 0.002)}, spec)).result == "fail"
    assert _pitch_row(thread_checks({"pitch": Measured(1.0055, 0.002)}, spec)).result == "fail"


def test_no_pitch_check_without_a_measured_pitch():
    checks = thread_checks({"major_diameter": Measured(5.9, 0.002)}, thread_spec("M6x1-6g"))
    assert [c.name for c in checks] == ["major_diameter"]


def test_spec_warnings_wrong_pitch_and_internal_spec():
    from profilecheck.measure._thread_verdict import spec_warnings

    meas = {"pitch": Measured(1.0, 0.003)}
    assert spec_warnings(meas, thread_spec("M6x1-6g")) == ()
    w = spec_warnings(meas, thread_spec("M6x0.75-6g"))
    assert len(w) == 1 and "pitch" in w[0] and "0.75" in w[0]
    w = spec_warnings(meas, thread_spec("M6x1-6H"))
    assert len(w) == 1 and "internal" in w[0] and "external" in w[0]
    assert spec_warnings(meas, thread_spec("M6x1-6H"), external_view=False) == ()
