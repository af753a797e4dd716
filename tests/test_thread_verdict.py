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
