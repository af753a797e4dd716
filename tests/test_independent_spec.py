"""Acceptance: thread designations the other tests may not use, against the standards.

Check values: rows of ../shared/standards-notes.md section 11 (provenance per row there),
and for sizes without a row there, values recomputed here from the ASME B1.1 section 5.8
formulas (standards-notes section 3, LE rule of section 12 item 8, Machinery's Handbook
rounding order) or from the ISO 965-1 formulas and Table 1 fundamental deviations
(standards-notes section 2), each marked as such.
"""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import pytest

import profilecheck as pc

IN = 25.4
PC_EXE = Path(sys.executable).with_name("profilecheck")


def _r4(x):
    # Machinery's Handbook worked examples round each limit to 4 decimals (standards-notes 3)
    return math.floor(x * 1e4 + 0.5) / 1e4


def unified_external(d_in, tpi, cls, series):
    """ASME B1.1 section 5.8 external limits (inch), written from standards-notes section 3."""
    P = 1.0 / tpi
    le = d_in if series in ("UNC", "UNF", "4-UN", "6-UN", "8-UN") else 9 * P
    td2_2a = 0.0015 * d_in ** (1 / 3) + 0.0015 * math.sqrt(le) + 0.015 * P ** (2 / 3)
    td2 = {"1A": 1.5, "2A": 1.0, "3A": 0.75}[cls] * td2_2a
    es = 0.300 * td2_2a if cls in ("1A", "2A") else 0.0
    td = (0.090 if cls == "1A" else 0.060) * P ** (2 / 3)
    dmax = _r4(d_in - round(es, 4))
    dmin = _r4(dmax - td)
    d2max = _r4(dmax - 0.64951905 * P)
    d2min = _r4(d2max - td2)
    return {"major_diameter": (dmin, dmax), "pitch_diameter": (d2min, d2max)}


def unified_internal_pd(d_in, tpi, cls, series):
    """ASME B1.1 internal pitch-diameter limits (inch), standards-notes section 3."""
    P = 1.0 / tpi
    le = d_in if series in ("UNC", "UNF", "4-UN", "6-UN", "8-UN") else 9 * P
    td2_2a = 0.0015 * d_in ** (1 / 3) + 0.0015 * math.sqrt(le) + 0.015 * P ** (2 / 3)
    f = {"1B": 1.95, "2B": 1.3, "3B": 0.975}[cls]
    d2min_unrounded = d_in - 0.64951905 * P
    return (_r4(d2min_unrounded), _r4(d2min_unrounded + f * td2_2a))


# designation, basic major (in), tpi, class, series
UNIFIED_EXTERNAL = [
    ("3/8-24 UNF-2A", 0.375, 24, "2A", "UNF"),
    ("8-32 UNC-2A", 0.164, 32, "2A", "UNC"),  # number size D = 0.060 + 0.013 N (ASME B1.1)
    ("1/4-28 UNF-3A", 0.25, 28, "3A", "UNF"),
    ("7/16-14 UNC-1A", 0.4375, 14, "1A", "UNC"),
    ("1/4-20 UNC-2A", 0.25, 20, "2A", "UNC"),
    ("1/2-28 UNEF-2A", 0.5, 28, "2A", "UNEF"),
]


@pytest.mark.parametrize("des, d_in, tpi, cls, series", UNIFIED_EXTERNAL)
def test_unified_external_limits_match_asme_formulas(des, d_in, tpi, cls, series):
    spec = pc.thread_spec(des)
    assert spec.external and spec.included_angle_deg == 60
    assert spec.pitch_mm == pytest.approx(IN / tpi, abs=1e-9)
    assert spec.major_diameter_mm == pytest.approx(d_in * IN, abs=1e-9)
    want = unified_external(d_in, tpi, cls, series)
    for key, (lo, hi) in want.items():
        lim = spec.limits[key]
        # +/- 0.0001 in: published tables differ from one rounding rule by that much
        # (standards-notes section 12 item 9)
        assert lim.min_mm / IN == pytest.approx(lo, abs=1.01e-4), (des, key)
        assert lim.max_mm / IN == pytest.approx(hi, abs=1.01e-4), (des, key)


