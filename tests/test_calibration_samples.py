"""Demo calibration samples: rendered pin images, their truth, and the calibration files the
command line makes from them."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from profilecheck.calibration import load_calibration
from profilecheck.scenario import BENCH_CAMERA, CLOSE_CAMERA, LATHE_CAMERA
import profilecheck.scenario.calibration as samples

ROOT = Path(__file__).resolve().parents[1]


def test_make_samples_small(tmp_path, monkeypatch):
    small = dict(BENCH_CAMERA, image_size=(360, 240), mm_per_px=0.008)
    monkeypatch.setattr(samples, "SAMPLES", (("pin_t", small, 1.0, 2.0, "t_cam.json", "test"),))
    entries = samples.make_samples(tmp_path / "img", cal_dir=tmp_path)
    assert [e["name"] for e in entries] == ["pin_t"]
    e = entries[0]
    assert e["job"] == "calibration" and e["cal"] == "t_cam.json" and e["expect"] == "none"
    # the demo runner calls calibrate_from_<gauge>(image, size_mm, **rest of args)
    args = dict(e["args"])
    assert args.pop("gauge") == "pin" and args.pop("size_mm") == 1.0
    from profilecheck.calibration import calibrate_from_pin
    from profilecheck.imaging import load_image

    again = calibrate_from_pin(load_image(tmp_path / "img" / e["image"]), 1.0, **args)
    assert (tmp_path / "img" / e["image"]).exists()
    truth = json.loads((tmp_path / "img" / e["truth"]).read_text())
    assert truth["gauge"]["diameter_mm"] == 1.0 and truth["camera"]["mm_per_px"] == 0.008
    cal = load_calibration(tmp_path / "t_cam.json")
    assert abs(cal.mm_per_px - 0.008) <= cal.u_mm_per_px
    assert cal.label == "test" and cal.gauge["u_mm"] == pytest.approx(samples.DEMO_PIN_U_MM)
    assert again.mm_per_px == pytest.approx(cal.mm_per_px, rel=1e-12)  # file = library result
    assert truth["mm_per_px"] == 0.008


@pytest.mark.parametrize("name, cam", [("bench_cam.json", BENCH_CAMERA),
                                       ("close_cam.json", CLOSE_CAMERA),
                                       ("lathe_cam.json", LATHE_CAMERA)])
def test_repository_calibrations_hold_the_render_scale(name, cam):
    # The files in calibration/ come from calibrating sample_images/pin_*.png (rendered at
    # the scenario cameras' scales): each must hold its camera's scale within its U.
    path = ROOT / "calibration" / name
    if not path.exists():
        pytest.skip(f"{path} not generated (python -m profilecheck.scenario)")
    cal = load_calibration(path)
    assert abs(cal.mm_per_px - cam["mm_per_px"]) <= cal.u_mm_per_px
    assert cal.image_size == tuple(cam["image_size"])
    assert cal.gauge["kind"] == "pin"
