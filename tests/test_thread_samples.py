"""The bundled thread samples (sample_images/, rendered helical outlines of invented boiler
stays) give the verdict the scenario states, with the demo bench calibration (the failing
sample and the others are run by benchmarks/thread_accuracy.py).

Limits: ISO 965-1 table values of M6x1-6g (d2 5.212..5.324, d 5.794..5.974;
../shared/standards-notes.md section 11); the samples' truth pitch diameters are 5.268
(pass) and 5.324 (on the limit: undecided under the ISO 14253-1 rule).
"""

import json
from pathlib import Path

import pytest

from profilecheck.calibration import load_calibration
from profilecheck.measure import measure_thread

ROOT = Path(__file__).resolve().parents[1]


@pytest.mark.parametrize("name,expect", [("stay_pass", "pass"), ("stay_undecided", "undecided")])
def test_sample_verdicts(name, expect):
    img = ROOT / "sample_images" / f"{name}.png"
    cal = ROOT / "calibration" / "bench_cam.json"
    if not img.is_file() or not cal.is_file():
        pytest.skip("sample images or the bench calibration are not generated yet")
    truth = json.loads((ROOT / "sample_images" / f"{name}.truth.json").read_text())
    r = measure_thread(str(img), load_calibration(cal), spec="M6x1-6g")
    assert r.verdict == expect
    pd = r.measurements["pitch_diameter"]
    assert abs(pd.value - truth["measurements"]["pitch_diameter"]) <= pd.u
