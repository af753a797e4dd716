"""Job sheet: content from a well-formed result dict, escaping, atomic write, and a render
in headless Chromium checked not blank (and to carry the picture and the verdict band)."""

from __future__ import annotations

import base64
import os
import re
import shutil
import subprocess

import cv2
import numpy as np
import pytest

from profilecheck.overlays import Label, ScaleBar, Segment
from profilecheck.report.annotate import draw_overlays, encode_png
from profilecheck.report.sheet import render_sheet, write_sheet
from profilecheck.verdict import DECISION_RULE, check_limits, overall

CHROMIUM = "/usr/bin/chromium"


def _result() -> dict:
    """A fake-but-well-formed M6x1-6g thread result.

    Limits: ISO 965-1 6g via standards-notes.md §11 [P 5]: d 5.794/5.974, d2 5.212/5.324 mm.
    Best wire 0.5774 mm = P / (2 cos 30 deg) (ASME B1.2 best-wire size, standards-notes §4),
    over-wire 6.078/6.190 mm (standards-notes §11, [D]).
    """
    checks = [check_limits("pitch_diameter", 5.2951, 0.0084, 5.212, 5.324, unit="mm",
                           source="ISO 965-1 table"),
              check_limits("major_diameter", 5.9700, 0.0082, 5.794, 5.974, unit="mm",
                           source="ISO 965-1 table")]
    return {
        "kind": "thread", "image": "stay_<a>.png",
        "calibration": {"path": "bench_cam.json", "mm_per_px": 0.01, "u_mm_per_px": 1.2e-5,
                        "gauge": {"kind": "pin", "size_mm": 6.0, "u_mm": 0.001},
                        "created": "2026-11-30T10:00:00+00:00", "lens": None},
        "spec": {"designation": "M6x1-6g", "form": "ISO metric", "pitch": 1.0,
                 "included_angle": 60.0, "best_wire": 0.5774,
                 "over_wire": {"min": 6.078, "max": 6.190}, "blank_diameter": 5.9,
                 "tool_tip": {"flat_min": 0.125, "flat_max": 0.15},
                 "limits": {"pitch_diameter": {"min": 5.212, "max": 5.324,
                                               "source": "ISO 965-1 table"}}},
        "measurements": {"pitch": {"value": 1.0003, "u": 0.0021, "unit": "mm"},
                         "flank_left": {"value": 30.12, "u": 0.15, "unit": "deg"},
                         "pitch_diameter": {"value": 5.2951, "u": 0.0084, "unit": "mm"},
                         "major_diameter": {"value": 5.9700, "u": 0.0082, "unit": "mm"}},
        "verdict": {"overall": overall(checks), "checks": [c.to_dict() for c in checks]},
        "warnings": ["edge blur 1.4 px above the calibration's 1.2 px: check focus"],
    }


def _png() -> bytes:
    img = np.full((300, 450), 0.9)
    img[150:, :] = 0.1
    return encode_png(draw_overlays(img, [Segment((10, 150), (440, 150), "fit"),
                                          Label((20, 20), "d2 5.295", "pass"),
                                          ScaleBar(1.0, 100.0)]))


def test_sheet_holds_readings_limits_rule_calibration_spec_cautions():
    r = _result()
    html = render_sheet(r, _png(), created="2026-12-01T10:00:00+00:00")
    assert html.startswith("<!DOCTYPE html>")
    assert "UNDECIDED" in html  # major diameter within U of its 5.974 mm limit
    assert "5.2951 mm \u00b1 8.4 \u00b5m" in html
    assert "0.20847 in \u00b1 0.33 thou" in html  # 5.2951 / 25.4 (1 in = 25.4 mm exactly)
    assert "5.212 .. 5.324 mm" in html and "0.20520 .. 0.20961 in" in html
    assert DECISION_RULE in html
    assert "10.00000 \u00b5m/px" in html and "pin 6.0000 mm" in html
    assert "0.5774 mm" in html and "6.0780 .. 6.1900 mm" in html and "5.9000 mm" in html
    assert "0.1250 .. 0.1500 mm" in html  # tool tip flat
    assert "check focus" in html
    for word in ("spindle", "guards", "eye protection", "wheel guards", "tool rest"):
        assert word in html
    assert "local practice" in html
    # the picture is embedded, decodes to the same PNG, and no network reference exists
    m = re.search(r'src="data:image/png;base64,([A-Za-z0-9+/=]+)"', html)
    assert m and base64.b64decode(m.group(1)) == _png()
    assert "http://" not in html and "https://" not in html and "<script" not in html
    # user text is escaped
    assert "stay_&lt;a&gt;.png" in html and "stay_<a>" not in html


