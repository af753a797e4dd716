"""Reports from a real measurement: a threading tool rendered by profilecheck.synth from
exact geometry (60 deg, tip flat 0.125 mm) and measured by measure_tool against M6x1-6g.

Check values: the M6x1 external tool tip flat must be at least H/6 = 0.1443 mm for a flat
root truncated by 0.125P (ISO 965-1 root rule, standards-notes.md §2 and §10), so a
0.125 mm flat fails; 1 in = 25.4 mm exactly.
"""

from __future__ import annotations

import math
import os
import subprocess

import cv2
import numpy as np
import pytest

measure = pytest.importorskip("profilecheck.measure")
shapes = pytest.importorskip("profilecheck.scenario._shapes")
synth = pytest.importorskip("profilecheck.synth")

from profilecheck.calibration import Calibration  # noqa: E402
from profilecheck.report.annotate import draw_overlays, encode_png  # noqa: E402
from profilecheck.report.csv import format_readings_csv, readings_rows  # noqa: E402
from profilecheck.report.sheet import write_sheet  # noqa: E402
from profilecheck.report.table import format_table  # noqa: E402

CHROMIUM = "/usr/bin/chromium"
SIZE = (480, 400)


@pytest.fixture(scope="module")
def tool_job():
    poly, truth = shapes.tool_top_view(tip_flat_mm=0.125, shank_length_mm=3.0, apex_mm=(0.0, 1.0))
    cam = synth.Camera(mm_per_px=0.005, image_size=SIZE)
    img, _ = synth.render([poly], cam, blur_px=1.0, noise=2.0, seed=4, supersample=4)
    # calibration = the render's truth (0.005 mm/px exactly), U 0.05 % stated
    cal = Calibration(mm_per_px=0.005, u_mm_per_px=2.5e-6, image_size=SIZE,
                      gauge={"kind": "pin", "size_mm": 2.0}, created="2026-12-01T08:00:00+00:00")
    grey = img.astype(float) / 255.0
    result = measure.measure_tool(grey, cal, spec="M6x1-6g")
    return grey, result, truth


def test_table_and_csv_from_real_result(tool_job):
    _, result, truth = tool_job
    d = result.to_dict()
    text = format_table(d, ascii_only=True)
    row = next(line for line in text.splitlines() if line.startswith("tip flat"))
    assert row.rstrip().endswith("FAIL")
    assert "0.1443 .. 0.250 mm" in row  # H/6 = 0.866025/6 = 0.144338 mm for P = 1 mm
    flat = d["measurements"]["tip_flat"]["value"]
    assert flat == pytest.approx(truth["tip_flat"], abs=0.005)
    assert f"{flat / 25.4:.5f}"[:6] in row
    assert "what to do:" in text
    rows = readings_rows(d, job="tool 1")
    assert {r["quantity"] for r in rows} >= {"included_angle", "tip_flat"}
    assert "tool 1" in format_readings_csv(rows)


def test_annotated_image_and_sheet_from_real_result(tool_job, tmp_path):
    grey, result, _ = tool_job
    rgb = draw_overlays(grey, result.overlays)
    assert rgb.shape == (SIZE[1], SIZE[0], 3)
    # the overlays drew colour (grey input has R = G = B everywhere)
    colour = (np.ptp(rgb.astype(int), axis=2) > 40).sum()
    assert colour > 200
    html_path = tmp_path / "tool.html"
    write_sheet(html_path, result.to_dict(), encode_png(rgb), job="tool 1")
    html = html_path.read_text(encoding="utf-8")
    assert "FAIL" in html and "What to do" in html and "wheel guards" in html
    if not os.path.exists(CHROMIUM):
        pytest.skip("needs /usr/bin/chromium for the rendered check")
    shot = tmp_path / "tool.png"
    subprocess.run([CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                    "--no-first-run", "--disable-background-networking",
                    "--disable-component-update", "--disable-sync",
                    f"--user-data-dir={tmp_path / 'profile'}", f"--screenshot={shot}",
                    "--window-size=1240,1754", html_path.as_uri()],
                   capture_output=True, timeout=90, check=False)
    img = cv2.imread(str(shot), cv2.IMREAD_GRAYSCALE)
    assert img is not None and img.shape == (1754, 1240)
    assert (img < 100).mean() > 0.005 and (img > 245).mean() > 0.4
    assert not math.isclose(float(img.std()), 0.0)


test_annotated_image_and_sheet_from_real_result = pytest.mark.chromium(
    test_annotated_image_and_sheet_from_real_result)
