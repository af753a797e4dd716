"""Unified inch threads (ASME B1.1) against published limits of size.

Check values are copied from ../shared/standards-notes.md §11; the tag after each row names
the source behind the number there:
  [P 8]  efunda ASME B1.1 standard-series table
  [P 9]  published UNC internal-thread dimension table (scribd)
  [P 10] Machinery's Handbook 31st ed., worked examples (Tables 3-6)
  [P 11] Machinery's Handbook 27th ed., Table 3 (p. 1755)
  [P 14] ISCAR tap guide, 1/4-28 UNF nut limits (printed in mm)
  [C 15] values asserted in the tests of a public ASME B1.1 code file (secondary evidence)
  [M]    from memory, not verified in a published source
Values are inches; the engine works in mm and is converted back here (1 in = 25.4 mm).
Tolerance: half a unit of the last published digit, or +/-0.0001 in where the notes record
that published tables and the rounding sequence differ (standards-notes §3, §12.9).
"""

from decimal import Decimal

import pytest

from profilecheck.errors import SpecError
from profilecheck.standards import thread_spec
from profilecheck.standards.unified import length_of_engagement_in, unified_limits_in

IN = 25.4
EXACT4 = 0.00005 + 1e-9    # half a unit in the 4th decimal
EXACT3 = 0.0005 + 1e-9
ROUNDING = 0.0001 + 1e-9   # standards-notes §12.9: published rounding differs by one unit


def _lim(spec, key):
    lim = spec.limits[key]
    return lim.min_mm / IN, lim.max_mm / IN


# (designation, key, min, max, tolerance, provenance)
ROWS = [
    ("1/4-20 UNC-2A", "major_diameter", 0.2408, 0.2489, EXACT4, "[C 15]"),
    ("1/4-20 UNC-2A", "pitch_diameter", 0.2127, 0.2164, EXACT4, "[C 15]"),
    ("1/4-20 UNC-1A", "major_diameter", 0.2367, 0.2489, EXACT4, "[C 15]"),
    ("1/4-20 UNC-1A", "pitch_diameter", 0.2108, 0.2164, EXACT4, "[C 15]"),
    ("1/4-20 UNC-3A", "major_diameter", 0.2419, 0.2500, EXACT4, "[C 15]"),
    ("1/4-20 UNC-3A", "pitch_diameter", 0.2147, 0.2175, EXACT4, "[C 15]"),
    ("1/4-20 UNC-2B", "minor_diameter", 0.196, 0.207, EXACT3, "[P 9]"),
    ("1/4-20 UNC-2B", "pitch_diameter", 0.2175, 0.2224, EXACT4, "[P 9]"),
    ("1/2-13 UNC-2B", "minor_diameter", 0.417, 0.434, EXACT3, "[P 9]"),
    ("1/2-13 UNC-2B", "pitch_diameter", 0.4500, 0.4565, EXACT4, "[P 9]"),
    ("1/4-28 UNF-2B", "pitch_diameter", 0.2268, 0.2311, ROUNDING, "[P 14] (5.761/5.870 mm)"),
    ("1/2-28 UNEF-2A", "major_diameter", 0.4924, 0.4989, EXACT4, "[P 10] MH 31st worked example"),
    ("1/2-28 UNEF-2A", "pitch_diameter", 0.4720, 0.4757, EXACT4, "[P 10] MH 31st worked example"),
    ("2-1/2-4 UNC-2A", "major_diameter", 2.4731, 2.4969, EXACT4, "[P 11] MH 27th Table 3"),
    ("2-1/2-4 UNC-2A", "pitch_diameter", 2.3241, 2.3345, EXACT4, "[P 11] MH 27th Table 3"),
    ("2-1/2-4 UNC-3A", "pitch_diameter", 2.3298, 2.3376, EXACT4, "[P 11] MH 27th Table 3"),
    ("2-1/2-4 UNC-2B", "minor_diameter", 2.229, 2.267, EXACT3, "[P 11] MH 27th Table 3"),
    ("2-1/2-4 UNC-2B", "pitch_diameter", 2.3376, 2.3511, EXACT4, "[P 11] MH 27th Table 3"),
    ("2-1/2-8 UN-2A", "major_diameter", 2.4826, 2.4976, EXACT4, "[P 11] MH 27th Table 3"),
    ("2-1/2-8 UN-2A", "pitch_diameter", 2.4082, 2.4164, EXACT4, "[P 11] MH 27th Table 3"),
    ("2-1/2-12 UN-2A", "major_diameter", 2.4867, 2.4981, EXACT4, "[P 11] MH 27th Table 3"),
    ("2-1/2-12 UN-2A", "pitch_diameter", 2.4378, 2.4440, EXACT4, "[P 11] MH 27th Table 3"),
    ("0-80 UNF-2A", "major_diameter", 0.0563, 0.0595, EXACT4, "[P 8] efunda"),
    ("0-80 UNF-2A", "pitch_diameter", 0.0496, 0.0514, EXACT4, "[P 8] efunda"),
    ("0-80 UNF-2B", "minor_diameter", 0.0465, 0.0514, EXACT4, "[P 8] efunda"),
    ("0-80 UNF-2B", "pitch_diameter", 0.0519, 0.0542, EXACT4, "[P 8] efunda"),
    ("2-56 UNC-2A", "major_diameter", 0.0813, 0.0854, EXACT4, "[P 8] efunda"),
    ("2-56 UNC-2A", "pitch_diameter", 0.0717, 0.0738, EXACT4, "[P 8] efunda"),
    # 19/64 UNS: the notes print the internal row as 19/64-28, but its TD1 0.006635 =
    # 0.25P - 0.4P^2 and D1min 0.267 = D - 1.0825P hold only for P = 1/36 (the external row's
    # pitch): read as 19/64-36 UNS-2B.
    ("19/64-36 UNS-2B", "minor_diameter", 0.267, 0.273, EXACT3, "[P 10] MH 31st worked example"),
    # from memory, standards-notes §11 [M]
    ("1/4-28 UNF-2A", "major_diameter", 0.2425, 0.2490, EXACT4, "[M]"),
    ("1/4-28 UNF-2A", "pitch_diameter", 0.2225, 0.2258, EXACT4, "[M]"),
    ("1/2-13 UNC-2A", "major_diameter", 0.4876, 0.4985, EXACT4, "[M]"),
    ("1/2-13 UNC-2A", "pitch_diameter", 0.4435, 0.4485, EXACT4, "[M]"),
]


