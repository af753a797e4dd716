"""Viewer widgets under pytest-qt (offscreen): every job, both ways between model and
widgets. The library is replaced by ScriptedBackend, which answers with given values
decided by the real verdict rule: these tests check the viewer's wiring, not measuring."""

import numpy as np
import pytest

pytest.importorskip("pytestqt")
from PyQt5.QtCore import Qt  # noqa: E402

from profilecheck.calibration import Calibration  # noqa: E402
from profilecheck.viewer._testing import ScriptedBackend  # noqa: E402
from profilecheck.viewer.model import MODES, ViewerModel  # noqa: E402
from profilecheck.viewer.window import MainWindow  # noqa: E402

# M6x1-6g pitch diameter 5.212 ... 5.324 mm (ISO 965-1:2013: d2 = 5.350, es = -0.026,
# Td2 = 0.112 for P = 1, d over 5.6 to 11.2 mm).
D2 = (5.212, 5.324)
# Centre height: +/-0.1 mm is the usual shop allowance (common practice, no source).
HEIGHT = (-0.1, 0.1)

VALUES = {
    "thread": {"pitch": (1.0004, 0.0030, "mm", None, None),
               "pitch_diameter": (5.300, 0.010, "mm", *D2),      # pass
               "flank_left": (30.10, 0.20, "deg", 29.5, 30.5)},  # pass
    "tool": {"included_angle": (61.2, 0.2, "deg", 59.5, 60.5)},  # fail: wholly above
    "height": {"height_offset": (0.095, 0.010, "mm", *HEIGHT)},  # undecided: straddles 0.1
}


@pytest.fixture
def win(qtbot):
    cal = Calibration(mm_per_px=0.005, u_mm_per_px=2e-6, image_size=(160, 120), label="bench")
    backend = ScriptedBackend(values=VALUES, calibration=cal)
    w = MainWindow(ViewerModel(), backend)
    qtbot.addWidget(w)
    w.show()
    w.model.set_image(np.linspace(0, 1, 160 * 120).reshape(120, 160), name="sample")
    w.model.set_calibration(cal)
    yield w
    w.close()


def _run(qtbot, w):
    with qtbot.waitSignal(w.runner.finished, timeout=10000) as blocker:
        qtbot.mouseClick(w.job_panel.run_button, Qt.LeftButton)
    return blocker.args[0]


def test_mode_selector_and_model_follow_each_other(win):
    box = win.job_panel.mode_box
    for i, m in enumerate(MODES):
        box.setCurrentIndex(i)               # widget -> model
        assert win.model.mode == m
        assert win.job_panel.stack.currentIndex() == i
    win.model.set_mode("tool")               # model -> widget
    assert box.currentData() == "tool" and win.job_panel.stack.currentIndex() == 2


def test_calibrate_mode_asks_for_gauge_and_size(qtbot, win):
    win.model.set_mode("calibrate")
    p = win.job_panel
    p.gauge_box.setCurrentIndex(1)                         # widget -> model
    assert win.model.params.gauge_kind == "block"
    p.size_unit.setCurrentText("in")
    p.size_spin.setValue(0.25)
    assert win.model.params.gauge_size_mm == pytest.approx(6.35, abs=1e-12)  # 1 in = 25.4 mm
    qtbot.keyClicks(p.label_edit, "bench")
    assert win.model.params.camera_label == "bench"
    win.model.set_params(gauge_kind="lines", gauge_size_mm=0.5)   # model -> widget
    assert p.gauge_box.currentData() == "lines"
    assert p.size_spin.value() == pytest.approx(0.5 / 25.4, abs=1e-4)
    win.model.set_calibration(None)
    out = _run(qtbot, win)
    assert out.mode == "calibrate" and win.model.calibration is out.calibration
    assert "0.005000 mm/px" in win.readings_panel.calibration_label.text()
    assert "CALIBRATED" in win.readings_panel.overall_label.text()


def test_thread_mode_shows_values_in_mm_and_inch_with_verdicts(qtbot, win):
    win.model.set_mode("thread")
    qtbot.keyClicks(win.job_panel.thread_spec_edit, "M6x1-6g")
    assert win.model.params.designation == "M6x1-6g"
    _run(qtbot, win)
    t = win.readings_panel.table
    cells = {t.item(r, 0).data(Qt.UserRole): [t.item(r, c).text() for c in range(5)]
             for r in range(t.rowCount())}
    assert cells["pitch_diameter"][1] == "5.3000 \u00b1 0.0100"
    assert cells["pitch_diameter"][2] == "0.20866 \u00b1 0.00039"   # / 25.4
    assert cells["flank_left"][1] == "30.10 \u00b1 0.20\u00b0"
    assert cells["pitch_diameter"][3] == "5.2120 \u2026 5.3240\n0.20520 \u2026 0.20961"
    assert cells["pitch_diameter"][4] == "\u2714 PASS"
    assert cells["pitch"][4] == ""  # no limit, no verdict
    assert "PASS" in win.readings_panel.overall_label.text()
    assert ("spec", "M6x1-6g") in win.backend.calls
    # the overlays of the result are on the canvas
    assert len(win.canvas.overlay_items) == 4


