"""The viewer's Qt-free parts: model events, set-up warnings, readings, jobs, live pipeline,
saving. No Qt is imported here."""

import json
import sys
import threading

import numpy as np
import pytest

from profilecheck.calibration import Calibration
from profilecheck.errors import MeasurementError, ProfilecheckError
from profilecheck.viewer._testing import ScriptedBackend
from profilecheck.viewer.frames import CameraLost, SequenceSource, to_unit_grey
from profilecheck.viewer.jobs import JobOutcome, run_job
from profilecheck.viewer.live import LivePipeline, RateMeter
from profilecheck.viewer.model import JobParams, ViewerModel
from profilecheck.viewer.readings import inch_text, mm_text, reading_rows

# M6x1-6g pitch diameter limits: basic d2 = 5.350 mm, es = -0.026 mm, Td2(6) = 0.112 mm
# (ISO 965-1:2013 tables for P = 1 mm, d over 5.6 to 11.2) -> 5.212 ... 5.324 mm.
D2_MIN, D2_MAX = 5.212, 5.324


def _cal(w=64, h=48, label=""):
    return Calibration(mm_per_px=0.01, u_mm_per_px=1e-5, image_size=(w, h), label=label)


def test_model_is_qt_free_in_a_fresh_interpreter():
    import subprocess
    code = ("import sys, profilecheck.viewer.model, profilecheck.viewer.jobs, "
            "profilecheck.viewer.live, profilecheck.viewer.save, profilecheck.viewer.readings; "
            "print('PyQt5' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_events_fire_once_per_change_and_unsubscribe_works():
    m = ViewerModel()
    seen = []
    off = m.subscribe("mode", lambda: seen.append(m.mode))
    m.set_mode("tool")
    m.set_mode("tool")  # no change, no event
    m.set_mode("height")
    off()
    m.set_mode("thread")
    assert seen == ["tool", "height"]
    with pytest.raises(ValueError, match="mode"):
        m.set_mode("grind")
    with pytest.raises(ValueError, match="event"):
        m.subscribe("nothing", lambda: None)


def test_params_validation_names_the_parameter():
    with pytest.raises(ValueError, match="gauge_size_mm"):
        JobParams(gauge_size_mm=-1.0)
    with pytest.raises(ValueError, match="reference"):
        JobParams(reference="laser")


def test_size_mismatch_and_camera_label_warnings():
    m = ViewerModel()
    m.set_image(np.zeros((48, 64)))
    assert any("No calibration" in w for w in m.warnings)
    m.set_calibration(_cal(64, 48, label="bench"))
    assert m.warnings == ()
    m.set_image(raw=np.zeros((720, 1280), np.uint8))  # a frame of another size
    assert any("1280 x 720" in w and "64 x 48" in w for w in m.warnings)
    m.set_camera("live", label="other cam")
    assert any("'other cam'" in w and "'bench'" in w for w in m.warnings)


def test_raw_frame_becomes_unit_grey_on_demand():
    raw = np.array([[0, 255], [51, 102]], np.uint8)
    m = ViewerModel()
    m.set_image(raw=raw)
    # 8-bit scaled by 1/255 (docs/conventions.md)
    np.testing.assert_allclose(m.image, [[0, 1], [0.2, 0.4]], rtol=0, atol=1e-12)
    assert m.image_size == (2, 2)


def test_bgr_to_grey_uses_rec601_weights():
    # Rec. 601 luma: Y = 0.299 R + 0.587 G + 0.114 B (ITU-R BT.601); OpenCV order is B, G, R.
    px = np.array([[[255, 0, 0], [0, 255, 0], [0, 0, 255]]], np.uint8)
    np.testing.assert_allclose(to_unit_grey(px)[0], [0.114, 0.587, 0.299], rtol=0, atol=1e-12)
    assert to_unit_grey(np.array([[65535]], np.uint16))[0, 0] == 1.0


def test_inch_and_angle_text():
    # 1 in = 25.4 mm exactly (international inch, 1959): 5.300 mm = 0.208661 in.
    assert inch_text(5.300, 0.0254) == "0.20866 \u00b1 0.00100 in"
    assert mm_text(5.300, 0.004) == "5.3000 \u00b1 0.0040 mm"
    # U quoted to two significant digits (JCGM 100:2008 7.2.6): more decimals for a small U
    assert mm_text(1.000003, 0.000015) == "1.000003 \u00b1 0.000015 mm"
    # 29.95 deg = 29 deg 57.0 min; 0.1 deg = 6.0 min (60 min per degree).
    assert inch_text(29.95, 0.1, "deg") == "29\u00b0 57.0' \u00b1 6.0'"


def test_reading_rows_carry_limits_and_verdict_words():
    b = ScriptedBackend(values={"thread": {
        "pitch": (1.0003, 0.0020, "mm", None, None),
        "pitch_diameter": (5.300, 0.010, "mm", D2_MIN, D2_MAX),   # inside with U: pass
        "major_diameter": (5.320, 0.010, "mm", D2_MIN, D2_MAX)}}) # straddles the max: undecided
    out = run_job(b, "thread", np.zeros((10, 12)), _cal(), JobParams())
    rows = {r.key: r for r in reading_rows(out.report)}
    assert rows["pitch"].verdict == "none" and rows["pitch"].limits == ""
    assert rows["pitch_diameter"].verdict_text.endswith("PASS")
    assert rows["major_diameter"].verdict_text.endswith("UNDECIDED")
    assert "5.2120 \u2026 5.3240 mm" in rows["pitch_diameter"].limits
    assert out.verdict == "undecided"   # ISO 14253-1 rule: any undecided check


def test_run_job_needs_calibration_and_gauge_size():
    b = ScriptedBackend()
    with pytest.raises(ProfilecheckError, match="no calibration"):
        run_job(b, "thread", np.zeros((4, 4)), None, JobParams())
    with pytest.raises(ProfilecheckError, match="pin gauge"):
        run_job(b, "calibrate", np.zeros((4, 4)), None, JobParams())
    with pytest.raises(ValueError, match="mode"):
        run_job(b, "polish", np.zeros((4, 4)), None, JobParams())
    b.calibration = _cal()
    out = run_job(b, "calibrate", np.zeros((4, 4)), None,
                  JobParams(gauge_kind="block", gauge_size_mm=10.0, camera_label="bench"))
    assert out.calibration.label == "bench" and out.report["kind"] == "calibration"
    assert ("calibrate", "block", 10.0, "bench") in b.calls


def test_outcome_sets_calibration_and_clears_on_new_picture():
    m = ViewerModel()
    m.set_image(np.zeros((4, 4)))
    cal = _cal(4, 4)
    m.set_outcome(JobOutcome("calibrate", {"kind": "calibration"}, (), (), calibration=cal))
    assert m.calibration is cal and m.outcome is not None
    m.set_image(np.ones((4, 4)))
    assert m.outcome is None and m.calibration is cal


def test_rate_meter_counts_events_per_second():
    r = RateMeter(window_s=10.0)
    for i in range(11):
        r.tick(100.0 + i * 0.05)   # 11 events 50 ms apart = 20 per second
    assert r.rate(now=100.5) == pytest.approx(20.0, rel=1e-9)
    assert np.isnan(RateMeter().rate())


def test_sequence_source_ends_abruptly():
    s = SequenceSource([np.zeros((2, 2), np.uint8)] * 2)
    s.open()
    s.read(); s.read()
    with pytest.raises(CameraLost, match="stopped"):
        s.read()


def test_live_pipeline_measures_and_reports_the_loss():
    frames = [np.full((30, 40), v, np.uint8) for v in range(10, 60)]
    got, results, lost = [], [], threading.Event()
    msgs = []
    pipe = LivePipeline(SequenceSource(frames, fps=400.0), on_frame=got.append,
                        on_lost=lambda m: (msgs.append(m), lost.set()),
                        measure=lambda f: int(f[0, 0]), on_result=lambda r, f: results.append(r))
    pipe.start()
    assert lost.wait(10.0)
    pipe.stop()
    assert len(got) == 50 and [int(f[0, 0]) for f in got] == list(range(10, 60))
    assert results and results == sorted(results)   # newest-first dropping keeps order
    assert set(results) <= set(range(10, 60))
    assert "stopped sending" in msgs[0] and not pipe.running


def test_live_pipeline_survives_a_measurement_error():
    errs, lost = [], threading.Event()

    def bad(_f):
        raise MeasurementError("tool point not found")
    pipe = LivePipeline(SequenceSource([np.zeros((4, 4), np.uint8)] * 5, fps=200.0),
                        on_frame=lambda f: None, on_lost=lambda m: lost.set(), measure=bad,
                        on_error=lambda m, f: errs.append(m))
    pipe.start()
    assert lost.wait(10.0)
    pipe.stop()
    assert errs and errs[0] == "tool point not found"


def test_save_writes_picture_raw_json_and_sheet(tmp_path):
    from profilecheck.viewer.save import save_outcome
    b = ScriptedBackend(values={"height": {"height_offset": (0.05, 0.01, "mm", -0.1, 0.1)}})
    raw = np.full((48, 64), 200, np.uint8)
    img = to_unit_grey(raw)
    out = run_job(b, "height", img, _cal(), JobParams(), image_name="frame.png")
    saved = save_outcome(tmp_path / "job1", out, raw, img)
    rep = json.loads(saved.json.read_text())
    assert rep["measurements"]["height_offset"]["value"] == 0.05
    assert rep["verdict"]["overall"] == "pass"   # 0.05 +/- 0.01 inside +/-0.1
    import cv2
    back = cv2.imread(str(saved.raw), cv2.IMREAD_UNCHANGED)
    assert back.dtype == np.uint8 and np.array_equal(back, raw)
    ann = cv2.imread(str(saved.annotated))
    assert ann.shape[:2] == (48, 64) and not np.all(ann == ann[0, 0])  # overlays drawn
    if saved.sheet is not None:
        assert "<html" in saved.sheet.read_text().lower()


def test_save_refuses_missing_folder_and_writes_nothing(tmp_path):
    from profilecheck.viewer.save import save_outcome
    b = ScriptedBackend(values={"height": {"height_offset": (0.05, 0.01, "mm", None, None)}})
    img = np.zeros((8, 8))
    out = run_job(b, "height", img, _cal(8, 8), JobParams())
    with pytest.raises(ProfilecheckError, match="does not exist"):
        save_outcome(tmp_path / "nope" / "x", out, img, img)
    assert list(tmp_path.iterdir()) == []


def test_camera_that_is_not_there_is_a_message_not_a_crash():
    from profilecheck.viewer.frames import CameraSource
    src = CameraSource(63)   # no such device on a test machine
    with pytest.raises(CameraLost, match="no camera answers as number 63"):
        src.open()
    with pytest.raises(ValueError, match="index"):
        CameraSource(-1)


def test_view_command_refuses_a_missing_folder_with_exit_2(tmp_path, capsys):
    from profilecheck.cli import main
    code = main(["view", "--screenshot", str(tmp_path / "no" / "shot.png")])
    err = capsys.readouterr().err
    assert code == 2 and "does not exist" in err and len(err.strip().splitlines()) == 1


def test_view_command_reads_gauge_sizes_with_units():
    from profilecheck.cli import build_parser
    args = build_parser().parse_args(["view", "pin.png", "--pin", "0.25in", "--cal", "c.json",
                                      "--run-mode", "calibrate", "--screenshot", "s.png"])
    assert args.image == "pin.png" and args.pin == "0.25in" and args.run_mode == "calibrate"
    from profilecheck.units import parse_length
    assert parse_length(args.pin) == pytest.approx(6.35, abs=1e-12)  # 1 in = 25.4 mm exactly


def test_scale_reads_in_ppm():
    # 0.01 mm/px with U = 5.5e-7 mm/px is 55 ppm; 0.01 mm = 0.000393701 in (/ 25.4).
    assert mm_text(0.01, 5.5e-7, "mm/px") == "0.0100000 mm/px \u00b1 55 ppm"
    assert inch_text(0.01, 5.5e-7, "mm/px") == "0.00039370 in/px"