@pytest.mark.parametrize("designation,key,lo,hi,tol,source", ROWS,
                         ids=[f"{r[0]}:{r[1]}" for r in ROWS])
def test_limits_against_published_rows(designation, key, lo, hi, tol, source):
    got_lo, got_hi = _lim(thread_spec(designation), key)
    assert abs(got_lo - lo) <= tol, (source, got_lo)
    assert abs(got_hi - hi) <= tol, (source, got_hi)


# Single published limits: (designation, which, value, tolerance, provenance).
SINGLE = [
    ("1/4-20 UNRC-2A", "minor_max", 0.1894, ROUNDING, "[C 15] UNR d3max (reference)"),
    ("1/2-28 UNREF-2A", "minor_max", 0.4564, ROUNDING, "[P 10] UNR d3max"),
    ("1/2-28 UNEF-2A", "minor_max", 0.4602, EXACT4, "[P 10] UN d1max"),
    ("1/2-28 UNEF-2B", "minor_min", 0.461, EXACT3, "[P 10]"),
    ("19/64-36 UNS-2A", "major_max", 0.2960, EXACT4, "[P 10]"),
    ("19/64-36 UNRS-2A", "minor_max", 0.2629, ROUNDING, "[P 10] UNR d3max"),
    ("19/64-36 UNS-2A", "minor_max", 0.2659, EXACT4, "[P 10] UN d1max"),
    ("19/64-36 UNS-2B", "pitch_min", 0.2789, EXACT4, "[P 10]"),
    ("1/4-20 UNC-2B", "major_min", 0.2500, EXACT4, "[P 9]"),
    ("1/4-28 UNF-3B", "pitch_max", 0.2300, ROUNDING, "[P 14] (5.842 mm)"),
    ("1/4-28 UNF-3B", "minor_min", 0.2113, ROUNDING, "[P 14] (5.367 mm)"),
    ("2-1/2-4 UNRC-2A", "minor_max", 2.1992, ROUNDING, "[P 11]"),
    ("2-1/2-4 UNC-1A", "pitch_min", 2.3190, EXACT4, "[P 11]"),
    ("2-1/2-4 UNC-1B", "pitch_max", 2.3578, EXACT4, "[P 11]"),
    ("2-1/2-4 UNC-3B", "minor_max", 2.2594, EXACT4, "[P 11]"),
    ("2-1/2-4 UNC-3B", "pitch_max", 2.3477, EXACT4, "[P 11]"),
    ("2-1/2-8 UNR-2A", "minor_max", 2.3488, ROUNDING, "[P 11]"),
    ("2-1/2-12 UNR-2A", "minor_max", 2.3989, ROUNDING, "[P 11]"),
    ("0-80 UNRF-2A", "minor_max", 0.0446, ROUNDING, "[P 8]"),
    ("2-56 UNRC-2A", "minor_max", 0.0642, ROUNDING, "[P 8] (formula 0.0641, §12.9)"),
    ("1-64 UNC-2A", "major_min", 0.0686, ROUNDING, "[P 8]-style table value, §12.9"),
]

_KEYS = {"major": "major_diameter", "pitch": "pitch_diameter", "minor": "minor_diameter"}


@pytest.mark.parametrize("designation,which,value,tol,source", SINGLE,
                         ids=[f"{r[0]}:{r[1]}" for r in SINGLE])
def test_single_limits(designation, which, value, tol, source):
    part, end = which.split("_")
    lo, hi = _lim(thread_spec(designation), _KEYS[part])
    got = lo if end == "min" else hi
    assert abs(got - value) <= tol, (source, got)


