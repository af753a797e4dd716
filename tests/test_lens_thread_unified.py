"""A Unified thread through an ordinary lens: 1/4-20 UNC seen through a pinhole.

Check values: the render's own geometry (ASME B1.1 basic profile for 20 tpi: P = 1.27 mm,
flanks 30 deg, basic pitch diameter d - 0.649519 P = 5.52014 mm; the renderer's truth
dictionary holds the values it drew). The camera: 10 um/px, Z = 50 mm (f = 5000 px), barrel
distortion k1 = -0.75, the lens model taken as known (the grid calibration is tested
elsewhere). A reduced field (640 x 700 px) placed at the centre and at the right side of a
16 mm field by moving the principal point, as in tests/test_lens_thread_measure.py.
Tolerances: the ordinary-lens targets of the thread benchmark (pitch 0.05 %, pitch diameter
5 um, flanks 0.1 deg).
"""

from dataclasses import replace

import pytest

from profilecheck.calibration import Lens, attach_lens, calibrate_from_pin
from profilecheck.measure.thread import measure_thread
from profilecheck.standards import thread_spec
from profilecheck.synth import Camera, axial_profile_un, render_pin, render_thread

Z_MM = 50.0
K1 = -0.75
W, H = 640, 700


def _cam(pp):
    return Camera(0.01, (W, H), working_distance_mm=Z_MM, k1=K1, principal_px=pp)


def _lens(pp):
    f = Z_MM / 0.01
    return Lens(f, f, pp[0], pp[1], dist=(K1, 0.0, 0.0, 0.0, 0.0))


@pytest.mark.parametrize("pp, x0_mm, where", [(((W - 1) / 2, (H - 1) / 2), -4.4, "centre"),
                                              ((-320.0, (H - 1) / 2), 2.1, "right side")])
def test_unc_through_a_lens(pp, x0_mm, where):
    centre = ((W - 1) / 2, (H - 1) / 2)
    pin, _ = render_pin(_cam(centre), 6.0, axis_angle_deg=0.0, blur_px=1.0, noise=1.0, seed=5)
    cal = attach_lens(calibrate_from_pin(pin, 6.0, lens=_lens(centre)), _lens(centre))
    # the same camera: the crop moves the principal point only
    cal = replace(cal, lens=replace(cal.lens, cx_px=pp[0], cy_px=pp[1]))
    assert cal.lens.working_distance_mm == pytest.approx(Z_MM, rel=1e-3)
    img, truth = render_thread(_cam(pp), profile=axial_profile_un(20, 0.25),
                               thread_length_mm=8.8, x_start_mm=x0_mm, blur_px=1.0, noise=1.0,
                               seed=7)
    th = truth["thread"]
    assert th["pitch_mm"] == pytest.approx(1.27)              # 20 tpi
    r = measure_thread(img.astype(float) / 255.0, cal, spec=thread_spec("1/4-20 UNC-2A"))
    m = r.measurements
    assert r.both_edges, where
    assert abs(m["pitch"].value / th["pitch_mm"] - 1) < 5e-4, where
    assert abs(m["pitch_diameter"].value - th["pitch_d_mm"]) < 0.005, where
    assert abs(m["flank_left"].value - th["flank_left_deg"]) < 0.1, where
    assert abs(m["flank_right"].value - th["flank_right_deg"]) < 0.1, where
    # the expanded uncertainty covers the error
    assert abs(m["pitch_diameter"].value - th["pitch_d_mm"]) <= m["pitch_diameter"].u, where
