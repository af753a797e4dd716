"""Readings CSV: stable columns, exact float round trip, formula-safe text, bad files."""

from __future__ import annotations

import csv
import io

import pytest
from hypothesis import given, settings, strategies as st

from profilecheck.errors import ProfilecheckError
from profilecheck.report.csv import (COLUMNS, CsvFormatError, format_readings_csv,
                                     read_readings_csv, readings_rows, write_readings_csv)
from profilecheck.verdict import check_limits


def _result() -> dict:
    # 1/4-20 UNC-2A pitch diameter 0.2127 / 0.2164 in (ASME B1.1, standards-notes.md §11),
    # held in mm (x 25.4 exactly).
    lo, hi = 0.2127 * 25.4, 0.2164 * 25.4
    chk = check_limits("pitch_diameter", 5.4702, 0.0090, lo, hi, unit="mm",
                       source="ASME B1.1 formula")
    return {"kind": "thread", "image": "bolt.png", "spec": {"designation": "1/4-20 UNC-2A"},
            "measurements": {"pitch_diameter": {"value": 5.4702, "u": 0.0090, "unit": "mm",
                                                "n_points": 812},
                             "pitch": {"value": 1.2701, "u": 0.0015, "unit": "mm"},
                             "flank_right": {"value": 29.87, "u": 0.2, "unit": "deg"}},
            "verdict": {"overall": chk.result, "checks": [chk.to_dict()]}}


def test_columns_are_stable():
    # The documented column order (report/csv.py): scripts rely on it.
    assert COLUMNS == ("job", "time", "kind", "image", "spec", "quantity", "value", "u",
                       "unit", "min", "max", "result", "source", "n_points")
    text = format_readings_csv(readings_rows(_result(), job="J-1"))
    assert text.splitlines()[0] == ",".join(COLUMNS)


def test_round_trip_exact(tmp_path):
    path = tmp_path / "r.csv"
    n = write_readings_csv(path, _result(), job="J-1", time="2026-12-01T10:00:00+00:00")
    assert n == 3
    back = read_readings_csv(path)
    assert back == readings_rows(_result(), job="J-1", time="2026-12-01T10:00:00+00:00")
    d2 = next(r for r in back if r["quantity"] == "pitch_diameter")
    assert d2["min"] == 0.2127 * 25.4 and d2["max"] == 0.2164 * 25.4  # exact floats
    assert d2["result"] == "pass" and d2["n_points"] == 812
    assert d2["source"] == "ASME B1.1 formula"
    flank = next(r for r in back if r["quantity"] == "flank_right")
    assert flank["min"] is None and flank["result"] == "" and flank["unit"] == "deg"
    # the file is ordinary CSV any reader can parse
    rows = list(csv.DictReader(io.StringIO(path.read_text())))
    assert float(rows[0]["value"]) == back[0]["value"]


def test_several_results_in_one_file(tmp_path):
    path = tmp_path / "r.csv"
    a, b = dict(_result(), job="A"), dict(_result(), job="B")
    assert write_readings_csv(path, [a, b]) == 6
    assert [r["job"] for r in read_readings_csv(path)] == ["A"] * 3 + ["B"] * 3


def test_formula_text_is_neutralised_and_restored():
    rows = readings_rows(_result(), job="=HYPERLINK(\"x\")")
    text = format_readings_csv(rows)
    first_cell = next(iter(list(csv.reader(io.StringIO(text)))[1]))
    assert first_cell == "'=HYPERLINK(\"x\")"  # a spreadsheet shows it as text
    assert read_readings_csv(io.StringIO(text))[0]["job"] == "=HYPERLINK(\"x\")"


@settings(max_examples=60, deadline=None)
@given(job=st.text(max_size=30), value=st.floats(allow_nan=False, allow_infinity=False,
                                                    width=64),
       u=st.floats(min_value=0, max_value=1e6, allow_nan=False))
def test_round_trip_any_text_and_float(job, value, u):
    r = {"kind": "tool", "measurements": {"tip_flat": {"value": value, "u": u, "unit": "mm"}}}
    rows = readings_rows(r, job=job)
    back = read_readings_csv(io.StringIO(format_readings_csv(rows), newline=""))
    assert back[0]["value"] == value and back[0]["u"] == u
    assert back[0]["job"] == job


def test_bad_files_raise_readable_errors(tmp_path):
    p = tmp_path / "x.csv"
    p.write_text("a,b\n1,2\n")
    with pytest.raises(CsvFormatError, match="missing column"):
        read_readings_csv(p)
    p.write_text(",".join(COLUMNS) + "\nJ,,thread,,,pitch,abc,0.1,mm,,,,,\n")
    with pytest.raises(CsvFormatError, match="line 2: column value"):
        read_readings_csv(p)
    with pytest.raises(CsvFormatError, match="not found"):
        read_readings_csv(tmp_path / "none.csv")
    p.write_text("")
    with pytest.raises(CsvFormatError, match="empty"):
        read_readings_csv(p)
    assert issubclass(CsvFormatError, ProfilecheckError)
