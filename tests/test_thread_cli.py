"""``profilecheck thread`` end to end: exit codes, outputs, no partial files.

Exit codes per docs/conventions.md (0 measured and within limits, 1 outside/undecided,
2 could not measure). Image: the rendered helical M6x1 basic profile (ISO 68-1), whose
basic pitch diameter 5.3505 lies above the 6g maximum 5.324 (ISO 965-1 table,
../shared/standards-notes.md section 11), so '--spec M6x1-6g' must fail.
"""

import json
import subprocess
import sys
from pathlib import Path

import cv2
import numpy as np
import pytest

from profilecheck.calibration import Calibration, save_calibration
from profilecheck.cli import main

from test_thread_measure import helical_image, iso_profile


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    d = tmp_path_factory.mktemp("thread_cli")
    img = helical_image(iso_profile(1.0, 6.0), 1.0, 0.014, (560, 500), rot=-1.0, seed=3)
    cv2.imwrite(str(d / "stay.png"), np.round(img * 255).astype(np.uint8))
    cv2.imwrite(str(d / "blank.png"), np.full((500, 560), 200, np.uint8))
    save_calibration(Calibration(0.014, 2e-6, (560, 500), blur_px=1.2,
                                 gauge={"kind": "pin", "size_mm": 6.0}), d / "cal.json")
    save_calibration(Calibration(0.014, 2e-6, (800, 600)), d / "cal_other.json")
    return d


def test_no_spec_exit_0_json_and_png(files, capsys):
    out_json, out_png = files / "r.json", files / "r.png"
    rc = main(["thread", str(files / "stay.png"), "--cal", str(files / "cal.json"),
               "--json", str(out_json), "--annotate", str(out_png)])
    assert rc == 0
    d = json.loads(out_json.read_text())
    assert d["kind"] == "thread" and d["verdict"]["overall"] == "none"
    for key in ("pitch", "flank_left", "flank_right", "included_angle", "crest_flat",
                "root_flat", "depth", "major_diameter", "minor_diameter", "pitch_diameter"):
        assert key in d["measurements"]
    # pitch 1 mm (the rendered part), with its uncertainty
    assert abs(d["measurements"]["pitch"]["value"] - 1.0) < 0.001
    png = cv2.imread(str(out_png))
    assert png is not None and png.shape[:2] == (500, 560)
    assert "pitch" in capsys.readouterr().out


def test_failing_spec_exit_1_with_infeed(files, capsys):
    rc = main(["thread", str(files / "stay.png"), "--cal", str(files / "cal.json"),
               "--spec", "M6x1-6g", "--units", "in"])
    assert rc == 1
    out = capsys.readouterr().out
    assert "infeed" in out and "thou" in out


def test_blank_image_exit_2_leaves_files_alone(files, capsys):
    out_json = files / "keep.json"
    out_json.write_text("old\n")
    rc = main(["thread", str(files / "blank.png"), "--cal", str(files / "cal.json"),
               "--json", str(out_json), "--annotate", str(files / "none.png")])
    assert rc == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert out_json.read_text() == "old\n"
    assert not (files / "none.png").exists()


def test_calibration_size_mismatch_exit_2(files, capsys):
    rc = main(["thread", str(files / "stay.png"), "--cal", str(files / "cal_other.json")])
    assert rc == 2
    assert "recalibrate" in capsys.readouterr().err


def test_bad_spec_exit_2(files, capsys):
    rc = main(["thread", str(files / "stay.png"), "--cal", str(files / "cal.json"),
               "--spec", "M6x9x9"])
    assert rc == 2


def test_installed_entry_point(files):
    exe = Path(sys.executable).parent / "profilecheck"
    if not exe.exists():
        pytest.skip("console script not installed in this environment")
    p = subprocess.run([str(exe), "thread", str(files / "blank.png"), "--cal",
                        str(files / "cal.json")], capture_output=True, text=True, timeout=120)
    assert p.returncode == 2
    assert p.stderr.startswith("profilecheck thread:")