def test_sheet_tolerates_missing_parts():
    html = render_sheet({"kind": "tool"})
    assert "no annotated image attached" in html and "No readings" in html
    assert "NO LIMITS" in html
    assert html.index("wheel guards") < html.index("spindle")  # grinder caution first for tools
    with pytest.raises(TypeError, match="result_dict"):
        render_sheet(["x"])
    with pytest.raises(ValueError, match="PNG"):
        render_sheet({}, b"GIF89a....")
    with pytest.raises(TypeError, match="annotated_png"):
        render_sheet({}, 12)


def test_write_sheet_atomic(tmp_path):
    p = tmp_path / "job.html"
    p.write_text("old")
    write_sheet(p, _result(), _png(), created="x")
    assert p.read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert sorted(x.name for x in tmp_path.iterdir()) == ["job.html"]
    png_path = tmp_path / "a.png"
    png_path.write_bytes(_png())
    assert "data:image/png" in render_sheet(_result(), png_path)


@pytest.mark.chromium
@pytest.mark.skipif(not os.path.exists(CHROMIUM), reason="needs /usr/bin/chromium")
def test_sheet_renders_in_headless_chromium(tmp_path):
    html_path = tmp_path / "sheet.html"
    shot = tmp_path / "sheet.png"
    write_sheet(html_path, _result(), _png(), created="2026-12-01T10:00:00+00:00")
    profile = tmp_path / "profile"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
           "--no-first-run", "--disable-background-networking", "--disable-component-update",
           "--disable-sync", f"--user-data-dir={profile}", f"--screenshot={shot}",
           "--window-size=1240,1754", html_path.as_uri()]
    subprocess.run(cmd, capture_output=True, timeout=90, check=False)
    keep = os.environ.get("PROFILECHECK_KEEP_SHEET_PNG")
    if keep and shot.exists():
        shutil.copy(shot, keep)
    assert shot.exists(), "chromium wrote no screenshot"
    img = cv2.imread(str(shot), cv2.IMREAD_COLOR)
    assert img is not None and img.shape[:2] == (1754, 1240)
    grey = cv2.cvtColor(img, cv2.COLOR_BGR2GRAY)
    # not blank: a real page has text (many dark pixels) on a white ground
    assert (grey > 245).mean() > 0.5
    assert (grey < 100).mean() > 0.005
    # the embedded picture: a block that is half near-black (the silhouette at 0.1 grey)
    assert (grey < 40).sum() > 20000
    # the undecided verdict box is pale yellow (#fcf8cf) in the top band
    top = img[:250]
    yellow = (np.abs(top[:, :, 0].astype(int) - 0xcf) < 12) & (top[:, :, 2] > 240) & \
        (top[:, :, 1] > 235)
    assert yellow.sum() > 2000


def _full_result() -> dict:
    """A thread result with every section filled: 11 readings, infeed, warnings, advice."""
    r = _result()
    m = r["measurements"]
    for key, v, u, unit in (("flank_right", 29.91, 0.15, "deg"), ("included_angle", 60.03, 0.2,
                            "deg"), ("crest_flat", 0.1507, 0.0064, "mm"),
                            ("root_flat", 0.2499, 0.0062, "mm"), ("depth", 0.519, 0.001, "mm"),
                            ("minor_diameter", 4.912, 0.0023, "mm"),
                            ("over_wire", 6.213, 0.012, "mm")):
        m[key] = {"value": v, "u": u, "unit": unit}
    r["infeed"] = {"radial": {"value": 0.0386, "u": 0.0066, "unit": "mm"},
                   "compound": {"value": 0.0443, "u": 0.0076, "unit": "mm"},
                   "compound_angle": {"value": 29.5, "unit": "deg"},
                   "note": "pitch diameter still above the largest allowed: take the remaining "
                           "infeed in light passes and measure again before the last pass"}
    r["warnings"] += ["one crest chipped near x = 9 mm: left out of the fits"]
    r["advice"] = ["take the remaining infeed in light passes"]
    r["notes"] = ["helix correction applied (telecentric view assumed)"]
    return r


@pytest.mark.chromium
@pytest.mark.skipif(not os.path.exists(CHROMIUM), reason="needs /usr/bin/chromium")
def test_full_sheet_prints_on_one_a4_page(tmp_path):
    html_path = tmp_path / "sheet.html"
    img = np.full((750, 1000), 0.85)
    img[200:550, :] = 0.1
    write_sheet(html_path, _full_result(), encode_png(draw_overlays(img, [])))
    pdf = tmp_path / "sheet.pdf"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
           "--no-first-run", "--disable-background-networking", "--disable-component-update",
           "--disable-sync", f"--user-data-dir={tmp_path / 'profile'}",
           "--no-pdf-header-footer", f"--print-to-pdf={pdf}", html_path.as_uri()]
    subprocess.run(cmd, capture_output=True, timeout=90, check=False)
    assert pdf.exists(), "chromium wrote no PDF"
    pages = re.findall(rb"/Type\s*/Page[^s]", pdf.read_bytes())  # page objects (ISO 32000-1 7.7.3.3)
    assert len(pages) == 1
