"""``profilecheck tool`` through the command line: exit codes, outputs only on success.

Exit status rule of design.md: 0 measured and within limits, 1 outside/undecided, 2 could not
measure (one line on stderr, no output written). Truth: outline plane geometry; limits of
1/4-40 UNS-2A as in tests/test_tool_spec.py (ASME B1.1 UN external root, standards-notes 10).
"""

import json

import numpy as np
import pytest

from profilecheck.calibration import Calibration, save_calibration
from profilecheck.cli import main
from profilecheck.scenario._shapes import tool_top_view, work_edge
from profilecheck.synth import Camera, render

S = 0.006
SIZE = (640, 480)


def _write_png(path, img):
    import cv2

    assert cv2.imwrite(str(path), img)


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    d = tmp_path_factory.mktemp("toolcli")
    cal = d / "cam.json"
    save_calibration(Calibration(S, 0.0, SIZE, label="test camera"), cal)
    cam = Camera(S, SIZE, rotation_deg=1.0, centre_mm=(0.0, -0.8))
    for name, flat in (("good", 0.10), ("wide", 0.20)):
        poly, _ = tool_top_view(shank_width_mm=1.6, tip_flat_mm=flat)
        img, _ = render([poly], cam, blur_px=1.3, noise=2.0, dark=28, bright=225, seed=2,
                        supersample=4)
        _write_png(d / f"{name}.png", img)
    _write_png(d / "blank.png", np.full(SIZE[::-1], 220, np.uint8))
    # squareness view: the tool turned 0.8 deg (counter-clockwise in the world) under a
    # straight work edge; expected -0.8 deg in the image convention (clockwise +)
    poly, _ = tool_top_view(shank_width_mm=1.6, tip_flat_mm=0.1, direction_deg=90.8,
                            apex_mm=(0.0, 0.2))
    img, _ = render([poly, work_edge(y_mm=0.6)], Camera(S, SIZE, centre_mm=(0.0, -0.2)),
                    blur_px=1.3, noise=2.0, seed=3, supersample=4)
    _write_png(d / "square.png", img)
    return d


def test_good_tool_exits_0_and_writes_json(files, capsys):
    out = files / "good.json"
    rc = main(["tool", str(files / "good.png"), "--cal", str(files / "cam.json"),
               "--spec", "1/4-40 UNS-2A", "--json", str(out)])
    assert rc == 0
    d = json.loads(out.read_text())
    assert d["kind"] == "tool" and d["verdict"]["overall"] == "pass"
    assert d["measurements"]["tip_flat"]["value"] == pytest.approx(0.10, abs=0.003)
    assert "included angle" in capsys.readouterr().out


def test_wide_flat_exits_1_with_advice(files, capsys):
    rc = main(["tool", str(files / "wide.png"), "--cal", str(files / "cam.json"),
               "--spec", "1/4-40 UNS-2A"])
    assert rc == 1
    assert "too wide" in capsys.readouterr().out


def test_no_tool_exits_2_and_writes_nothing(files, capsys):
    out = files / "blank.json"
    rc = main(["tool", str(files / "blank.png"), "--cal", str(files / "cam.json"),
               "--json", str(out), "--annotate", str(files / "blank_ann.png")])
    assert rc == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "no tool" in err[0]
    assert not out.exists() and not (files / "blank_ann.png").exists()


def test_squareness_mode(files):
    out = files / "square.json"
    rc = main(["tool", str(files / "square.png"), "--cal", str(files / "cam.json"),
               "--square", "--json", str(out)])
    d = json.loads(out.read_text())
    assert d["measurements"]["squareness"]["value"] == pytest.approx(-0.8, abs=0.05)
    assert rc == 1  # 0.8 deg is outside +/-0.25 deg (common practice, no source)


def test_annotated_picture_is_written(files):
    png = files / "good_ann.png"
    rc = main(["tool", str(files / "good.png"), "--cal", str(files / "cam.json"),
               "--annotate", str(png)])
    assert rc == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
