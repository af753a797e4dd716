"""``profilecheck calibrate``: exit codes, written file, untouched output on failure."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import cv2
import pytest

from profilecheck.calibration import load_calibration
from profilecheck.cli import main
from profilecheck.scenario.calibration import bar_polygon, field_length_mm
from profilecheck.synth import Camera, render

S = 0.01
CAM = Camera(mm_per_px=S, image_size=(400, 300))


@pytest.fixture(scope="module")
def images(tmp_path_factory):
    d = tmp_path_factory.mktemp("cli")
    pin, _ = render([bar_polygon(1.2, length_mm=field_length_mm(CAM), tilt_deg=1.5)], CAM,
                    blur_px=1.2, noise=2.0, vignetting=0.15, seed=1)
    blank, _ = render([], CAM, blur_px=1.2, noise=2.0, vignetting=0.15, seed=2)
    cv2.imwrite(str(d / "pin.png"), pin)
    cv2.imwrite(str(d / "blank.png"), blank)
    return d


def test_pin_calibration_written_with_summary(images, tmp_path, capsys):
    out = tmp_path / "cam.json"
    # 0.047244in = 1.2000 mm (1 in = 25.4 mm exactly): 0.047244 * 25.4 = 1.19999...
    rc = main(["calibrate", str(images / "pin.png"), "--pin", "0.047244in", "--gauge-u", "1um",
               "--label", "bench", "--out", str(out)])
    assert rc == 0
    cal = load_calibration(out)
    assert abs(cal.mm_per_px / S - 1.0) < 0.0005
    assert cal.label == "bench"
    assert cal.gauge["size_mm"] == pytest.approx(1.2, abs=1e-5)
    assert cal.gauge["u_mm"] == pytest.approx(0.001)
    text = capsys.readouterr().out
    assert "um/px" in text and "px/mm" in text and "blur" in text
    d = json.loads(out.read_text())
    assert d["image_size"] == [400, 300]


@pytest.mark.parametrize("argv_tail, words", [
    (["--pin", "1.2mm"], "no pin found"),
    (["--pin", "1.2"], "unit"),
    (["--pin=-1mm"], "positive"),
])
def test_failure_exits_2_and_leaves_output(images, tmp_path, capsys, argv_tail, words):
    out = tmp_path / "cam.json"
    out.write_text("previous calibration\n")
    rc = main(["calibrate", str(images / "blank.png"), *argv_tail, "--out", str(out)])
    assert rc == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and words in err
    assert out.read_text() == "previous calibration\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["cam.json"]  # no temp files left


def test_missing_image_and_bad_out_folder(images, tmp_path, capsys):
    assert main(["calibrate", str(tmp_path / "none.png"), "--pin", "1mm",
                 "--out", str(tmp_path / "c.json")]) == 2
    assert main(["calibrate", str(images / "pin.png"), "--pin", "1mm",
                 "--out", str(tmp_path / "no" / "c.json")]) == 2
    assert not (tmp_path / "c.json").exists()
    capsys.readouterr()


def test_usage_errors_exit_2(images, tmp_path):
    with pytest.raises(SystemExit) as e:
        main(["calibrate", str(images / "pin.png"), "--pin", "1mm", "--block", "1mm",
              "--out", str(tmp_path / "c.json")])
    assert e.value.code == 2
    assert main(["calibrate", str(images / "pin.png"), str(images / "pin.png"), "--pin", "1mm",
                 "--out", str(tmp_path / "c.json")]) == 2
    assert main(["calibrate", str(images / "pin.png"), "--grid", "1mm", "--pattern", "9by6",
                 "--out", str(tmp_path / "c.json")]) == 2


def test_installed_entry_point(images, tmp_path):
    exe = Path(sys.executable).with_name("profilecheck")
    if not exe.exists():
        pytest.skip("console script not installed in this environment")
    out = tmp_path / "c.json"
    r = subprocess.run([str(exe), "calibrate", str(images / "blank.png"), "--pin", "1.2mm",
                        "--out", str(out)], capture_output=True, text=True, timeout=120)
    assert r.returncode == 2
    assert "Traceback" not in r.stderr and r.stderr.count("\n") == 1
    assert not out.exists()


def test_lines_with_offset_from_a_pin_file(tmp_path, capsys):
    # gamma-encoded renders (edges shifted toward the dark side): the line scale stays right
    # and the pin file supplies the edge offset (vision-notes section 4)
    from profilecheck.scenario.calibration import ruled_lines

    cam = Camera(mm_per_px=0.00375, image_size=(640, 360))
    length = field_length_mm(cam)
    kw = dict(blur_px=1.0, noise=2.0, vignetting=0.15, gamma=2.2)
    lines, _ = render(ruled_lines(0.5, 0.05, 5, tilt_deg=1.5, length_mm=length), cam, seed=5, **kw)
    pin, _ = render([bar_polygon(0.8, length_mm=length, tilt_deg=2.0)], cam, seed=6, **kw)
    cv2.imwrite(str(tmp_path / "lines.png"), lines)
    cv2.imwrite(str(tmp_path / "pin.png"), pin)
    assert main(["calibrate", str(tmp_path / "pin.png"), "--pin", "0.8mm", "--out", str(tmp_path / "p.json")]) == 0
    assert main(["calibrate", str(tmp_path / "lines.png"), "--lines", "0.5mm", "--offset-from",
                 str(tmp_path / "p.json"), "--out", str(tmp_path / "c.json")]) == 0
    cal = load_calibration(tmp_path / "c.json")
    assert abs(cal.mm_per_px / 0.00375 - 1.0) < 0.0005
    assert cal.gauge["kind"] == "combined" and cal.edge_offset_px < -0.2
    assert "edge offset" in capsys.readouterr().out
    # --offset-from with --pin is a usage mistake: exit 2
    assert main(["calibrate", str(tmp_path / "pin.png"), "--pin", "0.8mm", "--offset-from",
                 str(tmp_path / "p.json"), "--out", str(tmp_path / "x.json")]) == 2
