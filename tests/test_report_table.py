"""Terminal table: GUM rounding, mm/inch conversion, limits from the thread standards,
verdict words, tolerance of half-filled results."""

from __future__ import annotations

import pytest

from profilecheck.report._fmt import decimals_for, fmt_limits, fmt_pair
from profilecheck.report.table import format_table
from profilecheck.verdict import DECISION_RULE, check_limits


def _result(d2_value: float, d2_u: float) -> dict:
    # M6x1-6g pitch-diameter limits 5.212 / 5.324 mm: ISO 965-1 (standards-notes.md §11, [P 5]).
    chk = check_limits("pitch_diameter", d2_value, d2_u, 5.212, 5.324, unit="mm",
                       source="ISO 965-1 table")
    return {"kind": "thread", "image": "job.png",
            "calibration": {"path": "cam.json", "mm_per_px": 0.01, "u_mm_per_px": 1e-5,
                            "gauge": {"kind": "pin", "size_mm": 6.0}},
            "spec": {"designation": "M6x1-6g"},
            "measurements": {"pitch_diameter": {"value": d2_value, "u": d2_u, "unit": "mm"},
                             "pitch": {"value": 1.0003, "u": 0.0021, "unit": "mm"},
                             "flank_left": {"value": 30.12, "u": 0.15, "unit": "deg"}},
            "verdict": {"overall": chk.result, "checks": [chk.to_dict()]},
            "warnings": ["edge blur above the calibration's: check focus"]}


def test_gum_rounding_two_significant_digits():
    # GUM (JCGM 100:2008) 7.2.6: U to at most two significant digits, value to the same place.
    assert fmt_pair(5.30123, 0.0042, "mm", ascii_only=True) == "5.3012 mm +/- 4.2 um"
    assert fmt_pair(5.30123, 0.042, "mm", ascii_only=True) == "5.301 mm +/- 42 um"
    assert decimals_for(0.0042, default=4) == 4
    assert decimals_for(0.15, default=2) == 2
    assert decimals_for(12.0, default=2) == 0
    assert fmt_pair(30.1234, 0.15, "deg", ascii_only=True) == "30.12 deg +/- 0.15 deg"


def test_inch_conversion_exact_inch():
    # 1 in = 25.4 mm exactly (international inch, 1959): 5.30123 mm = 0.208710 in;
    # U 4.2 um = 0.165 thou -> 0.17 thou; 2.1 um = 0.0827 thou -> in tenths 0.83.
    assert fmt_pair(5.30123, 0.0042, "mm", "in", ascii_only=True) == "0.20871 in +/- 0.17 thou"
    assert fmt_pair(1.0003, 0.0021, "mm", "in", ascii_only=True) == \
        "0.039382 in +/- 0.83 tenths"


def test_limits_in_both_systems():
    # 1/4-20 UNC-2A pitch diameter 0.2127 / 0.2164 in (ASME B1.1; standards-notes.md §11),
    # held in mm as 5.40258 / 5.49656 and shown back in inch.
    assert fmt_limits(0.2127 * 25.4, 0.2164 * 25.4, "mm", "in", ascii_only=True) == \
        "0.21270 .. 0.21640 in"
    # M6x1-6g d2 limits, ISO 965-1 ([P 5]): 5.212 / 5.324 mm
    assert fmt_limits(5.212, 5.324, "mm", ascii_only=True) == "5.212 .. 5.324 mm"
    assert fmt_limits(None, 0.125, "mm", ascii_only=True) == "<= 0.125 mm"
    assert fmt_limits(None, None, "mm") == ""


@pytest.mark.parametrize("value,u,word", [(5.268, 0.008, "PASS"), (5.320, 0.008, "UNDECIDED"),
                                          (5.340, 0.008, "FAIL")])
def test_table_row_has_both_systems_limits_and_word(value, u, word):
    text = format_table(_result(value, u), ascii_only=True)
    row = next(line for line in text.splitlines() if line.startswith("pitch diameter"))
    assert f"{value:.3f}" in row and "mm +/- 8.0 um" in row
    assert f"{value / 25.4:.5f} in" in row
    assert "5.212 .. 5.324 mm" in row
    assert row.rstrip().endswith(word)
    assert f"overall: {word}" in text
    assert DECISION_RULE in text
    assert "check focus" in text


def test_units_in_puts_inch_first():
    text = format_table(_result(5.268, 0.008), "in", ascii_only=True)
    header = next(line for line in text.splitlines() if line.startswith("quantity"))
    assert header.index("inch") < header.index("metric")
    assert "0.20520 .. 0.20961 in" in text  # 5.212 / 25.4, 5.324 / 25.4


def test_measured_only_and_empty_results():
    r = _result(5.268, 0.008)
    r["verdict"] = {"overall": "none", "checks": []}
    text = format_table(r)
    assert "NO LIMITS" in text and "decision rule" not in text
    assert "(no readings)" in format_table({})
    with pytest.raises(ValueError, match="units"):
        format_table(r, "cm")
    with pytest.raises(TypeError, match="result_dict"):
        format_table([1, 2])


def test_malformed_entries_skipped_not_raised():
    r = {"measurements": {"pitch": {"value": None}, "depth": "x",
                          "crest_flat": {"value": 0.125, "u": 0.003, "unit": "mm"}},
         "verdict": {"checks": [{"name": 3}, "junk"]}}
    text = format_table(r, ascii_only=True)
    assert "crest flat" in text and "pitch " not in text.split("----")[-1]


def test_infeed_and_advice_lines():
    # M6x1-6g: d2 mid-tolerance (5.212 + 5.324)/2 = 5.268 mm (ISO 965-1 [P 5]); a thread at
    # d2 = 5.3512 mm has (5.3512 - 5.268)/2 = 0.0416 mm radial to go, i.e. compound travel
    # 0.0416 / cos 29.5 deg = 0.04781 mm (trigonometry; standards-notes §10 set-over).
    import math

    radial = (5.3512 - 5.268) / 2
    r = _result(5.3512, 0.008)
    r["infeed"] = {"radial": {"value": radial, "u": 0.004, "unit": "mm"},
                   "compound": {"value": radial / math.cos(math.radians(29.5)), "u": 0.0046,
                                "unit": "mm"},
                   "compound_angle": {"value": 29.5, "unit": "deg"},
                   "note": "take the remaining infeed in light passes"}
    r["advice"] = ["take a spring pass"]
    text = format_table(r, ascii_only=True)
    assert "infeed to go, radial: 0.0416 mm (0.00164 in) +/- 4.0 um" in text
    assert "infeed to go, compound: 0.0478 mm (0.00188 in) +/- 4.6 um at 29.5 deg" in text
    assert "light passes" in text and "  - take a spring pass" in text