def test_tool_mode_fail_in_words_and_colour(qtbot, win):
    win.model.set_mode("tool")
    win.job_panel.internal_box.click()
    assert win.model.params.internal is True
    _run(qtbot, win)
    t = win.readings_panel.table
    item = t.item(0, 4)
    assert item.text() == "\u2716 FAIL"
    assert item.background().color().name() == "#e8871e"
    assert "FAIL" in win.readings_panel.overall_label.text()


def test_height_mode_undecided_and_reference_choice(qtbot, win):
    win.model.set_mode("height")
    win.job_panel.reference_box.setCurrentIndex(1)
    assert win.model.params.reference == "bar"
    win.model.set_params(reference="line")
    assert win.job_panel.reference_box.currentData() == "line"
    win.model.set_params(reference="point")
    _run(qtbot, win)
    assert win.readings_panel.table.item(0, 4).text() == "? UNDECIDED"


def test_busy_indicator_while_the_job_runs_off_the_gui_thread(qtbot, win):
    win.backend.delay_s = 5.0
    win.backend.release.clear()
    win.model.set_mode("thread")
    qtbot.mouseClick(win.job_panel.run_button, Qt.LeftButton)
    # the GUI thread is free: the busy bar shows and the button is off until the job ends
    qtbot.waitUntil(lambda: win.job_panel.busy_bar.isVisible(), timeout=2000)
    assert not win.job_panel.run_button.isEnabled() and win.model.busy
    with qtbot.waitSignal(win.runner.finished, timeout=10000):
        win.backend.release.set()
    assert not win.job_panel.busy_bar.isVisible() and win.job_panel.run_button.isEnabled()


def test_a_failed_job_gives_a_message_and_no_numbers(qtbot, win):
    win.backend.fail["thread"] = "fewer than 3 whole teeth in view: move the camera out"
    win.model.set_mode("thread")
    with qtbot.waitSignal(win.runner.failed, timeout=10000):
        qtbot.mouseClick(win.job_panel.run_button, Qt.LeftButton)
    assert win.readings_panel.table.rowCount() == 0
    assert "fewer than 3 whole teeth" in win.status_label.text()


def test_quality_warnings_in_plain_words(qtbot, win):
    win.backend.warnings["height"] = ("The picture is slightly out of focus.",)
    win.model.set_mode("height")
    _run(qtbot, win)
    assert "out of focus" in win.readings_panel.warnings_label.text()
    win.model.set_image(np.zeros((50, 60)))  # another size than the calibration
    assert "recalibrate" in win.readings_panel.warnings_label.text()


def test_zoom_and_fit(win):
    c = win.canvas
    c.set_zoom(4.0)
    assert c.zoom == pytest.approx(4.0)
    c.zoom_by(1)
    assert c.zoom == pytest.approx(5.0)  # one step = x1.25
    c.fit_to_window()
    vp = c.viewport().size()
    assert 160 * c.zoom <= vp.width() + 1 and 120 * c.zoom <= vp.height() + 1


def test_save_from_the_window(qtbot, win, tmp_path):
    win.model.set_mode("height")
    _run(qtbot, win)
    saved = win.save_results(tmp_path / "h1")
    assert saved is not None and saved.json.exists() and saved.raw.exists()
    assert "Saved h1.png" in win.status_label.text()


def test_line_reference_needs_an_axis_file(qtbot, win):
    win.model.set_mode("height")
    win.model.set_params(reference="line")
    assert win.job_panel.axis_row.isEnabled()
    with qtbot.waitSignal(win.runner.failed, timeout=10000):
        qtbot.mouseClick(win.job_panel.run_button, Qt.LeftButton)
    assert "saved axis file" in win.status_label.text()
    qtbot.keyClicks(win.job_panel.axis_edit, "axis.json")
    assert win.model.params.axis_path == "axis.json"


def test_result_for_a_replaced_picture_is_dropped(qtbot, win):
    win.backend.delay_s = 5.0
    win.backend.release.clear()
    win.model.set_mode("thread")
    qtbot.mouseClick(win.job_panel.run_button, Qt.LeftButton)
    qtbot.waitUntil(lambda: win.model.busy, timeout=2000)
    win.model.set_image(np.zeros((120, 160)), name="another picture")
    with qtbot.waitSignal(win.runner.failed, timeout=10000):
        win.backend.release.set()
    assert win.model.outcome is None and "changed while measuring" in win.status_label.text()


def test_saving_a_calibration_job_writes_the_calibration_file(qtbot, win, tmp_path):
    import json

    from profilecheck.calibration import load_calibration
    win.model.set_mode("calibrate")
    win.model.set_params(gauge_size_mm=6.0)
    _run(qtbot, win)
    saved = win.save_results(tmp_path / "cal_job")
    assert saved is not None and saved.sheet is None      # no job sheet for a calibration
    assert load_calibration(saved.json).mm_per_px == 0.005  # the file loads as a calibration
    assert json.loads(saved.json.read_text())["image_size"] == [160, 120]
    assert win.save_calibration(tmp_path / "bench.json")
    assert win.model.calibration_path == str(tmp_path / "bench.json")
