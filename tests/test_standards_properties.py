"""Properties that hold for every thread: ordered limits, nesting classes, profile geometry.

The geometry checks are analytic (ISO 68-1 / ASME B1.1 basic profile: flats P/8 and P/4,
flanks at the half-angle, thread thickness P/2 at the pitch diameter, standards-notes §1);
the nesting follows from the class rules of ASME B1.1 §5.8 and ISO 965-1 (standards-notes
§2, §3): internal classes all start at basic, 1A and 2A share the allowance.
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from profilecheck.standards import thread_spec
from profilecheck.standards._iso_tables import COARSE_PITCH
from profilecheck.standards._unified_tables import SERIES_TPI

UNIFIED = sorted((f"{float(D):g}", series, int(t) if t == int(t) else float(t))
                 for D, row in SERIES_TPI.items() for series, t in row.items())
_UN_TEXT = [f"{d}-{t:g} {s}" for d, s, t in UNIFIED]
_ISO_TEXT = [f"M{d:g}x{p:g}" for d, p in COARSE_PITCH.items() if d >= 1.2]


def _ordered(spec):
    L = spec.limits
    for k in ("major_diameter", "pitch_diameter", "minor_diameter"):
        assert L[k].min_mm < L[k].max_mm, k
    assert L["minor_diameter"].max_mm < L["pitch_diameter"].min_mm
    assert L["pitch_diameter"].max_mm < L["major_diameter"].min_mm + 1e-12 or not spec.external
    assert L["minor_diameter"].mid_mm < L["pitch_diameter"].mid_mm < L["major_diameter"].mid_mm


@settings(max_examples=80, deadline=None)
@given(base=st.sampled_from(_UN_TEXT), cls=st.sampled_from(["2A", "3A", "2B", "3B"]))
def test_unified_limits_ordered(base, cls):
    _ordered(thread_spec(f"{base}-{cls}"))


@settings(max_examples=60, deadline=None)
@given(base=st.sampled_from(_ISO_TEXT), cls=st.sampled_from(["6g", "6H", "4h", "6h", "8g", "7H", "6G", "5H"]))
def test_metric_limits_ordered(base, cls):
    _ordered(thread_spec(f"{base}-{cls}"))


def _band(text):
    lim = thread_spec(text).limits["pitch_diameter"]
    return lim.min_mm, lim.max_mm


@settings(max_examples=40, deadline=None)
@given(base=st.sampled_from([t for t in _UN_TEXT if t.split()[1] in ("UNC", "UNF")]))
def test_unified_classes_nest(base):
    b1, b2, b3 = (_band(f"{base}-{c}B") for c in "123")
    assert b1[0] == b2[0] == b3[0]                 # all at basic PD
    assert b3[1] < b2[1] < b1[1]                   # 3B inside 2B inside 1B
    a1, a2, a3 = (_band(f"{base}-{c}A") for c in "123")
    assert a1[1] == a2[1] and a1[0] < a2[0]        # 2A inside 1A (same allowance)
    assert (a3[1] - a3[0]) < (a2[1] - a2[0]) < (a1[1] - a1[0])
    assert a3[1] >= a2[1]                          # 3A has no allowance


@settings(max_examples=30, deadline=None)
@given(base=st.sampled_from(_ISO_TEXT))
def test_metric_grades_nest(base):
    h4, h6, h8 = (_band(f"{base}-{g}h") for g in (4, 6, 8))
    assert h4[1] == h6[1] == h8[1] and h8[0] < h6[0] < h4[0]
    H5, H6, H7 = (_band(f"{base}-{g}H") for g in (5, 6, 7))
    assert H5[0] == H6[0] == H7[0] and H5[1] < H6[1] < H7[1]


@pytest.mark.parametrize("text", ["M6x1-6g", "1/4-20 UNC-2A", "M10x1.5-6H", "1/2-13 UNC-2B"])
def test_basic_axial_profile_geometry(text):
    s = thread_spec(text)
    P = s.pitch_mm
    prof = s.axial_profile("basic", n_pitch=3)
    assert prof.shape[1] == 2 and np.all(np.diff(prof[:, 0]) > 0)
    assert prof[0, 0] == 0 and prof[-1, 0] == pytest.approx(3 * P)
    crest_r = (s.major_diameter_mm if s.external else s.minor_diameter_mm) / 2
    assert prof[0, 1] == pytest.approx(crest_r, abs=1e-12)       # starts at a crest centre
    # flats: P/8 at the major diameter, P/4 at the minor (ISO 68-1 / ASME B1.1)
    at_major = prof[np.isclose(prof[:, 1], s.major_diameter_mm / 2, atol=1e-9), 0]
    at_minor = prof[np.isclose(prof[:, 1], s.minor_diameter_mm / 2, atol=1e-9), 0]
    major_flat = P / 8 if s.external else P / 8
    # external crest flat centred on x = 0 spans [-P/16, P/16]: on [0, P] we see P/16 at x=0
    first = at_major[at_major < 0.5 * P] if s.external else at_minor[at_minor < 0.5 * P]
    assert first.max() == pytest.approx((major_flat if s.external else P / 4) / 2, abs=1e-9)
    # thread thickness P/2 at the pitch diameter: crossings every P/2, first at P/4
    at = np.interp(P / 4 + np.arange(6) * P / 2, prof[:, 0], prof[:, 1])
    assert np.allclose(at, s.pitch_diameter_mm / 2, atol=1e-9)
    off = np.interp(P / 4 + 0.01 * P, prof[:, 0], prof[:, 1])
    assert (off < s.pitch_diameter_mm / 2) == s.external
    # flank angle: slope of a flank point pair equals cot(30 deg)
    mid = (prof[:, 0] > 0.2 * P) & (prof[:, 0] < 0.3 * P)     # on the flank for 60 deg forms
    slope = np.polyfit(prof[mid, 0], prof[mid, 1], 1)[0]
    expect = -1 / math.tan(math.radians(30)) * (1 if s.external else -1)
    assert slope == pytest.approx(expect, rel=1e-9)


@pytest.mark.parametrize("text", ["M6x1-6g", "1/4-20 UNRC-2A", "M8-6H", "1/4-28 UNF-3B"])
def test_material_envelopes_bracket_each_other(text):
    s = thread_spec(text)
    big, small = (("max", "min") if s.external else ("min", "max"))
    hi = s.axial_profile(big, n_pitch=2, points_per_pitch=400)
    lo = s.axial_profile(small, n_pitch=2, points_per_pitch=400)
    x = np.linspace(0, 2 * s.pitch_mm, 1001)
    r_hi, r_lo = np.interp(x, hi[:, 0], hi[:, 1]), np.interp(x, lo[:, 0], lo[:, 1])
    assert np.all(r_hi >= r_lo - 1e-9)
    # external: crests reach the major limits; internal: crests reach the minor limits
    if s.external:
        lim = s.limits["major_diameter"]
        assert hi[:, 1].max() == pytest.approx(lim.max_mm / 2, abs=1e-9)
        assert lo[:, 1].max() == pytest.approx(lim.min_mm / 2, abs=1e-9)
    else:
        lim = s.limits["minor_diameter"]
        assert lo[:, 1].min() == pytest.approx(lim.min_mm / 2, abs=1e-9)   # max material
        assert hi[:, 1].min() == pytest.approx(lim.max_mm / 2, abs=1e-9)   # min material
    # the pitch line of each envelope is at its PD limit (thickness P/2 there)
    pd = s.limits["pitch_diameter"]
    P = s.pitch_mm
    for prof, d2 in ((hi, pd.max_mm), (lo, pd.min_mm)):
        assert np.interp(P / 4, prof[:, 0], prof[:, 1]) == pytest.approx(d2 / 2, abs=1e-9)


def _circle_radius(xy):
    """Algebraic least-squares circle (exact for points on a circle)."""
    x, y = xy[:, 0] - xy[:, 0].mean(), xy[:, 1] - xy[:, 1].mean()
    A = np.column_stack([x, y, np.ones_like(x)])
    D, E, F = np.linalg.lstsq(A, -(x * x + y * y), rcond=None)[0]
    return math.sqrt(D * D / 4 + E * E / 4 - F)


def test_iso_min_material_root_radius():
    # d3min = d2min - 0.616025P is the bottom of an R = 0.125P arc tangent to the flanks
    # (standards-notes §2 [D]): the min-material profile reaches d3min with a round root
    s = thread_spec("M6x1-6g")
    prof = s.axial_profile("min", n_pitch=1, points_per_pitch=2000)
    assert prof[:, 1].min() == pytest.approx(s.limits["minor_diameter"].min_mm / 2, abs=1e-3)
    root = prof[np.abs(prof[:, 0] - 0.5) < 0.05]
    # (the 3-decimal d3min clips a sub-micron flat off the arc bottom: rel 1e-3)
    assert _circle_radius(root) == pytest.approx(0.125, rel=1e-3)


def test_whitworth_profile_radii():
    # BS 84: crest arc of r = 0.137329P tangent to the flanks, basic depth 0.640327P
    s = thread_spec("1/4 BSW")
    prof = s.axial_profile("basic", n_pitch=1, points_per_pitch=4000)
    assert prof[:, 1].max() - prof[:, 1].min() == pytest.approx(s.profile.depth_mm, rel=1e-6)
    near = prof[np.abs(prof[:, 0]) < 0.3 * s.profile.crest_radius_mm]
    # r = 0.137329P is a 6-figure constant: its arc meets the H/6 lines within 1e-5 relative
    assert _circle_radius(near) == pytest.approx(s.profile.crest_radius_mm, rel=1e-5)
    root = prof[np.abs(prof[:, 0] - 0.5 * s.pitch_mm) < 0.3 * s.profile.root_radius_mm]
    assert _circle_radius(root) == pytest.approx(s.profile.root_radius_mm, rel=1e-5)


def test_infeed_and_compound():
    # compound travel = radial / cos(angle) (lathe practice [P 22]): 0.750P at 30 deg,
    # 0.746P at 29.5 deg, 0.743P at 29 deg for the 0.6495P depth (standards-notes §10)
    s = thread_spec("1/4-20 UNC-2A")
    P = s.pitch_mm
    assert s.compound_angle_deg == 29.5
    assert s.infeed(s.radial_depth_mm, 30.0) / P == pytest.approx(0.750, abs=5e-4)
    assert s.infeed(s.radial_depth_mm) / P == pytest.approx(0.746, abs=5e-4)
    assert s.infeed(s.radial_depth_mm, 29.0) / P == pytest.approx(0.743, abs=5e-4)
    with pytest.raises(ValueError, match="radial_mm"):
        s.infeed(-1.0)
    with pytest.raises(ValueError, match="material"):
        s.axial_profile("mmc")
    with pytest.raises(ValueError, match="n_pitch"):
        s.axial_profile("basic", n_pitch=0)


def test_lead_angles_examples():
    # standards-notes §9: 1/4-20 4.19 deg, M6x1 3.41 deg, M10x1.5 3.03 deg, 1/4-40 1.95 deg
    for text, lam in (("1/4-20 UNC-2A", 4.19), ("M6x1", 3.41), ("M10", 3.03),
                      ("1/4-40 UNS-2A", 1.95), ("1/4 BSW", 4.18)):
        assert thread_spec(text).lead_angle_deg == pytest.approx(lam, abs=0.011)
    two = thread_spec("1/2-13 UNC-2A-2START")
    one = thread_spec("1/2-13 UNC-2A")
    assert two.lead_mm == pytest.approx(2 * two.pitch_mm)
    assert math.tan(math.radians(two.lead_angle_deg)) == pytest.approx(
        2 * math.tan(math.radians(one.lead_angle_deg)))


def test_tool_tips():
    # standards-notes §3, §10: UN external flat P/8..P/4; UNR radius 0.108P..0.144P;
    # internal flat <= P/8; ISO external radius >= 0.125P; Whitworth radius 0.137P
    P = 1.27
    un = thread_spec("1/4-20 UNC-2A")
    assert (un.tool_tip.flat_min_mm, un.tool_tip.flat_max_mm) == pytest.approx((P / 8, P / 4))
    assert un.tool_tip_for(False).flat_max_mm == pytest.approx(P / 8)
    unr = thread_spec("1/4-20 UNRC-2A").tool_tip
    assert unr.kind == "radius"
    assert (unr.radius_min_mm / P, unr.radius_max_mm / P) == pytest.approx((0.10825318, 0.144))
    iso = thread_spec("M6x1-6g").tool_tip
    assert iso.radius_min_mm == pytest.approx(0.125)
    assert iso.flat_min_mm == pytest.approx(0.1443, abs=1e-4)
    assert thread_spec("1/4 BSW").tool_tip.radius_min_mm / P == pytest.approx(0.137329)


def test_to_dict_has_design_keys():
    d = thread_spec("M6x1-6g").to_dict()
    for k in ("designation", "form", "included_angle", "pitch", "limits", "tool_tip", "best_wire"):
        assert k in d
    assert set(d["limits"]) == {"major_diameter", "pitch_diameter", "minor_diameter"}
    assert d["limits"]["pitch_diameter"]["min"] == pytest.approx(5.212)
    assert thread_spec("Tr20x4").to_dict()["limits"] == {}
