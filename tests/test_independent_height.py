"""Acceptance: tool centre height on independently rendered side views at the lathe.

Scene (``tests/_independent_render.py``): a 60 deg centre (axial section, parallel
projection) pointing at a tool that comes from the other side; the tool's tip (top face
meets front face) is ``height_offset_mm`` above the axis. Target (project issues): height
offset within 2 um. Verdict rule of thumb +/- 0.1 mm (common practice, no source;
standards-notes section 10).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import cv2
import pytest

import _independent_render as R
import profilecheck as pc

PC_EXE = Path(sys.executable).with_name("profilecheck")
S, SIZE = 0.008, (400, 320)
HEIGHT_TOL_MM = 2e-3


@pytest.fixture(scope="module")
def cal():
    d_mm = round(0.55 * SIZE[1] * S, 3)
    img = R.render([R.pin_polygon(d_mm, axis_angle_deg=2.0)], R.View(S, SIZE), blur_px=1.2,
                   vignetting=0.15, seed=3)
    return pc.calibrate_from_pin(R.as_float(img), d_mm)


def scene(offset_mm, *, slope_deg=0.0, rotation_deg=0.0, axis_y_mm=0.0, seed=11):
    polys, _ = R.centre_and_tool_polygons(height_offset_mm=offset_mm, top_slope_deg=slope_deg,
                                          gap_mm=0.7, centre_body_d_mm=2.4,
                                          tool_depth_mm=1.0, axis_y_mm=axis_y_mm)
    return R.render(polys, R.View(S, SIZE, rotation_deg=rotation_deg, centre_mm=(0.2, 0.0)),
                    blur_px=1.2, vignetting=0.15, seed=seed)


@pytest.mark.parametrize("offset, slope, rot, axis_y, verdict", [
    (0.0, 0.0, 0.0, 0.0, "pass"),
    (0.05, 0.0, 0.5, 0.1, "pass"),
    (-0.12, 1.0, -1.0, -0.2, "fail"),
    (0.0123, 0.3, 20.0, 0.0, "pass"),
])
def test_height_offset_within_target(cal, offset, slope, rot, axis_y, verdict):
    res = pc.measure_height(R.as_float(scene(offset, slope_deg=slope, rotation_deg=rot,
                                             axis_y_mm=axis_y)), cal, reference="point")
    m = res.measurements["height_offset"]
    assert abs(m.value - offset) < HEIGHT_TOL_MM
    # the top face rises toward the tip by `slope` (height.py: + when rising to the tip)
    assert abs(res.measurements["top_slope"].value - slope) < 0.1
    assert res.verdict == verdict


def test_cli_height(cal, tmp_path):
    png, calf, out = tmp_path / "h.png", tmp_path / "cal.json", tmp_path / "h.json"
    cv2.imwrite(str(png), scene(-0.03))
    pc.save_calibration(cal, calf)
    r = subprocess.run([str(PC_EXE), "height", str(png), "--cal", str(calf), "--reference",
                        "point", "--json", str(out)], capture_output=True, text=True,
                       timeout=120)
    assert r.returncode == 0, r.stderr
    d = json.loads(out.read_text())
    assert abs(d["measurements"]["height_offset"]["value"] - (-0.03)) < HEIGHT_TOL_MM
