"""Three-wire measurement (ASME B1.2 / NIST H28 method), standards-notes §4 and §11.

Sources: [P 16] published three-wire pages (Jones "Turning and Boring", neme-s.org,
scribd "Tc Thread Measuring Formulas", unanswered.io for the H28 wire limits, deltronic
for the general formula's structure); [D] derived and checked numerically in the notes.
"""

import math

import pytest
from hypothesis import given, settings, strategies as st

from profilecheck.standards import thread_spec
from profilecheck.standards.wires import (best_wire, over_wires, pitch_diameter_from_wires,
                                          wire_limits)

IN = 25.4


@pytest.mark.parametrize("angle,constant,published", [
    (60.0, 0.577350, 0.57735), (55.0, 0.563691, 0.56369), (47.5, 0.546262, 0.54626),
    (40.0, 0.532089, 0.53208), (30.0, 0.517638, None), (29.0, 0.516450, 0.51645),
])
def test_best_wire_constants(angle, constant, published):
    # w = P / (2 cos(theta)): constants [D], published 5-figure values [P 16: scribd Tc]
    w = best_wire(1.0, angle / 2)
    assert w == pytest.approx(constant, abs=5e-7)
    if published is not None:
        assert abs(w - published) < 1.5e-5   # 40 deg printed truncated (0.532089 -> 0.53208)


def test_wire_limits_60_deg_h28():
    # H28 60-deg limits 0.505182P / 1.010363P [P 16: unanswered.io]; flat crest f = H/8
    H = math.sqrt(3) / 2
    lo, hi = wire_limits(1.0, 30.0, H / 8)
    assert lo == pytest.approx(0.505182, abs=1e-6)
    assert hi == pytest.approx(1.010363, abs=1e-6)


def test_wire_limits_whitworth_derived():
    # standards-notes §4 [D]: Whitworth w_min ~ 0.5057P, w_max ~ 0.8527P
    s = thread_spec("1/4 BSW")
    assert s.wire_min_mm / s.pitch_mm == pytest.approx(0.5057, abs=1e-4)
    assert s.wire_max_mm / s.pitch_mm == pytest.approx(0.8527, abs=1e-4)


def test_published_worked_examples():
    # Jones [P 16]: 1-1/2-6 US Std with 0.140 in wires -> M = 1.6674 in
    E = 1.5 - 0.649519 / 6
    assert round(over_wires(E, 1 / 6, 30.0, 0.140, method="none"), 4) == 1.6674
    # neme-s.org [P 16]: 7/16-14 with 0.045 in wires -> M = 0.464 in (exact 0.46425)
    E = 0.4375 - 0.649519 / 14
    assert over_wires(E, 1 / 14, 30.0, 0.045, method="none") == pytest.approx(0.46425, abs=5e-6)


def test_major_diameter_form_60_deg():
    # M = d - 1.5155P + 3w with the basic major d [P 16: neme-s.org, Jones]
    d, P, w = 0.25, 0.05, 0.03
    E = d - 0.649519 * P
    assert over_wires(E, P, 30.0, w, method="none") == pytest.approx(d - 1.5155 * P + 3 * w,
                                                                      abs=5e-6)


@pytest.mark.parametrize("angle,k_w,k_p", [
    (55.0, 3.16568, 0.960491), (47.5, 3.48295, 1.136336), (29.0, 4.99393, 1.933357),
    (30.0, 4.86370, 1.866025),
])
def test_form_constants(angle, k_w, k_p):
    # E = M - k_w w + k_p P, lead neglected ([D]; BA/Acme also [P 16: scribd Tc])
    M, P, w = 10.0, 1.0, 0.55
    E = pitch_diameter_from_wires(M, P, angle / 2, w, method="none")
    assert E == pytest.approx(M - k_w * w + k_p * P, abs=2e-5)


def test_lead_angle_term_60_deg():
    # series term for 60 deg is 0.75 w tan^2(B) (standards-notes §4 [D]); 1/4-20 UNC at the
    # basic PD with the best wire: +0.000116 in (series) vs exact 3-D +0.000108 in [D]
    E, P = 0.2175, 0.05
    w = best_wire(P, 30.0)
    corr = over_wires(E, P, 30.0, w) - over_wires(E, P, 30.0, w, method="none")
    assert corr == pytest.approx(0.75 * w * (P / (math.pi * E)) ** 2, rel=1e-12)
    assert corr == pytest.approx(0.000116, abs=1.5e-6)
    exact = over_wires(E, P, 30.0, w, method="exact") - over_wires(E, P, 30.0, w, method="none")
    assert 0 < exact < corr * 1.001  # exact typography gives no larger a term than the series


def test_over_wire_limits_in_spec():
    # standards-notes §11 [D]: 1/4-20 UNC-2A best wire 0.02887 in, M 0.2597/0.2560 without
    # the lead term, correction +0.00011 in; M6x1-6g 0.5774 mm, 6.190/6.078, +0.0015 mm
    s = thread_spec("1/4-20 UNC-2A")
    assert s.best_wire_mm / IN == pytest.approx(0.02887, abs=5e-6)
    corr = s.lead_correction_mm / IN
    assert corr == pytest.approx(0.00011, abs=1e-5)
    assert (s.over_wire_mm.max_mm / IN - corr) == pytest.approx(0.2597, abs=5e-5)
    assert (s.over_wire_mm.min_mm / IN - corr) == pytest.approx(0.2560, abs=5e-5)
    s = thread_spec("M6x1-6g")
    assert s.best_wire_mm == pytest.approx(0.5774, abs=5e-5)
    assert s.lead_correction_mm == pytest.approx(0.0015, abs=1e-4)
    assert s.over_wire_mm.max_mm - s.lead_correction_mm == pytest.approx(6.190, abs=6e-4)
    assert s.over_wire_mm.min_mm - s.lead_correction_mm == pytest.approx(6.078, abs=6e-4)
    # 1/4 BSW basic E 0.21798: best wire 0.02818 in, M 0.25918 in (lead neglected) [D]
    s = thread_spec("1/4 BSW")
    assert s.best_wire_mm / IN == pytest.approx(0.02818, abs=5e-6)
    m = over_wires(s.pitch_diameter_mm, s.pitch_mm, 27.5, s.best_wire_mm, method="none")
    assert m / IN == pytest.approx(0.25918, abs=5e-6)


@settings(max_examples=60, deadline=None)
@given(k=st.floats(3.0, 100.0), P=st.floats(0.2, 6.0), half=st.sampled_from([30.0, 27.5, 14.5, 15.0]),
       starts=st.integers(1, 3), method=st.sampled_from(["none", "series", "exact"]))
def test_inverse_round_trip(k, P, half, starts, method):
    # analytic inverse: pitch_diameter_from_wires(over_wires(E)) == E, for E >= 3P
    E = k * P
    w = best_wire(P, half)
    M = over_wires(E, P, half, w, lead_mm=starts * P, method=method)
    assert pitch_diameter_from_wires(M, P, half, w, lead_mm=starts * P, method=method) == \
        pytest.approx(E, abs=1e-9 * max(1.0, E))


def test_bad_calls():
    with pytest.raises(ValueError, match="pitch_mm"):
        best_wire(0.0, 30.0)
    with pytest.raises(ValueError, match="method"):
        over_wires(5.0, 1.0, 30.0, 0.5, method="guess")
