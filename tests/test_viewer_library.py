"""The viewer driving the real library on synthetic renders of known geometry: the value on
the screen is the library's, and the library's agrees with the geometry the picture was
rendered from (profilecheck.synth; truth is exact by construction)."""

import numpy as np
import pytest

pytest.importorskip("pytestqt")
from PyQt5.QtCore import Qt  # noqa: E402

from profilecheck.calibration import Calibration  # noqa: E402
from profilecheck.synth import Camera, render  # noqa: E402
from profilecheck.viewer.jobs import LibraryBackend  # noqa: E402
from profilecheck.viewer.model import ViewerModel  # noqa: E402
from profilecheck.viewer.window import MainWindow  # noqa: E402

shapes = pytest.importorskip("profilecheck.scenario._shapes")

MM_PER_PX = 0.02
SIZE = (400, 300)
TIP_HEIGHT_MM = 0.05   # the rendered tool tip sits 0.05 mm above the centre's axis


@pytest.fixture(scope="module")
def height_frame():
    cam = Camera(mm_per_px=MM_PER_PX, image_size=SIZE)
    centre, _ = shapes.centre_side_view(apex_mm=(-1.0, 0.0), diameter_mm=3.0, length_mm=10.0)
    tool, _ = shapes.tool_side_view(tip_mm=(1.0, TIP_HEIGHT_MM), thickness_mm=2.0, length_mm=10.0)
    img, _ = render([centre, tool], cam, blur_px=1.2, noise=2.0, supersample=2, seed=3)
    return img


@pytest.fixture
def win(qtbot):
    w = MainWindow(ViewerModel(), LibraryBackend())
    qtbot.addWidget(w)
    w.show()
    yield w
    w.close()


def _run(qtbot, w):
    with qtbot.waitSignal(w.runner.finished, timeout=30000) as blocker:
        qtbot.mouseClick(w.job_panel.run_button, Qt.LeftButton)
    return blocker.args[0]


def test_calibrate_from_a_pin_render(qtbot, win):
    # A 3.000 mm pin across a 0.02 mm/px telecentric view: the scale is 0.02 mm/px by
    # construction; the 50 % level sits on the true boundary, so no edge offset to absorb.
    cam = Camera(mm_per_px=MM_PER_PX, image_size=SIZE)
    pin = np.array([[-4.5, -1.5], [4.5, -1.5], [4.5, 1.5], [-4.5, 1.5]])
    img, _ = render([pin], cam, blur_px=1.2, noise=2.0, supersample=2, seed=1)
    win.model.set_image(img / 255.0, raw=img, name="pin")
    win.model.set_mode("calibrate")
    win.job_panel.size_spin.setValue(3.0)
    qtbot.keyClicks(win.job_panel.label_edit, "bench")
    out = _run(qtbot, win)
    cal = win.model.calibration
    assert cal is out.calibration and cal.label == "bench"
    assert cal.image_size == SIZE
    # 0.1 % of the scale (0.3 px over the pin's 150 px): well inside what a pin gives.
    assert abs(cal.mm_per_px - MM_PER_PX) < 2e-5
    assert f"{cal.mm_per_px:.6f} mm/px" in win.readings_panel.calibration_label.text()


def test_height_job_on_a_render(qtbot, win, height_frame):
    win.model.set_image(height_frame / 255.0, raw=height_frame, name="height")
    win.model.set_calibration(Calibration(mm_per_px=MM_PER_PX, u_mm_per_px=2e-6, image_size=SIZE))
    win.model.set_mode("height")
    out = _run(qtbot, win)
    m = out.result.measurements["height_offset"]
    # truth 0.05 mm; 0.01 mm is a tenth of the usual +/-0.1 mm allowance (common practice)
    assert abs(m.value - TIP_HEIGHT_MM) < 0.01
    t = win.readings_panel.table
    row = [t.item(0, c).text() for c in range(5)]
    assert row[0].startswith("Height")
    shown_v, shown_u = (float(x) for x in row[1].split(" \u00b1 "))  # the library's number
    assert abs(shown_v - m.value) <= 0.5e-4 and abs(shown_u - m.u) <= 0.5e-4
    assert row[4] == "\u2714 PASS"                               # 0.05 inside +/-0.1 mm
    assert len(win.canvas.overlay_items) >= 2                    # tip and axis drawn


