"""Live tracking: the next frame is searched only around the last tool tip and axis point.
Boxes are checked against hand-computed bounds; the tracked live readings against the
rendered geometry (profilecheck.synth, exact by construction)."""

import numpy as np
import pytest

from profilecheck.viewer.tracking import MIN_MARGIN_PX, track_roi


def test_box_around_tip_and_apex():
    # tip (739.5, 354.5), apex (539.5, 359.5): span 200.06 px, margin max(160, 0.6 * 200.06)
    # = 160 px -> x 379.5 .. 899.5, y 194.5 .. 519.5, as whole-pixel bounds [x0, x1).
    d = {"tip_px": [739.5, 354.5], "axis_point_px": [539.5, 359.5]}
    assert MIN_MARGIN_PX == 160
    assert track_roi(d, (1280, 720), "point") == (379, 194, 901, 521)


def test_wide_span_grows_the_margin_and_clips_to_the_frame():
    # span 500 px -> margin 300 px; left edge clipped at 0, bottom at 720
    d = {"tip_px": [600.0, 600.0], "axis_point_px": [100.0, 600.0]}
    assert track_roi(d, (1920, 720), "point") == (0, 300, 901, 720)


def test_line_reference_tracks_the_tip_only():
    d = {"tip_px": [500.0, 300.0], "axis_point_px": [10.0, 10.0]}
    assert track_roi(d, (1280, 720), "line") == (340, 140, 661, 461)


def test_no_box_when_it_would_not_help_or_cannot_be_made():
    d = {"tip_px": [100.0, 100.0], "axis_point_px": [60.0, 100.0]}
    assert track_roi(d, (320, 240), "point") is None      # box > 60 % of a small frame
    assert track_roi(d, (1280, 720), "bar") is None       # bar edges must stay in view
    assert track_roi(None, (1280, 720), "point") is None
    assert track_roi({"tip_px": [float("nan"), 1.0], "axis_point_px": [0, 0]},
                     (1280, 720), "point") is None
    with pytest.raises(ValueError, match="image_size"):
        track_roi(d, (0, 720), "point")


def test_tracked_live_readings_match_the_render(qtbot, tmp_path):
    pytest.importorskip("pytestqt")
    shapes = pytest.importorskip("profilecheck.scenario._shapes")
    from profilecheck.calibration import Calibration
    from profilecheck.synth import Camera, render
    from profilecheck.viewer.frames import SequenceSource
    from profilecheck.viewer.jobs import LibraryBackend
    from profilecheck.viewer.model import ViewerModel
    from profilecheck.viewer.window import MainWindow

    size, tip_mm = (960, 540), 0.030   # truth: the tip 0.030 mm above the centre's axis
    cam = Camera(mm_per_px=0.01, image_size=size)
    centre, _ = shapes.centre_side_view(apex_mm=(-1.0, 0.0), diameter_mm=3.0, length_mm=10.0)
    tool, _ = shapes.tool_side_view(tip_mm=(1.0, tip_mm), thickness_mm=2.0, length_mm=10.0)
    img, _ = render([centre, tool], cam, blur_px=1.2, noise=2.0, supersample=2, seed=5)
    w = MainWindow(ViewerModel(), LibraryBackend(),
                   source_factory=lambda: SequenceSource([img], label="bench", fps=20.0,
                                                         loop=True, count=400))
    qtbot.addWidget(w)
    w.model.set_calibration(Calibration(mm_per_px=0.01, u_mm_per_px=1e-6, image_size=size,
                                        label="bench"))
    w.model.set_mode("height")
    outs = []
    w.live.measured.connect(outs.append)
    w.start_camera()
    qtbot.waitUntil(lambda: sum(o.roi is not None for o in outs) >= 2, timeout=30000)
    w.stop_camera()
    full = [o for o in outs if o.roi is None]
    boxed = [o for o in outs if o.roi is not None]
    assert full, "the first live frame is measured whole"
    for o in full[:1] + boxed:
        m = o.result.measurements["height_offset"]
        assert abs(m.value - tip_mm) < 0.002        # 2 um: a fiftieth of the +/-0.1 mm rule
    a = full[0].result.measurements["height_offset"]
    b = boxed[-1].result.measurements["height_offset"]
    assert abs(a.value - b.value) <= max(a.u, b.u)  # same picture, same reading within U
    x0, y0, x1, y1 = boxed[-1].roi
    assert (x1 - x0) * (y1 - y0) < 0.6 * size[0] * size[1]
    # saving a tracked frame writes the whole-frame report, as the command line would
    import json

    from profilecheck.measure import measure_height
    w.model.set_outcome(boxed[-1], raw=img)
    saved = w.save_results(tmp_path / "live")
    direct = measure_height(img / 255.0, w.model.calibration).to_dict()["measurements"]
    got = json.loads(saved.json.read_text())["measurements"]["height_offset"]
    assert got["value"] == pytest.approx(direct["height_offset"]["value"], abs=1e-12)
    assert got["u"] == pytest.approx(direct["height_offset"]["u"], abs=1e-12)
    w.close()
