"""Accuracy and speed of the renderer of known truth (profilecheck.synth).

Prints:
1. straight-edge bias: the fitted position of the rendered edge against the analytic
   pixel-integrated Gaussian edge spread (2-D Gauss-Legendre quadrature, independent of the
   renderer), worst case over orientations and sub-pixel offsets, per supersampling;
   target < 0.005 px;
2. render time of 1600 x 1200 scenes (thread, checkerboard); target a few seconds;
3. helix: apparent flank angle and pitch-diameter error read off the exact outline, beside
   the first-order formulas and the brute-force values of ../shared/vision-notes.md s5 and
   standards-notes s9;
4. pinhole ray-cast speed.

Run: .venv/bin/python benchmarks/synth_truth.py
"""

from __future__ import annotations

import math
import time

import numpy as np
from scipy.optimize import brentq
from scipy.special import ndtr

from profilecheck.synth import (Camera, axial_profile_iso, axial_profile_trapezoidal,
                                axial_profile_un, helix_flank_angle_deg, helix_pd_error_mm,
                                outline_values, render_checkerboard, render_thread,
                                thread_silhouette)
from profilecheck.synth._raster import coverage

_X, _W = np.polynomial.legendre.leggauss(24)
_X, _W = 0.5 * _X, 0.5 * _W


def _edge_value(d, theta, sigma):
    off = _X[:, None] * math.cos(theta) + _X[None, :] * math.sin(theta)
    w = _W[:, None] * _W[None, :]
    return np.sum(w * ndtr(-(np.asarray(d)[..., None, None] + off) / sigma), axis=(-2, -1))


def edge_bias(ss: int, sigma: float = 1.0) -> float:
    worst = 0.0
    for ang in (0.0, 3.0, 17.0, 45.0, -61.0, 90.0):
        for off in (0.0, 0.137, 0.25, 0.5, 0.77):
            th = math.radians(ang)
            n = np.array([math.cos(th), math.sin(th)])
            t = np.array([-n[1], n[0]])
            p0 = np.array([47.0 + off, 40.0 + 0.5 * off])
            big = 400.0
            poly = np.array([p0 + big * t, p0 + big * t - big * n, p0 - big * t - big * n, p0 - big * t])
            cov = coverage([poly], (80, 96), sigma_px=sigma, ss=ss)
            yy, xx = np.mgrid[0:80, 0:96]
            d = (xx - p0[0]) * n[0] + (yy - p0[1]) * n[1]
            sel = (np.abs(d) < 3) & (xx > 8) & (xx < 88) & (yy > 8) & (yy < 72)
            obs, dd = cov[sel], d[sel]

            def f(de):
                return np.sum((obs - _edge_value(dd - de, th, sigma)) * np.exp(-0.5 * (dd - de) ** 2))

            worst = max(worst, abs(brentq(f, -0.2, 0.2, xtol=1e-9)))
    return worst


def _timed(fn, *args, **kw) -> str:
    w, c = time.perf_counter(), time.process_time()
    fn(*args, **kw)
    return f"{time.process_time() - c:.2f} s CPU ({time.perf_counter() - w:.2f} s wall)"


def main() -> None:
    print("1. straight-edge bias of the 50 % level (sigma 1 px), worst of 30 edges")
    for ss in (2, 4, 8):
        print(f"   supersample {ss}: {edge_bias(ss):.2e} px  (target < 5e-3)")
    print("2. render time, 1600 x 1200")
    cam = Camera(0.01, (1600, 1200), rotation_deg=2.0)
    print("   M6x1 thread across the frame: " + _timed(
        render_thread, cam, pitch_mm=1.0, major_d_mm=6.0, thread_length_mm=20.0, vignetting=0.15))
    pc = Camera(0.01, (1600, 1200), working_distance_mm=40.0, k1=-0.2)
    print("   14 x 10 checkerboard, pinhole + distortion: " + _timed(
        render_checkerboard, pc, squares=(14, 10), square_mm=0.8, tilt_x_deg=15.0, tilt_y_deg=-12.0))
    print("3. helix: outline values vs first-order formula vs vision-notes s5 brute force")
    cases = [("M3x0.5", axial_profile_iso(0.5, 3.0), 0.5, None),
             ("M6x1", axial_profile_iso(1.0, 6.0), 1.0, 28.1),
             ("M10x1.5", axial_profile_iso(1.5, 10.0), 1.5, 37.6),
             ("1/4-20 UNC", axial_profile_un(20, 0.25), 1.27, 0.00172 * 25400),
             ("Tr20x4", axial_profile_trapezoidal(4.0, 20.0), 4.0, 590.0)]
    print(f"   {'thread':11s} {'flank deg':>10s} {'formula':>8s} {'dPD um':>9s} {'formula':>8s} {'notes':>7s}")
    for name, prof, lead, ref in cases:
        sil = thread_silhouette(prof, None, lead, 1, 3 * lead, x_start_mm=-1.5 * lead, limbs=("upper",))
        i = prof.info
        v = outline_values(sil["upper"], prof.pitch_mm, i["minor_d_mm"] / 2, i["major_d_mm"] / 2)
        half = i["flank_left_deg"]
        d_pd = (2 * v["pitch_radius_mm"] - i["pitch_d_mm"]) * 1000
        f_pd = helix_pd_error_mm(i["pitch_d_mm"], lead, half) * 1000
        f_a = helix_flank_angle_deg(i["pitch_d_mm"], lead, half)
        print(f"   {name:11s} {v['flank_left_deg']:10.3f} {f_a:8.3f} {d_pd:9.2f} {f_pd:8.2f} "
              f"{(f'{ref:.1f}' if ref else '-'):>7s}")
    print("4. pinhole ray-cast thread render (Z = 40 mm), 400 x 1200 px")
    pc = Camera(0.01, (400, 1200), working_distance_mm=40.0)
    print("   " + _timed(render_thread, pc, pitch_mm=1.5, major_d_mm=10.0, thread_length_mm=6.0))


if __name__ == "__main__":
    main()
