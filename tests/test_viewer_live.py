"""The live camera path under pytest-qt: frames from a fake source (synthetic renders, then an
abrupt end) reach the screen, the height job measures them continuously off the GUI thread,
the frame rate shows, and a lost camera gives a message and a Reconnect button, not a freeze.
The library is ScriptedBackend here (wiring only); test_viewer_library.py uses the real one."""


import numpy as np
import pytest

pytest.importorskip("pytestqt")

from profilecheck.calibration import Calibration  # noqa: E402
from profilecheck.synth import Camera, render  # noqa: E402
from profilecheck.viewer._testing import ScriptedBackend  # noqa: E402
from profilecheck.viewer.frames import CameraLost, SequenceSource  # noqa: E402
from profilecheck.viewer.model import ViewerModel  # noqa: E402
from profilecheck.viewer.window import MainWindow  # noqa: E402

W, H = 320, 240


def _frames(n):
    cam = Camera(mm_per_px=0.02, image_size=(W, H))
    out = []
    for i in range(n):  # a 60 deg point moving 0.02 mm per frame
        y0 = -1.0 + 0.02 * i
        tri = np.array([[-2.0, y0 - 2.0], [2.0, y0 - 2.0], [0.0, y0 + 1.464]])
        out.append(render([tri], cam, seed=i)[0])
    return out


FRAMES = _frames(6)


@pytest.fixture
def live_win(qtbot):
    made = []

    def factory():
        s = SequenceSource(FRAMES * 5, label="cam A", fps=60.0)
        made.append(s)
        return s
    cal = Calibration(mm_per_px=0.02, u_mm_per_px=1e-5, image_size=(W, H), label="cam B")
    # +/-0.1 mm centre-height allowance: common practice, no source.
    backend = ScriptedBackend(values={"height": {"height_offset": (0.02, 0.01, "mm", -0.1, 0.1)}})
    w = MainWindow(ViewerModel(), backend, source_factory=factory)
    w.model.set_calibration(cal)
    w.model.set_mode("height")
    qtbot.addWidget(w)
    w.show()
    w.made = made
    yield w
    w.stop_camera()
    w.close()


def test_live_frames_measurements_rate_and_loss(qtbot, live_win):
    w = live_win
    assert not w.camera_panel.safety_label.isVisible()
    with qtbot.waitSignal(w.live.measured, timeout=10000):
        w.camera_panel.start_button.click()
    assert w.model.camera_state == "live"
    assert w.camera_panel.safety_label.isVisible()          # shown where the live view starts
    assert "spindle stopped" in w.camera_panel.safety_label.text()
    assert w.model.raw_frame is not None and w.model.raw_frame.shape == (H, W)
    assert w.readings_panel.table.rowCount() == 1            # the height reading
    assert any("'cam A'" in s and "'cam B'" in s for s in w.model.warnings)
    # the GUI thread stays free while frames arrive: a timer on it keeps firing
    ticks = []
    from PyQt5.QtCore import QTimer
    t = QTimer()
    t.timeout.connect(lambda: ticks.append(1))
    t.start(10)
    with qtbot.waitSignal(w.live.lost, timeout=10000):
        pass
    t.stop()
    assert len(ticks) >= 5
    n_calls = sum(1 for c in w.backend.calls if c[0] == "height")
    assert n_calls >= 2                                       # measured continuously
    assert w.live.frames_shown >= 2
    # the abrupt end: a message and Reconnect, no freeze
    qtbot.waitUntil(lambda: w.camera_panel.reconnect_button.isVisible(), timeout=2000)
    assert w.model.camera_state == "lost"
    assert "stopped sending pictures" in w.camera_panel.message_label.text()
    assert not w.camera_panel.stop_button.isVisible()
    with qtbot.waitSignal(w.live.measured, timeout=10000):
        w.camera_panel.reconnect_button.click()
    assert w.model.camera_state == "live" and len(w.made) == 2


def test_rate_readout_while_live(qtbot, live_win):
    w = live_win
    w.live.source_factory = lambda: SequenceSource(FRAMES, label="cam A", fps=60.0, loop=True,
                                                   count=240)
    w.start_camera()
    qtbot.waitUntil(lambda: "frames/s" in w.camera_panel.fps_label.text()
                    and "measured/s" in w.camera_panel.fps_label.text()
                    and "\u2026" not in w.camera_panel.fps_label.text(), timeout=5000)
    rate = w.model.fps
    assert 10.0 < rate < 90.0     # the source is paced at 60 frames/s


def test_no_measurement_outside_the_height_job(qtbot, live_win):
    w = live_win
    w.model.set_mode("thread")
    w.start_camera()
    with qtbot.waitSignal(w.live.lost, timeout=10000):
        pass
    assert not [c for c in w.backend.calls if c[0] == "height"]
    assert w.model.outcome is None


def test_camera_that_cannot_open(qtbot):
    def factory():
        raise CameraLost("no camera answers as number 3")
    w = MainWindow(ViewerModel(), ScriptedBackend(), source_factory=factory)
    qtbot.addWidget(w)
    assert w.start_camera() is False
    assert w.model.camera_state == "lost"
    assert "no camera answers" in w.camera_panel.message_label.text()


def test_live_measurement_error_clears_the_numbers(qtbot, live_win):
    w = live_win
    w.backend.fail["height"] = "no tool point in view"
    w.start_camera()
    qtbot.waitUntil(lambda: "no tool point in view" in w.status_label.text(), timeout=5000)
    assert w.model.outcome is None and w.readings_panel.table.rowCount() == 0
