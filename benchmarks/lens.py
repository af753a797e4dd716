"""Lens model: grid calibration through a distorting pinhole, then a pin in the part's plane.

Targets (issue 8): focal length within 0.2 %, reprojection RMS < 0.05 px, through a pinhole
at about 50 mm with a few % barrel distortion. Renders: profilecheck.synth (exact geometry),
checkerboard corners and squares projected with cv2.projectPoints from known poses.
Then a 6 mm pin (exact cylinder silhouette through the same pinhole) calibrates the scale
in the measurement plane with the lens applied, and a 3 mm pin is measured with it.

Run: ``.venv/bin/python benchmarks/lens.py``
"""

from __future__ import annotations

import math
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from profilecheck.calibration import (Lens, attach_lens, calibrate_from_pin, calibrate_grid,  # noqa: E402
                                      find_grid_corners, measure_pin, undistort_points)
from profilecheck.scenario.calibration import board_views, cylinder_silhouette_px  # noqa: E402
from profilecheck.synth import Camera, render  # noqa: E402

F_TARGET = 0.002
RMS_TARGET = 0.05


def main() -> int:
    cam = Camera(mm_per_px=0.01, image_size=(1600, 1200), working_distance_mm=50.0, k1=-0.75)
    corner_r = math.hypot(800, 600) / cam.focal_px
    print(f"camera: f = {cam.focal_px:.1f} px (Z = 50 mm at 10 um/px), k1 = {cam.k1}, "
          f"barrel at the frame corner {100 * cam.k1 * corner_r ** 2:+.2f} %")
    pattern, square = (11, 8), 1.0
    t0 = time.perf_counter()
    views = board_views(cam, pattern, square, n_views=10, seed=3)
    imgs, truths = [], []
    for i, (polys, corners, _pose) in enumerate(views):
        img, _ = render(None, cam, shapes_px=polys, blur_px=1.0, noise=2.0, dark=28, bright=225,
                        vignetting=0.15, seed=200 + i)
        imgs.append(img)
        truths.append(corners)
    t1 = time.perf_counter()
    errs = []
    for img, tr in zip(imgs, truths):
        found = find_grid_corners(img, pattern)
        d = np.linalg.norm(found[:, None, :] - tr[None, :, :], axis=2).min(axis=1)
        errs.append(d)
    errs = np.concatenate(errs)
    g = calibrate_grid(imgs, square, pattern=pattern)
    t2 = time.perf_counter()
    f_err = g.lens.fx_px / cam.focal_px - 1.0
    print(f"render {t1 - t0:.1f} s, corners + calibration {t2 - t1:.1f} s; model {g.terms}")
    print(f"corner error vs truth: RMS {np.sqrt(np.mean(errs ** 2)):.4f} px, max {errs.max():.4f} px")
    print(f"fx {g.lens.fx_px:.2f} px (truth {cam.focal_px:.1f}): {100 * f_err:+.4f} % "
          f"(std {100 * g.std_fx_px / g.lens.fx_px:.4f} %); fy {100 * (g.lens.fy_px / cam.focal_px - 1):+.4f} %")
    print(f"principal point ({g.lens.cx_px:.2f}, {g.lens.cy_px:.2f}) truth ({cam.principal[0]}, {cam.principal[1]})")
    print(f"k1 {g.lens.dist[0]:+.4f} (truth {cam.k1}), k2 {g.lens.dist[1]:+.4f} (truth 0)")
    print(f"reprojection RMS {g.rms_px:.4f} px; held-out (leave-one-out) per view: "
          + " ".join(f"{v:.3f}" for v in g.holdout_rms_px))
    print(f"view tilts (deg): " + " ".join(f"{v:.1f}" for v in g.view_tilt_deg))

    # pin gauges: exact cylinder silhouettes through the same pinhole, axis tilted 1.5 deg
    pcam = Camera(mm_per_px=0.01, image_size=(1600, 1200), working_distance_mm=50.0, k1=-0.75,
                  rotation_deg=1.5)
    pin6, _ = render(None, pcam, shapes_px=[cylinder_silhouette_px(pcam, 6.0)], blur_px=1.2,
                     noise=2.0, dark=28, bright=225, vignetting=0.15, seed=300)
    pin3, _ = render(None, pcam, shapes_px=[cylinder_silhouette_px(pcam, 3.0)], blur_px=1.2,
                     noise=2.0, dark=28, bright=225, vignetting=0.15, seed=301)
    plain = calibrate_from_pin(pin6, 6.0)
    cal = attach_lens(calibrate_from_pin(pin6, 6.0, lens=g.lens), g)
    print(f"6 mm pin, no lens model: scale {100 * (plain.mm_per_px / 0.01 - 1):+.4f} % "
          f"(perspective +11 um and distortion folded in)")
    print(f"6 mm pin with the lens: scale {100 * (cal.mm_per_px / 0.01 - 1):+.4f} %, "
          f"Z = {cal.lens.working_distance_mm:.3f} mm (truth 50)")
    m_plain = measure_pin(pin3, plain)
    m = measure_pin(pin3, cal)
    print(f"3 mm pin measured: {1000 * (m.value - 3.0):+.2f} um with the lens (U {1000 * m.u:.2f} um), "
          f"{1000 * (m_plain.value - 3.0):+.2f} um without (U {1000 * m_plain.u:.2f} um)")
    # point undistortion: explicit criteria against OpenCV's default iteration count
    import cv2

    for (w, h, f, k1) in ((1280, 720, 1000.0, -0.35), (1600, 1200, 5000.0, -0.75)):
        dc = Camera(mm_per_px=0.01, image_size=(w, h), working_distance_mm=f * 0.01, k1=k1)
        ic = Camera(mm_per_px=0.01, image_size=(w, h), working_distance_mm=f * 0.01)
        world = ic.px_to_world(np.array([[0.0, 0.0], [w - 1.0, h - 1.0], [w - 1.0, 0.0]]))
        seen, ideal = dc.world_to_px(world), ic.world_to_px(world)
        lz = Lens(fx_px=f, fy_px=f, cx_px=dc.principal[0], cy_px=dc.principal[1],
                  dist=tuple(dc.dist_coeffs()))
        k = dc.camera_matrix()
        dflt = cv2.undistortPoints(seen.reshape(-1, 1, 2), k, dc.dist_coeffs(), P=k).reshape(-1, 2)
        ours = undistort_points(seen, lz)
        print(f"undistort corners of {w} x {h}, f {f:.0f} px, k1 {k1}: default criteria "
              f"{np.abs(dflt - ideal).max():.2e} px, ours {np.abs(ours - ideal).max():.2e} px")
    ok = abs(f_err) <= F_TARGET and g.rms_px < RMS_TARGET
    print(f"targets: f within {100 * F_TARGET} % and RMS < {RMS_TARGET} px: {'MET' if ok else 'NOT MET'}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
