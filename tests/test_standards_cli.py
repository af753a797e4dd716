"""``profilecheck spec`` through cli.main and once through the installed entry point.

Numbers checked against standards-notes §11: 1/4-20 UNC-2A PD 0.2127/0.2164 in ([C 15]),
M6x1-6g PD 5.212/5.324 mm ([P 5]).
"""

import json
import subprocess
import sys
from pathlib import Path

import pytest

from profilecheck.cli import main


def test_spec_json_unified(tmp_path, capsys):
    out = tmp_path / "s.json"
    assert main(["spec", "1/4-20 UNC-2A", "--json", str(out)]) == 0
    d = json.loads(out.read_text())
    assert d["designation"] == "1/4-20 UNC-2A" and d["form"] == "UN"
    assert d["included_angle"]["value"] == 60.0
    pd = d["limits"]["pitch_diameter"]
    assert round(pd["min"] / 25.4, 4) == 0.2127 and round(pd["max"] / 25.4, 4) == 0.2164
    assert "tool_tip" in d and "best_wire" in d
    text = capsys.readouterr().out
    assert "0.2127" in text and "0.2164" in text and "thou" in text
    assert "Caution" in text


def test_spec_units_mm_and_stdout(capsys):
    assert main(["spec", "M6x1-6g", "--units", "mm"]) == 0
    text = capsys.readouterr().out
    assert "5.212" in text and "5.324" in text
    assert main(["spec", "M6x1-6g", "--units", "in", "--compound", "30"]) == 0
    text = capsys.readouterr().out
    assert "0.2052" in text       # 5.212 mm in inches
    assert "compound at 30 deg" in text


def test_basic_only_forms(capsys):
    assert main(["spec", "Tr20x4-7e"]) == 0
    assert "basic dimensions only" in capsys.readouterr().out


@pytest.mark.parametrize("bad", ["1/4-28 UNC-2A", "M6x0", "garbage", "1/4-20 UNC-9A",
                                 "M6x-1-6g", "1/4-20 UNRC-2B"])
def test_bad_designation_exit_2_and_file_untouched(tmp_path, capsys, bad):
    out = tmp_path / "keep.json"
    out.write_text("previous\n")
    assert main(["spec", bad, "--json", str(out)]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    assert "e.g." in err or "examples" in err
    assert out.read_text() == "previous\n"
    assert list(tmp_path.iterdir()) == [out]


def test_missing_folder_exit_2(tmp_path, capsys):
    assert main(["spec", "M6", "--json", str(tmp_path / "no" / "x.json")]) == 2
    assert "does not exist" in capsys.readouterr().err


def test_installed_entry_point(tmp_path):
    exe = Path(sys.executable).with_name("profilecheck")
    if not exe.exists():
        pytest.skip("console script not installed in this environment")
    out = tmp_path / "m8.json"
    ok = subprocess.run([str(exe), "spec", "M8-6H", "--json", str(out)],
                        capture_output=True, text=True)
    assert ok.returncode == 0, ok.stderr
    d = json.loads(out.read_text())
    assert d["thread_class"] == "6H" and d["external"] is False
    assert round(d["limits"]["pitch_diameter"]["min"], 3) == 7.188   # D2 = 8 - 0.649519*1.25
    bad = subprocess.run([str(exe), "spec", "M8x0", "--json", str(out)],
                         capture_output=True, text=True)
    assert bad.returncode == 2 and len(bad.stderr.strip().splitlines()) == 1
    assert json.loads(out.read_text()) == d