def test_unified_published_rows():
    # standards-notes section 11: 1/4-20 UNC-2A d 0.2489/0.2408, d2 0.2164/0.2127 [C 15];
    # 1/2-28 UNEF-2A d2 0.4757/0.4720 (Machinery's Handbook 31st worked example [P 10]).
    s = pc.thread_spec("1/4-20 UNC-2A")
    assert s.limits["major_diameter"].max_mm / IN == pytest.approx(0.2489, abs=1e-4)
    assert s.limits["pitch_diameter"].min_mm / IN == pytest.approx(0.2127, abs=1e-4)
    s = pc.thread_spec("1/2-28 UNEF-2A")
    assert s.limits["pitch_diameter"].max_mm / IN == pytest.approx(0.4757, abs=1e-4)
    assert s.limits["pitch_diameter"].min_mm / IN == pytest.approx(0.4720, abs=1e-4)


@pytest.mark.parametrize("des, d_in, tpi, cls, series", [
    ("#8-32 UNC-2B", 0.164, 32, "2B", "UNC"),
    ("1/4-20 UNC-2B", 0.25, 20, "2B", "UNC"),
])
def test_unified_internal_pitch_diameter(des, d_in, tpi, cls, series):
    spec = pc.thread_spec(des)
    assert not spec.external
    lo, hi = unified_internal_pd(d_in, tpi, cls, series)
    lim = spec.limits["pitch_diameter"]
    assert lim.min_mm / IN == pytest.approx(lo, abs=1.01e-4)
    assert lim.max_mm / IN == pytest.approx(hi, abs=1.01e-4)


# ISO metric: (designation, {key: (min, max)} mm, provenance)
ISO_ROWS = [
    ("M6x1-6g", {"major_diameter": (5.794, 5.974), "pitch_diameter": (5.212, 5.324)},
     "standards-notes 11, published 6g chart [P 5]"),
    ("M10x1.5-6H", {"pitch_diameter": (9.026, 9.206), "minor_diameter": (8.376, 8.676)},
     "standards-notes 11, ASME B1.13M internal table [P 6]"),
    ("M3x0.5-6g", {"pitch_diameter": (2.580, 2.655)}, "standards-notes 11 [P 5]"),
    ("M12x1.75-6H", {"pitch_diameter": (10.863, 11.063), "minor_diameter": (10.106, 10.441)},
     "standards-notes 11 [P 6]"),
    # computed here: es(g) from ISO 965-1 Table 1 as listed in standards-notes 2
    # (P 1.25: 28, P 0.45: 20, P 2.5: 42 um), Td/Td2 grade-6 formulas rounded to R40
    ("M10x1.25-6g", {"major_diameter": (9.760, 9.972), "pitch_diameter": (9.042, 9.160)},
     "computed: es 28, Td 212, Td2 118 um"),
    ("M2.5x0.45-6g", {"major_diameter": (2.380, 2.480), "pitch_diameter": (2.117, 2.188)},
     "computed: es 20, Td 100, Td2 71 um"),
    ("M20x2.5-6g", {"major_diameter": (19.623, 19.958), "pitch_diameter": (18.164, 18.334)},
     "computed: es 42, Td 335, Td2 170 um"),
    # M12x1.5-6H: TD2 190 um is the ISO 965-1 Table 5 value (standards-notes 12 item 3);
    # TD1 = 230 P^0.7 = 300 um (standards-notes 2)
    ("M12x1.5-6H", {"pitch_diameter": (11.026, 11.216), "minor_diameter": (10.376, 10.676)},
     "computed: TD2 190 (table), TD1 300 um"),
]


@pytest.mark.parametrize("des, rows, src", ISO_ROWS)
def test_iso_metric_limits(des, rows, src):
    spec = pc.thread_spec(des)
    for key, (lo, hi) in rows.items():
        lim = spec.limits[key]
        # +/- 0.001 mm: ISO tables print 3 decimals (standards-notes headline warning 3)
        assert lim.min_mm == pytest.approx(lo, abs=1.01e-3), (des, key, src)
        assert lim.max_mm == pytest.approx(hi, abs=1.01e-3), (des, key, src)


