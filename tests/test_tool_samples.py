"""The demo tool samples measure as their truth files say and give the expected verdict.

Truth: the outline geometry written beside each sample (``scenario.tool``); limits of
1/4-40 UNS-2A from profilecheck.standards (ASME B1.1 UN external root, standards-notes 10).
"""

import pytest

from profilecheck.calibration import Calibration
from profilecheck.measure.tool import measure_tool
from profilecheck.scenario import CLOSE_CAMERA
from profilecheck.scenario.tool import SAMPLES, render_sample


@pytest.mark.parametrize("name", ["tool_wide_lopsided"])
def test_sample_measures_its_truth_and_verdict(name):
    _, outline, rot, expect, _ = next(s for s in SAMPLES if s[0] == name)
    img, truth = render_sample(outline, rot, seed=1)
    cal = Calibration(CLOSE_CAMERA["mm_per_px"], 0.0, CLOSE_CAMERA["image_size"])
    r = measure_tool(img, cal, spec=truth["spec"])
    t = truth["measurements"]
    for k in ("included_angle", "half_left", "half_right", "bisector_tilt"):
        assert r.measurements[k].value == pytest.approx(t[k], abs=0.1)
    assert r.measurements["tip_flat"].value == pytest.approx(t["tip_flat"], abs=0.003)
    assert r.verdict == expect
