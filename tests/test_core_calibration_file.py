"""The calibration record: JSON round trip, validation, atomic save, image-size refusal."""

import json

import pytest

from profilecheck.calibration import Calibration, Lens, save_calibration, load_calibration
from profilecheck.errors import CalibrationError


def _cal(**kw):
    base = dict(mm_per_px=0.0100, u_mm_per_px=2e-6, image_size=(1600, 1200),
                gauge={"kind": "pin", "size_mm": 6.0, "u_mm": 0.001}, created="2026-12-01T00:00:00Z")
    base.update(kw)
    return Calibration(**base)


def test_round_trip(tmp_path):
    cal = _cal(edge_offset_px=0.3, u_edge_offset_px=0.05,
               lens=Lens(fx_px=5000.0, fy_px=5000.0, cx_px=799.5, cy_px=599.5,
                         dist=(-0.05, 0.0, 0.0, 0.0, 0.0), working_distance_mm=50.0),
               notes=("single pin",))
    p = tmp_path / "c.json"
    save_calibration(cal, p)
    back = load_calibration(p)
    assert back.to_dict() == cal.to_dict()  # NaN fields compare unequal as dataclasses
    assert back.lens.dist == cal.lens.dist and back.image_size == (1600, 1200)
    d = json.loads(p.read_text())
    assert d["image_size"] == [1600, 1200] and d["mm_per_px"] == 0.01


@pytest.mark.parametrize("mutate, words", [
    (lambda d: d.pop("mm_per_px"), "missing key"),
    (lambda d: d.update(mm_per_px="abc"), "must be a number"),
    (lambda d: d.update(mm_per_px=-0.01), "positive"),
    (lambda d: d.update(mm_per_px=0), "positive"),
    (lambda d: d.update(u_mm_per_px=-1), ">= 0"),
    (lambda d: d.update(image_size=[1600]), "image_size"),
    (lambda d: d.update(image_size=[1600.5, 1200]), "image_size"),
])
def test_validation(tmp_path, mutate, words):
    d = _cal().to_dict()
    mutate(d)
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(d))
    with pytest.raises(CalibrationError, match=words):
        load_calibration(p)


def test_non_finite_and_not_json(tmp_path):
    p = tmp_path / "nan.json"
    p.write_text('{"mm_per_px": NaN, "u_mm_per_px": 0, "image_size": [10, 10]}')
    with pytest.raises(CalibrationError, match="finite|positive"):
        load_calibration(p)
    p.write_text("{not json")
    with pytest.raises(CalibrationError, match="not valid JSON"):
        load_calibration(p)
    with pytest.raises(CalibrationError, match="not found"):
        load_calibration(tmp_path / "missing.json")


def test_atomic_save_leaves_old_file_on_failure(tmp_path, monkeypatch):
    p = tmp_path / "c.json"
    save_calibration(_cal(), p)
    before = p.read_text()
    import profilecheck.calibration.model as m

    def boom(*a, **k):
        raise OSError("disk full")
    monkeypatch.setattr(m.os, "replace", boom)
    with pytest.raises(OSError):
        save_calibration(_cal(mm_per_px=0.02), p)
    assert p.read_text() == before
    assert [f.name for f in tmp_path.iterdir()] == ["c.json"]


def test_image_size_refused():
    cal = _cal()
    cal.check_image((1200, 1600))
    with pytest.raises(CalibrationError, match="recalibrate"):
        cal.check_image((1080, 1920))
