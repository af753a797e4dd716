"""``profilecheck height`` through the command line: the axis-line round trip and exit codes.

Truth: exact outlines (axis = world y = 0). Rule of thumb +/-0.1 mm (common practice, no
source; standards-notes section 10) decides exit 0 / 1.
"""

import json

import numpy as np
import pytest

from profilecheck.calibration import Calibration, save_calibration
from profilecheck.cli import main
from profilecheck.scenario._shapes import centre_side_view, tool_side_view
from profilecheck.synth import Camera, render

S = 0.008
SIZE = (800, 600)


def _png(path, shapes, seed):
    import cv2

    cam = Camera(S, SIZE, rotation_deg=-2.0, centre_mm=(0.0, 0.2))
    img, _ = render(shapes, cam, blur_px=1.4, noise=2.5, dark=30, bright=215, seed=seed,
                    supersample=4)
    assert cv2.imwrite(str(path), img)


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    d = tmp_path_factory.mktemp("heightcli")
    save_calibration(Calibration(S, 0.0, SIZE, label="test lathe camera"), d / "cam.json")
    centre = centre_side_view(apex_mm=(-0.4, 0.0), diameter_mm=3.0)[0]
    _png(d / "on.png", [centre, tool_side_view(tip_mm=(0.25, 0.03), thickness_mm=1.5)[0]], 1)
    _png(d / "low.png", [tool_side_view(tip_mm=(0.25, -0.16), thickness_mm=1.5)[0]], 2)
    _png(d / "empty.png", [centre], 3)
    return d


def test_point_then_saved_line(files, capsys):
    axis = files / "axis.json"
    rc = main(["height", str(files / "on.png"), "--cal", str(files / "cam.json"),
               "--reference", "point", "--save-axis", str(axis), "--work-diameter", "3mm"])
    assert rc == 0
    saved = json.loads(axis.read_text())
    assert saved["format"] == "profilecheck-axis-line" and saved["image_size"] == list(SIZE)
    out = files / "low.json"
    rc = main(["height", str(files / "low.png"), "--cal", str(files / "cam.json"),
               "--reference", "line", "--axis", str(axis), "--json", str(out)])
    assert rc == 1  # 0.16 mm below centre
    d = json.loads(out.read_text())
    assert d["measurements"]["height_offset"]["value"] == pytest.approx(-0.16, abs=0.002)
    assert "raise the tool" in capsys.readouterr().out


def test_no_tool_exits_2_and_saves_no_axis(files, capsys):
    axis = files / "axis_empty.json"
    rc = main(["height", str(files / "empty.png"), "--cal", str(files / "cam.json"),
               "--save-axis", str(axis)])
    assert rc == 2
    assert "no tool tip" in capsys.readouterr().err
    assert not axis.exists()


def test_line_reference_needs_an_axis_file(files, capsys):
    rc = main(["height", str(files / "low.png"), "--cal", str(files / "cam.json"),
               "--reference", "line"])
    assert rc == 2
    assert "--axis" in capsys.readouterr().err


def test_work_diameter_needs_a_unit(files, capsys):
    rc = main(["height", str(files / "on.png"), "--cal", str(files / "cam.json"),
               "--work-diameter", "3"])
    assert rc == 2
    assert "--work-diameter" in capsys.readouterr().err


def test_no_reference_exits_2_with_a_reason(files, capsys):
    rc = main(["height", str(files / "low.png"), "--cal", str(files / "cam.json"),
               "--reference", "point"])
    assert rc == 2
    assert "no lathe centre" in capsys.readouterr().err
