"""Whitworth form, BA, Acme and trapezoidal threads against published values.

Sources (standards-notes §5-§8, §11): [P 17] Whitworth threading tables and form
derivations; [P 18] BA size tables (Wikipedia, classicfasteners, studylib); [P 20] published
Acme 2G table (dependableacme); [P 21] ISO 2901/2904 excerpts (formulas; numbers [M]);
[D] derived geometry checked in the notes.
"""

import math

import pytest

from profilecheck.errors import SpecError
from profilecheck.standards import BASIC_ONLY, thread_spec
from profilecheck.standards.ba import BA_SIZES, ba_rule
from profilecheck.standards.trapezoidal import crest_clearance_mm

IN = 25.4


def test_bsw_quarter_inch_basic():
    # 1/4-20 BSW basic [P 17]: D 0.2500, E 0.2180, core 0.1860, depth 0.0320, r 0.0069
    s = thread_spec("1/4 BSW")
    assert s.included_angle_deg == 55.0 and s.form == "Whitworth" and s.tpi == 20
    assert round(s.pitch_diameter_mm / IN, 4) == 0.2180
    assert round(s.minor_diameter_mm / IN, 4) == 0.1860
    assert round(s.profile.depth_mm / IN, 4) == 0.0320
    assert round(s.profile.crest_radius_mm / IN, 4) == 0.0069
    assert s.limits == {} and s.limits_note.startswith(BASIC_ONLY)


def test_bsw_half_inch_basic():
    # 1/2-12 BSW [P 17]: core 0.3933, E 0.4466, depth 0.0534
    s = thread_spec("1/2 BSW")
    assert round(s.minor_diameter_mm / IN, 4) == 0.3933
    assert round(s.pitch_diameter_mm / IN, 4) == 0.4466
    assert round(s.profile.depth_mm / IN, 4) == 0.0534


def test_whitworth_constants():
    # BS 84 form [P 17][D]: H = 0.960491P, depth 0.640327P, r = 0.137329P; the radius is
    # tangent to the flanks where H/6 is cut off: r (1/sin 27.5 - 1) = H/6
    s = thread_spec("3/16-40 ME")
    P = s.pitch_mm
    assert s.profile.H_mm / P == pytest.approx(0.960491, abs=1e-6)
    assert s.profile.depth_mm / P == pytest.approx(0.640327, abs=1e-6)
    r = s.profile.crest_radius_mm / P
    assert r * (1 / math.sin(math.radians(27.5)) - 1) == pytest.approx(0.960491 / 6, abs=2e-6)


@pytest.mark.parametrize("text,E,core,source", [
    ("1/4-26 BSF", 0.22537, 0.20074, "computed in the notes"),
    ("1/4-40 ME", 0.23399, 0.21798, "computed in the notes"),
    ("5/16-32 ME", 0.29249, 0.27248, "computed in the notes"),
])
def test_whitworth_series_computed(text, E, core, source):
    # E = D - 0.640327P, core = D - 1.280654P [P 17: scribd Thread-Data]
    s = thread_spec(text)
    assert s.pitch_diameter_mm / IN == pytest.approx(E, abs=5e-6)
    assert s.minor_diameter_mm / IN == pytest.approx(core, abs=5e-6)


def test_ba_sizes_and_rule():
    # [P 18]: 0BA 6.0 x 1.0, 2BA 4.7 x 0.81, 4BA 3.6 x 0.66; E = d - 0.6P, core = d - 1.2P
    for n, (d, p, E, core) in {0: (6.0, 1.0, 5.400, 4.800), 2: (4.7, 0.81, 4.214, 3.728),
                               4: (3.6, 0.66, 3.204, 2.808)}.items():
        s = thread_spec(f"{n}BA")
        assert (s.major_diameter_mm, s.pitch_mm) == (d, p)
        assert s.pitch_diameter_mm == pytest.approx(E, abs=5e-4)
        assert s.minor_diameter_mm == pytest.approx(core, abs=5e-4)
        assert s.included_angle_deg == 47.5
    # the stored table equals P = 0.9^n, d = 6 P^1.2, each to 2 significant figures [P 18]
    for n, (d, p) in BA_SIZES.items():
        assert ba_rule(n) == (d, p), n
    # r = 0.180834P (tesco BA page [P 18], scribd Thread-Data)
    assert thread_spec("2BA").profile.crest_radius_mm == pytest.approx(0.180834 * 0.81)


