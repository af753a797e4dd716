"""The `check` and `log` subcommands and the shared output helper, end to end.

The drift case: a pin rendered (profilecheck.synth, exact geometry) at a scale 0.5 % off the
calibrated one, as a camera nudged in zoom would see it, must read a scale error of -0.5 %
(analytic: D_read / D = s_cal / s_render - 1 = 1/1.005 - 1 = -0.4975 %) and exit 1.
"""

from __future__ import annotations

import argparse
import json
from dataclasses import dataclass, field

import cv2
import numpy as np
import pytest

from profilecheck import cli
from profilecheck.commands.check import evaluate_check
from profilecheck.log import InspectionLog
from profilecheck.overlays import Segment
from profilecheck.report.csv import read_readings_csv
from profilecheck.report.outputs import (add_output_arguments, add_standard_outputs,
                                         auto_scale_bar, prepare_outputs)

synth = pytest.importorskip("profilecheck.synth")
gauges = pytest.importorskip("profilecheck.calibration.gauges")

PIN_MM = 2.0
SIZE = (400, 300)


def _pin_image(mm_per_px: float, seed: int) -> np.ndarray:
    cam = synth.Camera(mm_per_px=mm_per_px, image_size=SIZE, rotation_deg=4.0)
    half = PIN_MM / 2
    poly = np.array([[-3.0, -half], [3.0, -half], [3.0, half], [-3.0, half]])  # ends out of view
    img, _ = synth.render([poly], cam, blur_px=1.0, noise=2.0, seed=seed, supersample=4)
    return img


@pytest.fixture(scope="module")
def bench(tmp_path_factory):
    from profilecheck.calibration import Calibration, save_calibration

    d = tmp_path_factory.mktemp("bench")
    # The calibration is the render's own truth: 0.010 mm/px exactly (synth.Camera), with a
    # stated scale uncertainty of 0.05 % (k = 2) as a pin calibration of this size gives.
    cal = Calibration(mm_per_px=0.01, u_mm_per_px=0.01 * 5e-4, image_size=SIZE,
                      gauge={"kind": "pin", "size_mm": PIN_MM, "u_mm": 0.001},
                      created="2026-12-01T08:00:00+00:00", scale_absorbs_offset=True)
    save_calibration(cal, d / "cal.json")
    cv2.imwrite(str(d / "same.png"), _pin_image(0.01, 2))
    cv2.imwrite(str(d / "zoomed.png"), _pin_image(0.01 * 1.005, 3))
    return d


def test_evaluate_check_en_rule():
    # E_n = |e| / U (ISO 13528): 0.1 % error with U 0.15 % is consistent; 0.2 % is drift.
    ok = evaluate_check(2.002, 0.003, 2.000)
    assert ok["scale_error"] == pytest.approx(0.001, abs=1e-12) and not ok["drift"]
    assert ok["en"] == pytest.approx(0.001 / 0.0015)
    bad = evaluate_check(2.004, 0.003, 2.000)
    assert bad["drift"] and bad["en"] == pytest.approx(0.002 / 0.0015)
    # the pin's own uncertainty widens the allowance in quadrature (GUM 5.1.2)
    wide = evaluate_check(2.004, 0.003, 2.000, 0.004)
    assert wide["u_scale"] == pytest.approx(0.005 / 2.0) and not wide["drift"]
    with pytest.raises(ValueError, match="nominal_mm"):
        evaluate_check(2.0, 0.001, 0.0)


def test_check_passes_on_unchanged_setup_and_logs(bench, capsys):
    log = bench / "shop.db"
    code = cli.main(["check", str(bench / "same.png"), "--cal", str(bench / "cal.json"),
                     "--pin", "2.000mm", "--pin-u", "1um", "--log", str(log),
                     "--json", str(bench / "same.json")])
    out = capsys.readouterr().out
    assert code == 0, out
    assert "scale error" in out and "PASS" in out
    d = json.loads((bench / "same.json").read_text())
    assert abs(d["measurements"]["scale_error"]["value"]) < d["verdict"]["checks"][0]["max"]
    with InspectionLog(log) as lg:
        hist = lg.standard_checks()
    assert len(hist) == 1 and not hist[0]["drift"]


def test_check_warns_and_exits_1_on_drift(bench, capsys):
    log = bench / "shop.db"
    code = cli.main(["check", str(bench / "zoomed.png"), "--cal", str(bench / "cal.json"),
                     "--pin", "2.000mm", "--log", str(log), "--sheet", str(bench / "z.html"),
                     "--csv", str(bench / "z.csv")])
    cap = capsys.readouterr()
    assert code == 1
    assert "FAIL" in cap.out and "bumped, refocused or zoomed" in cap.err
    with InspectionLog(log) as lg:
        last = lg.standard_checks()[-1]
    # analytic: 1/1.005 - 1 = -0.4975 %; the edge fits hold it to a few hundredths of a %
    assert last["drift"]
    assert last["scale_error"] == pytest.approx(1 / 1.005 - 1, abs=2e-4)
    assert "recalibrate" in (bench / "z.html").read_text()
    rows = read_readings_csv(bench / "z.csv")
    assert [r["result"] for r in rows if r["quantity"] == "scale_error"] == ["fail"]


