"""Calibration file: round trip, validation of damaged files, image-size refusal."""

from __future__ import annotations

import json
import math

import pytest

from profilecheck.calibration import (Calibration, Lens, load_calibration, save_calibration,
                                      combine, attach_lens)
from profilecheck.errors import CalibrationError


def _cal(**kw):
    base = dict(mm_per_px=0.0100123, u_mm_per_px=2.1e-6, image_size=(1600, 1200),
                gauge={"kind": "pin", "size_mm": 6.0, "u_mm": 0.001, "width_px": 599.26,
                       "std_width_px": 0.004},
                created="2026-12-01T23:40:00+00:00", label="bench", scale_absorbs_offset=True,
                blur_px=1.21, notes=("one note",))
    base.update(kw)
    return Calibration(**base)


def test_round_trip_keeps_every_field(tmp_path):
    lens = Lens(fx_px=5000.5, fy_px=5000.4, cx_px=799.6, cy_px=600.2,
                dist=(-0.75, 0.05, 0.0, 0.0, 0.0), working_distance_mm=50.06,
                rms_reprojection_px=0.024, u_fx_px=1.5)
    cal = _cal(lens=lens, edge_offset_px=0.12, u_edge_offset_px=0.03)
    p = tmp_path / "c.json"
    save_calibration(cal, p)
    back = load_calibration(p)
    assert back == cal
    d = json.loads(p.read_text())
    # design.md: the file holds these keys, lengths in mm
    for key in ("mm_per_px", "u_mm_per_px", "image_size", "gauge", "created"):
        assert key in d
    assert d["image_size"] == [1600, 1200]


def test_nan_blur_survives_as_null(tmp_path):
    p = tmp_path / "c.json"
    save_calibration(_cal(blur_px=float("nan")), p)
    assert json.loads(p.read_text())["blur_px"] is None
    assert math.isnan(load_calibration(p).blur_px)


def _write(tmp_path, d):
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(d))
    return p


@pytest.mark.parametrize("mutate, words", [
    (lambda d: d.pop("mm_per_px"), "missing key"),
    (lambda d: d.pop("image_size"), "missing key"),
    (lambda d: d.update(mm_per_px="0.01"), "must be a number"),
    (lambda d: d.update(mm_per_px=-0.01), "positive"),
    (lambda d: d.update(mm_per_px=0.0), "positive"),
    (lambda d: d.update(u_mm_per_px=-1e-6), ">= 0"),
    (lambda d: d.update(image_size=[1600]), "image_size"),
    (lambda d: d.update(image_size=[1600.5, 1200]), "image_size"),
    (lambda d: d.update(lens={"fx_px": 10.0}), "lens"),
])
def test_damaged_file_gives_clear_error(tmp_path, mutate, words):
    d = _cal().to_dict()
    mutate(d)
    with pytest.raises(CalibrationError, match=words):
        load_calibration(_write(tmp_path, d))


def test_non_finite_scale_refused(tmp_path):
    p = tmp_path / "bad.json"
    text = json.dumps(_cal().to_dict()).replace('"mm_per_px": 0.0100123', '"mm_per_px": NaN')
    assert "NaN" in text
    p.write_text(text)
    with pytest.raises(CalibrationError, match="mm_per_px"):
        load_calibration(p)


def test_not_json_and_missing_file(tmp_path):
    p = tmp_path / "x.json"
    p.write_text("{ not json")
    with pytest.raises(CalibrationError, match="not valid JSON"):
        load_calibration(p)
    with pytest.raises(CalibrationError, match="not found"):
        load_calibration(tmp_path / "none.json")


def test_image_of_other_size_refused():
    cal = _cal()
    cal.check_image((1200, 1600))
    with pytest.raises(CalibrationError, match="recalibrate"):
        cal.check_image((1600, 1200))  # rows/cols swapped: 1200 x 1600 px image


def test_combine_edge_offset_from_pin_width():
    # Scale from a bias-free standard: 10 um/px exactly; a 6 mm pin reads 601.0 px wide,
    # i.e. 1.0 px more than 600 px, so b = +0.5 px per edge (vision-notes section 4:
    # b = (W - D/s) / 2). Analytic, by hand.
    scale = _cal(mm_per_px=0.01, u_mm_per_px=1e-6, scale_absorbs_offset=False,
                 gauge={"kind": "lines", "size_mm": 0.1})
    pin = _cal(gauge={"kind": "pin", "size_mm": 6.0, "u_mm": 0.0, "width_px": 601.0,
                      "std_width_px": 0.0})
    c = combine(scale, pin)
    assert c.mm_per_px == 0.01
    assert c.edge_offset_px == pytest.approx(0.5, abs=1e-12)
    assert c.width_correction_px() == pytest.approx(-1.0, abs=1e-12)
    # U(b) = 2 * 0.5 * (W * u_s / s) with u_s = 0.5e-6: 2 * 0.5 * 600 * 0.5e-6 / 0.01 = 0.03 px
    assert c.u_edge_offset_px == pytest.approx(0.03, rel=1e-9)
    assert not c.scale_absorbs_offset


def test_combine_refuses_mismatched_setups():
    scale = _cal(scale_absorbs_offset=False, gauge={"kind": "lines", "size_mm": 0.1})
    with pytest.raises(CalibrationError, match="one set-up"):
        combine(scale, _cal(image_size=(800, 600)))
    with pytest.raises(CalibrationError, match="already"):
        combine(_cal(), _cal())
    with pytest.raises(TypeError, match="offset_cal"):
        combine(scale, {"mm_per_px": 0.01})


def test_attach_lens_working_distance_is_focal_times_scale():
    # pinhole: s = Z / f, so Z = f * s = 5000 px * 0.01 mm/px = 50 mm (analytic)
    lens = Lens(fx_px=5000.0, fy_px=5000.0, cx_px=800, cy_px=600)
    c = attach_lens(_cal(mm_per_px=0.01), lens)
    assert c.lens.working_distance_mm == pytest.approx(50.0, rel=1e-12)
    assert not c.telecentric