# Allowances (es) and tolerances: standards-notes §11 rows.
@pytest.mark.parametrize("size,tpi,series,es,source", [
    ("0.25", 20, "UNC", "0.0011", "[C 15]"),
    ("0.5", 28, "UNEF", "0.0011", "[P 10]"),
    ("2.5", 4, "UNC", "0.0031", "[P 11]"),
    ("2.5", 8, "UN", "0.0024", "[P 11]"),
    ("2.5", 12, "UN", "0.0019", "[P 11]"),
    ("2.5", 6, "UN", "0.0027", "[P 11] (needs LE = D)"),
    ("2.5", 10, "UNS", "0.0020", "[P 11] (needs LE = 9P)"),
    ("0.060", 80, "UNF", "0.0005", "[P 8]"),
    ("0.086", 56, "UNC", "0.0006", "[P 8]"),
])
def test_allowance(size, tpi, series, es, source):
    L = unified_limits_in(Decimal(size), Decimal(tpi), series, "2A")
    assert L["es"] == Decimal(es), source


def test_worked_example_tolerances_1_2_28_unef():
    # MH 31st worked example [P 10] via standards-notes §11: Td2 0.003668, Td 0.006508
    L = unified_limits_in(Decimal("0.5"), Decimal(28), "UNEF", "2A")
    assert L["Td2"] == Decimal("0.003668")
    # 0.060 P^(2/3) = 0.0065070 here; the example prints 0.006508 (one unit of the 6th
    # decimal; the limit it feeds, dmin 0.4924, is the same either way)
    assert abs(float(L["Td"]) - 0.006508) <= 0.0000015
    assert L["dmin"] == Decimal("0.4924")
    # TD1 of the 19/64-36 UNS-2B example [P 10]: 0.006635; 0.25P - 0.4P^2 = 0.0066358
    # rounds to 0.006636 (again one unit of the 6th decimal; D1max 0.273 either way)
    L = unified_limits_in(Decimal("0.296875"), Decimal(36), "UNS", "2B")
    assert abs(float(L["TD1"]) - 0.006635) <= 0.0000015
    assert L["D1max"] == Decimal("0.273")


def test_length_of_engagement_rule():
    # standards-notes §3 / §12.8: LE = D for UNC, UNF, 4/6/8-UN; 9P for UNEF, 12-UN+, UNS
    D = Decimal("2.5")
    assert length_of_engagement_in("UNC", D, Decimal(4)) == D
    assert length_of_engagement_in("UN", D, Decimal(6)) == D
    assert length_of_engagement_in("UN", D, Decimal(12)) == Decimal(9) / 12
    assert length_of_engagement_in("UNS", D, Decimal(10)) == Decimal("0.9")
    assert length_of_engagement_in("UNEF", Decimal("0.5"), Decimal(28)) == Decimal(9) / 28
    # evidence row of §3: 1/4-20 UNC-2A d2min 0.2127 needs LE = D (9P would give 0.2124)
    assert thread_spec("1/4-20 UNC-2A").limits["pitch_diameter"].min_mm / IN == \
        pytest.approx(0.2127, abs=EXACT4)


def test_limit_sources_are_named():
    s = thread_spec("1/4-20 UNC-2A")
    assert "ASME B1.1" in s.limits["pitch_diameter"].source
    assert "formula-derived" in s.limits["minor_diameter"].source  # no minimum in B1.1
    s = thread_spec("1/4-20 UNC-2B")
    assert "formula-derived" in s.limits["major_diameter"].source  # max not limited


def test_basic_dimensions_number_size():
    # D = 0.060 + 0.013 N (standards-notes §3 [P 19][C 15]); #10 = 0.190 in
    s = thread_spec("10-32 UNF-2B")
    assert s.major_diameter_mm == pytest.approx(0.190 * IN, abs=1e-12)
    assert s.pitch_mm == pytest.approx(IN / 32, abs=1e-12)
    assert not s.external and s.thread_class == "2B"
    assert thread_spec("#12-24 UNC-2A").major_diameter_mm == pytest.approx(0.216 * IN)


@pytest.mark.parametrize("text,fragment", [
    ("1/4-28 UNC-2A", "20 tpi"),            # wrong pitch for the series
    ("1/4-40 UN-2A", "UNS"),                # not a constant-pitch UN series
    ("1/4-20 UNC-4A", "class"),
    ("1/4-20 UNRC-2B", "external thread only"),
    ("1/2-28 UNEF-1A", "1A/1B"),            # §12.13: no 1A for UNEF
    ("1/4 UNC-2A", "threads per inch"),
    ("13/64-20 UNC-2A", "UNS"),             # no UNC thread of that size
    ("1/4-0 UNS-2A", "above zero"),
    ("#3-8 UN-2A", "too coarse"),            # pitch above half the diameter
    ("5/16-999 UNS-2B", "tolerances are larger than the thread depth"),
])
def test_bad_unified_designations(text, fragment):
    with pytest.raises(SpecError) as e:
        thread_spec(text)
    msg = str(e.value)
    assert fragment in msg and "\n" not in msg