@pytest.mark.parametrize("des, form, angle, pitch_mm, d2_mm, d1_mm, src", [
    # Whitworth form E = D - 0.640327P, core = D - 1.280654P (BS 84, standards-notes 5)
    ("1/2-12 BSW", "Whitworth", 55.0, IN / 12, 0.4466 * IN, 0.3933 * IN, "standards-notes 11 [P 17]"),
    ("5/16-26 BSB", "Whitworth", 55.0, IN / 26, (0.3125 - 0.640327 / 26) * IN,
     (0.3125 - 1.280654 / 26) * IN, "BS 84 formulas, standards-notes 5"),
    # BA: 2BA 4.7 x 0.81 mm, E = d - 0.6P, core = d - 1.2P (BS 93, standards-notes 6 / 11)
    ("2BA", "BA", 47.5, 0.81, 4.214, 3.728, "standards-notes 11 [P 18]"),
    # ISO 2904: d2 = d - 0.5P, D1 = d - P (standards-notes 8, 11)
    ("Tr40x7", "ISO trapezoidal", 30.0, 7.0, 36.5, 33.0, "standards-notes 11, computed"),
])
def test_other_forms_basic_dimensions(des, form, angle, pitch_mm, d2_mm, d1_mm, src):
    spec = pc.thread_spec(des)
    assert spec.form == form
    assert spec.included_angle_deg == pytest.approx(angle)
    assert spec.pitch_mm == pytest.approx(pitch_mm, abs=1e-6)
    assert spec.pitch_diameter_mm == pytest.approx(d2_mm, abs=0.003), src
    # trapezoidal: the spec's minor is the external d3 or the internal D1; accept D1 = d - P
    # or d3 = d - 2 (0.5P + ac) with ac = 0.5 mm (ISO 2901, standards-notes 8)
    if form == "ISO trapezoidal":
        assert spec.minor_diameter_mm in (pytest.approx(33.0, abs=1e-3), pytest.approx(32.0, abs=1e-3))
    else:
        assert spec.minor_diameter_mm == pytest.approx(d1_mm, abs=0.003), src


def test_acme_3_4_6_2g_published_row():
    # standards-notes 11: Acme 2G 3/4-6 major 0.7500/0.7417, PD 0.6598/0.6424,
    # minor 0.5633/0.5371 [P 20]
    spec = pc.thread_spec("3/4-6 ACME-2G")
    want = {"major_diameter": (0.7417, 0.7500), "pitch_diameter": (0.6424, 0.6598),
            "minor_diameter": (0.5371, 0.5633)}
    for key, (lo, hi) in want.items():
        assert spec.limits[key].min_mm / IN == pytest.approx(lo, abs=1.01e-4)
        assert spec.limits[key].max_mm / IN == pytest.approx(hi, abs=1.01e-4)


@pytest.mark.parametrize("bad", ["M6x", "1/4-20 UNC-9A", "M-6", "", "   "])
def test_malformed_designations_raise_spec_error(bad):
    with pytest.raises(pc.ProfilecheckError):
        pc.thread_spec(bad)


@pytest.mark.parametrize("bad", ["M6x", "1/4-20 UNC-9A", "M-6", ""])
def test_cli_malformed_designation_exit_2_one_line(bad, tmp_path):
    out = tmp_path / "spec.json"
    r = subprocess.run([str(PC_EXE), "spec", bad, "--json", str(out)], capture_output=True,
                       text=True, timeout=60)
    assert r.returncode == 2
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and "Traceback" not in r.stderr
    assert not out.exists()


def test_cli_spec_json_for_new_designation(tmp_path):
    import json

    out = tmp_path / "spec.json"
    r = subprocess.run([str(PC_EXE), "spec", "3/8-24 UNF-2A", "--json", str(out)],
                       capture_output=True, text=True, timeout=60)
    assert r.returncode == 0, r.stderr
    d = json.loads(out.read_text())
    # design.md JSON: limits in mm; ASME B1.1 formula values, computed above
    want = unified_external(0.375, 24, "2A", "UNF")["pitch_diameter"]
    pd = d["limits"]["pitch_diameter"]
    assert pd["min"] / IN == pytest.approx(want[0], abs=1.01e-4)
    assert pd["max"] / IN == pytest.approx(want[1], abs=1.01e-4)
    assert d["included_angle"]["value"] == pytest.approx(60.0)