def test_tool_job_on_a_render(qtbot, win):
    # A 60 deg tool with a 0.125 mm tip flat (the ISO 68-1 basic root flat P/8 for P = 1 mm).
    tool, truth = shapes.tool_top_view(tip_flat_mm=0.125, shank_length_mm=3.0)
    cam = Camera(mm_per_px=0.01, image_size=(320, 300), centre_mm=(0.0, -1.2))
    img, _ = render([tool], cam, blur_px=1.2, noise=2.0, supersample=2, seed=2)
    win.model.set_image(img / 255.0, raw=img, name="tool")
    win.model.set_calibration(Calibration(mm_per_px=0.01, u_mm_per_px=1e-6, image_size=(320, 300)))
    win.model.set_mode("tool")
    out = _run(qtbot, win)
    inc = out.result.measurements["included_angle"]
    assert abs(inc.value - truth["included_angle"]) < 0.2     # 60 deg by construction
    keys = [win.readings_panel.table.item(r, 0).data(Qt.UserRole)
            for r in range(win.readings_panel.table.rowCount())]
    assert "included_angle" in keys and "half_left" in keys


def test_library_error_reaches_the_status_line(qtbot, win):
    blank = np.full((SIZE[1], SIZE[0]), 0.85)
    win.model.set_image(blank, name="blank")
    win.model.set_calibration(Calibration(mm_per_px=MM_PER_PX, u_mm_per_px=2e-6, image_size=SIZE))
    win.model.set_mode("height")
    with qtbot.waitSignal(win.runner.failed, timeout=30000):
        qtbot.mouseClick(win.job_panel.run_button, Qt.LeftButton)
    assert win.status_label.text().startswith("Could not measure:")
    assert win.readings_panel.table.rowCount() == 0


def test_saved_files_are_what_the_command_line_writes(qtbot, win, height_frame, tmp_path):
    import cv2

    from profilecheck.calibration import save_calibration
    from profilecheck.cli import main
    pic, calf = tmp_path / "height.png", tmp_path / "cal.json"
    cv2.imwrite(str(pic), height_frame)
    save_calibration(Calibration(mm_per_px=MM_PER_PX, u_mm_per_px=2e-6, image_size=SIZE), calf)
    assert win.open_image(str(pic)) and win.open_calibration(str(calf))
    win.model.set_mode("height")
    _run(qtbot, win)
    saved = win.save_results(tmp_path / "out")
    assert saved is not None and saved.sheet is not None
    # the same picture and calibration through the command line's height command
    cli_json, cli_png = tmp_path / "cli.json", tmp_path / "cli.png"
    assert main(["height", str(pic), "--cal", str(calf), "--json", str(cli_json),
                 "--annotate", str(cli_png)]) == 0
    assert saved.json.read_text() == cli_json.read_text()
    assert saved.annotated.read_bytes() == cli_png.read_bytes()
    back = cv2.imread(str(saved.raw), cv2.IMREAD_UNCHANGED)
    assert np.array_equal(back, height_frame)          # the raw frame, untouched
    assert "<html" in saved.sheet.read_text().lower()
    ann = cv2.imread(str(saved.annotated))
    assert ann.shape[:2] == (SIZE[1], SIZE[0])


def test_axis_saved_from_a_point_serves_a_line_job(qtbot, win, height_frame, tmp_path):
    win.model.set_image(height_frame / 255.0, raw=height_frame, name="height")
    win.model.set_calibration(Calibration(mm_per_px=MM_PER_PX, u_mm_per_px=2e-6, image_size=SIZE))
    win.model.set_mode("height")
    first = _run(qtbot, win)
    assert win.job_panel.save_axis_button.isEnabled()
    assert win.save_axis(tmp_path / "axis.json")
    assert win.model.params.axis_path == str(tmp_path / "axis.json")
    win.job_panel.reference_box.setCurrentIndex(2)          # 'line'
    assert win.model.params.reference == "line" and win.job_panel.axis_row.isEnabled()
    second = _run(qtbot, win)
    a = first.result.measurements["height_offset"].value
    b = second.result.measurements["height_offset"].value
    assert abs(b - a) < 0.002 and abs(b - TIP_HEIGHT_MM) < 0.01  # same axis, same picture