@pytest.mark.parametrize("text,major,pd,minor", [
    ("1/2-10 ACME-2G", (0.4950, 0.5000), (0.4306, 0.4443), (0.3594, 0.3800)),
    ("3/8-12 ACME-2G", (0.3700, 0.3750), (0.3161, 0.3284), (0.2632, 0.2817)),
    ("5/8-8 ACME-2G", (0.6188, 0.6250), (0.5408, 0.5562), (0.4570, 0.4800)),
    ("3/4-6 ACME-2G", (0.7417, 0.7500), (0.6424, 0.6598), (0.5371, 0.5633)),
    ("1-5 ACME-2G", (0.9900, 1.0000), (0.8726, 0.8920), (0.7509, 0.7800)),
])
def test_acme_2g_published_table(text, major, pd, minor):
    # published Acme 2G external table [P 20: dependableacme] via standards-notes §11
    s = thread_spec(text)
    for key, want in (("major_diameter", major), ("pitch_diameter", pd),
                      ("minor_diameter", minor)):
        lim = s.limits[key]
        assert round(lim.min_mm / IN, 4) == want[0], key
        assert round(lim.max_mm / IN, 4) == want[1], key


def test_acme_basic_and_tool():
    # ASME B1.5 basic [P 20][D]: 29 deg, h = P/2, flat 0.3707P; tool flat 0.3707P -
    # 0.259 x 0.020 in clearance (n <= 10)
    s = thread_spec("1/2-10 ACME")
    assert s.thread_class == "2G" and s.included_angle_deg == 29.0
    assert s.pitch_diameter_mm / IN == pytest.approx(0.45)
    assert s.tool_tip.flat_max_mm / IN == pytest.approx(0.03707 - 0.259 * 0.020, abs=1e-9)
    assert s.compound_angle_deg == 14.0
    internal = thread_spec("1/2-10 ACME-2G-INT")
    assert not internal.external and internal.limits == {}
    assert internal.limits_note.startswith(BASIC_ONLY)


def test_trapezoidal_basic():
    # ISO 2901/2904 formulas [P 21]; numbers computed in the notes ([M] agree)
    s = thread_spec("Tr20x4-7e")
    assert crest_clearance_mm(4.0) == 0.25
    assert (s.major_diameter_mm, s.pitch_diameter_mm, s.minor_diameter_mm) == (20.0, 18.0, 15.5)
    assert s.radial_depth_mm == pytest.approx(2.25)       # h3
    assert s.limits == {} and "7e" in s.limits_note and s.limits_note.startswith(BASIC_ONLY)
    nut = thread_spec("Tr20x4-7H")
    assert not nut.external
    assert (nut.major_diameter_mm, nut.minor_diameter_mm) == (20.5, 16.0)   # D4, D1
    s = thread_spec("Tr40x7")
    assert crest_clearance_mm(7.0) == 0.5
    assert (s.pitch_diameter_mm, s.minor_diameter_mm) == (36.5, 32.0)
    assert thread_spec("Tr40x7-INT").major_diameter_mm == 41.0
    # root flat 0.366P - 2 ac tan 15 = 0.366P - 0.536 ac [D]
    assert thread_spec("Tr20x4").tool_tip.flat_max_mm == pytest.approx(
        0.366 * 4 - 0.536 * 0.25, abs=1e-3)


def test_multi_start_trapezoidal_lead():
    s = thread_spec("Tr20x8(P4)")
    assert s.starts == 2 and s.lead_mm == 8.0 and s.pitch_mm == 4.0
    # tan(lambda) = L / (pi d2) (standards-notes §9)
    assert s.lead_angle_deg == pytest.approx(math.degrees(math.atan(8 / (math.pi * 18))))


@pytest.mark.parametrize("text,fragment", [
    ("1/4-28 BSW", "20 tpi"),
    ("3/16-36 ME", "tpi"),
    ("17BA", "0BA to 16BA"),
    ("13/32 BSW", "no BSW size"),
    ("1/4 BSW-2A", "classes"),
    ("1/2 ACME-2G", "threads per inch"),
    ("1/2-10 ACME-5G", "2G, 3G and 4G"),
    ("Tr20x11", "too coarse"),
])
def test_bad_other_forms(text, fragment):
    with pytest.raises(SpecError) as e:
        thread_spec(text)
    assert fragment in str(e.value) and "\n" not in str(e.value)
