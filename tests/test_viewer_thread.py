"""The viewer's thread job on a rendered helical M6x1 silhouette, with the real library.

Truth: the picture is the ISO 68-1 basic profile of M6x1 (d = 6.000 mm, P = 1 mm) wound as
a helix and seen square to the axis (profilecheck.synth). Limits: ISO 965-1 6g for M6x1,
major diameter 5.794 ... 5.974 mm (es = -0.026 mm, Td(6) = 0.180 mm), so the basic 6.000 mm
major diameter must show as a FAIL, in words and colour.
"""

import math

import numpy as np
import pytest

pytest.importorskip("pytestqt")
from PyQt5.QtCore import Qt  # noqa: E402

from profilecheck.calibration import Calibration  # noqa: E402
from profilecheck.synth import Camera, render  # noqa: E402
from profilecheck.viewer.jobs import LibraryBackend  # noqa: E402
from profilecheck.viewer.model import ViewerModel  # noqa: E402
from profilecheck.viewer.window import MainWindow  # noqa: E402

helix = pytest.importorskip("profilecheck.synth._helix")
profiles = pytest.importorskip("profilecheck.synth._profiles")

MM_PER_PX, SIZE = 0.0125, (640, 560)


@pytest.fixture(scope="module")
def m6_frame():
    prof = profiles.axial_profile_iso(1.0, 6.0)
    half = 0.5 * math.hypot(*SIZE) * MM_PER_PX + 2.0
    up = helix.limb_outline(prof, 1.0, -half, half, limb="upper", right_hand=True)
    lo = helix.limb_outline(prof, 1.0, -half, half, limb="lower", right_hand=True)
    img, _ = render([np.vstack([up, lo[::-1]])], Camera(MM_PER_PX, SIZE), blur_px=1.2,
                    noise=2.0, supersample=2, seed=0)
    return img


def test_thread_job_shows_the_library_numbers_and_verdicts(qtbot, m6_frame):
    w = MainWindow(ViewerModel(), LibraryBackend())
    qtbot.addWidget(w)
    w.show()
    w.model.set_image(m6_frame / 255.0, raw=m6_frame, name="m6")
    w.model.set_calibration(Calibration(MM_PER_PX, MM_PER_PX * 1e-5, SIZE, blur_px=1.2))
    w.job_panel.mode_box.setCurrentIndex(1)
    assert w.model.mode == "thread"
    qtbot.keyClicks(w.job_panel.thread_spec_edit, "M6x1-6g")
    with qtbot.waitSignal(w.runner.finished, timeout=60000) as blocker:
        qtbot.mouseClick(w.job_panel.run_button, Qt.LeftButton)
    res = blocker.args[0].result
    assert abs(res.measurements["pitch"].value - 1.0) < 0.002      # P = 1 mm (ISO 261)
    assert abs(res.measurements["major_diameter"].value - 6.0) < 0.01
    t = w.readings_panel.table
    rows = {t.item(r, 0).data(Qt.UserRole): [t.item(r, c).text() for c in range(5)]
            for r in range(t.rowCount())}
    d = res.measurements["major_diameter"]
    shown_v, shown_u = (float(x) for x in rows["major_diameter"][1].split(" \u00b1 "))
    assert abs(shown_v - d.value) <= 0.5e-4 and abs(shown_u - d.u) <= 0.5e-4
    assert rows["major_diameter"][3].startswith("5.7940 \u2026 5.9740")
    assert rows["major_diameter"][4] == "\u2716 FAIL"
    assert t.item(list(rows).index("major_diameter"), 4).background().color().name() == "#e8871e"
    assert "FAIL" in w.readings_panel.overall_label.text()
    assert len(w.canvas.overlay_items) > 4
    w.close()