def test_check_bad_input_exit_2_no_output(bench, capsys, tmp_path):
    out = tmp_path / "r.json"
    code = cli.main(["check", str(bench / "same.png"), "--cal", str(tmp_path / "nope.json"),
                     "--pin", "2mm", "--json", str(out)])
    assert code == 2 and not out.exists()
    code = cli.main(["check", str(bench / "same.png"), "--cal", str(bench / "cal.json"),
                     "--pin", "2", "--json", str(out)])
    assert code == 2 and not out.exists()
    assert "unit" in capsys.readouterr().err


def test_log_command_list_show_export(bench, capsys, tmp_path):
    log = tmp_path / "shop.db"
    with InspectionLog(log) as lg:
        lg.record({"kind": "thread", "spec": {"designation": "M6x1-6g"},
                   "measurements": {"pitch": {"value": 1.0003, "u": 0.0021, "unit": "mm"}},
                   "verdict": {"overall": "none", "checks": []}}, job="stay bolt",
                  image_path=bench / "same.png")
    assert cli.main(["log", str(log)]) == 0
    out = capsys.readouterr().out
    assert "stay bolt" in out and "M6x1-6g" in out
    assert cli.main(["log", str(log), "show", "1"]) == 0
    out = capsys.readouterr().out
    assert "sha256" in out and "1.0003 mm" in out and "0.039382 in" in out
    assert cli.main(["log", str(log), "show", "1", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["job"] == "stay bolt"
    csv_path = tmp_path / "all.csv"
    assert cli.main(["log", str(log), "export", str(csv_path)]) == 0
    assert read_readings_csv(csv_path)[0]["value"] == 1.0003
    assert cli.main(["log", str(log), "show", "7"]) == 2
    assert cli.main(["log", str(log), "show"]) == 2
    assert cli.main(["log", str(tmp_path / "none.db")]) == 2
    assert not (tmp_path / "none.db").exists()


@dataclass(frozen=True)
class _FakeResult:
    overlays: tuple = (Segment((10.0, 150.0), (390.0, 150.0), "fit"),)
    d: dict = field(default_factory=lambda: {
        "kind": "tool", "calibration": {"mm_per_px": 0.01},
        "measurements": {"tip_flat": {"value": 0.158, "u": 0.004, "unit": "mm"}},
        "verdict": {"overall": "none", "checks": []}, "warnings": []})

    def to_dict(self):
        return dict(self.d)


def test_add_standard_outputs_writes_all_only_on_commit(tmp_path):
    p = argparse.ArgumentParser()
    p.add_argument("image")
    add_output_arguments(p)
    names = ("r.json", "r.png", "r.html", "r.csv", "r.db")
    args = p.parse_args(["part.png", "--json", str(tmp_path / names[0]), "--annotate",
                         str(tmp_path / names[1]), "--sheet", str(tmp_path / names[2]),
                         "--csv", str(tmp_path / names[3]), "--log", str(tmp_path / names[4]),
                         "--job", "tool 7"])
    outputs = prepare_outputs(args)
    img = np.full((300, 400), 0.85)
    add_standard_outputs(outputs, args, _FakeResult(), img)
    assert not any((tmp_path / n).exists() for n in names)  # nothing before commit
    outputs.commit()
    assert all((tmp_path / n).exists() for n in names)
    assert json.loads((tmp_path / "r.json").read_text())["job"] == "tool 7"
    png = cv2.imread(str(tmp_path / "r.png"))
    assert png.shape == (300, 400, 3)
    assert np.all(png[-40:, :90] < 250, axis=2).any()  # a scale bar was added lower left
    with InspectionLog(tmp_path / "r.db") as lg:
        assert lg.list()[0]["job"] == "tool 7"
    bad = p.parse_args(["x.png", "--sheet", str(tmp_path / "no" / "s.html")])
    from profilecheck.errors import ProfilecheckError

    with pytest.raises(ProfilecheckError, match="does not exist"):
        prepare_outputs(bad)


def test_auto_scale_bar_round_lengths():
    # 0.01 mm/px, 400 px wide: a fifth is 0.8 mm -> 0.5 mm bar = 50 px (1-2-5 series)
    bar = auto_scale_bar(0.01, 400)
    assert bar.length_mm == pytest.approx(0.5) and bar.length_px == pytest.approx(50.0)
    assert auto_scale_bar(0.01, 1600).length_mm == pytest.approx(2.0)
    assert auto_scale_bar(0.002, 1000).text == "200 \u00b5m"


def test_damaged_log_refused_before_measuring(bench, capsys, tmp_path):
    log = tmp_path / "shop.db"
    log.write_bytes(b"not a database at all" * 50)
    out = tmp_path / "r.json"
    code = cli.main(["check", str(bench / "same.png"), "--cal", str(bench / "cal.json"),
                     "--pin", "2.000mm", "--log", str(log), "--json", str(out)])
    assert code == 2 and not out.exists()
    assert "not a readable inspection log" in capsys.readouterr().err
