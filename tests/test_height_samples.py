"""The demo centre-height samples measure as their truth files say.

Truth: exact outlines of ``scenario.height`` (axis = world y = 0); verdict by the +/-0.1 mm
rule of thumb (common practice, no source; standards-notes section 10).
"""

import pytest

from profilecheck.calibration import Calibration
from profilecheck.measure.height import measure_height
from profilecheck.scenario import LATHE_CAMERA
from profilecheck.scenario.height import SAMPLES, render_sample


@pytest.mark.parametrize("name", ["height_below"])
def test_sample_measures_its_truth_and_verdict(name):
    _, ref, e, slope, rot, expect, _ = next(s for s in SAMPLES if s[0] == name)
    img, truth, _ = render_sample(ref, e, slope, rot, seed=2)
    cal = Calibration(LATHE_CAMERA["mm_per_px"], 0.0, LATHE_CAMERA["image_size"])
    r = measure_height(img, cal, reference=ref)
    assert r.measurements["height_offset"].value == pytest.approx(
        truth["measurements"]["height_offset"], abs=0.002)
    assert r.verdict == expect
