"""Edge accuracy and speed of profilecheck.imaging, beside pixel-level and iso-contour edges
and the Cramer-Rao lower bound.

Scenes: a straight edge (half-plane) blurred by a Gaussian of std sigma_b and integrated over
square pixels (Gauss-Legendre quadrature, rendered here, independent of the package), dark
30 and contrast 190 on an 8-bit scale, Gaussian noise sigma_n grey levels (not rounded, so the
bound applies as stated). Errors are signed distances from the true line along the normal
(+ toward the bright side), per edge point, in px.

Estimators:
- ours: profilecheck.imaging.find_edges (levels and blur unknown, fitted per profile);
- canny: cv2.Canny pixel positions (thresholds 50/150 on the 8-bit image);
- contour: skimage.measure.find_contours at the true mid level (B + C/2) -- the 50 %
  threshold with linear interpolation; it is given the true levels, so the bound for unknown
  levels does not limit it (at high noise it can come out slightly below it).

Bound: per profile, the exact Fisher matrix of the pixel-integrated blurred step sampled along
the same pixel row/column and window find_edges uses, unknowns (x0, B, C, sigma), Jacobian by
central differences of an independent quadrature model, var(x0) averaged over the edge's
phase, times |n_axis| to turn a row/column position into a distance along the normal
(vision-notes section 2). Targets: RMS/bound <= 1.1 and |bias| <= 0.01 px.

Run: .venv/bin/python benchmarks/edge_accuracy.py [--quick]
"""

from __future__ import annotations

import os

os.environ.setdefault("OMP_NUM_THREADS", "1")        # time on one core
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("MKL_NUM_THREADS", "1")

import math  # noqa: E402
import sys  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402

import cv2  # noqa: E402
import numpy as np  # noqa: E402
from scipy.special import ndtr  # noqa: E402
from skimage.measure import find_contours  # noqa: E402

cv2.setNumThreads(1)

from profilecheck.imaging import find_edges, fit_circle, fit_line, load_image  # noqa: E402

DARK, CONTRAST = 30.0, 190.0
XG, WG = np.polynomial.legendre.leggauss(8)
XG, WG = XG / 2, WG / 2


def render(shape, point, normal_deg, sigma_b):
    a = math.radians(normal_deg)
    n = np.array([math.cos(a), math.sin(a)])
    yy, xx = np.mgrid[0:shape[0], 0:shape[1]].astype(float)
    acc = np.zeros(shape)
    for u, wu in zip(XG, WG):
        for v, wv in zip(XG, WG):
            acc += wu * wv * ndtr(((xx + u - point[0]) * n[0] + (yy + v - point[1]) * n[1]) / sigma_b)
    return DARK + CONTRAST * acc, n


def _profile_model(theta, k, n_a, n_o):
    x0, B, C, s = theta
    acc = 0.0
    for u, wu in zip(XG, WG):
        for v, wv in zip(XG, WG):
            acc = acc + wu * wv * ndtr(((k - x0 + u) * n_a + v * n_o) / s)
    return B + C * acc


def crlb_px(sigma_b, sigma_n, normal_deg, n_phase=16):
    """Bound on the per-point std along the normal (px), for find_edges' window."""
    a = math.radians(normal_deg)
    c, s = abs(math.cos(a)), abs(math.sin(a))
    n_a, n_o = max(c, s), min(c, s)
    se = math.sqrt(sigma_b ** 2 + 1 / 12)
    hw = int(np.clip(math.ceil(5 * se / n_a), 7, 30))        # as profilecheck.imaging.edges
    k = np.arange(-hw, hw + 2, dtype=float)                   # 2 hw + 2 samples
    var = []
    for ph in (np.arange(n_phase) + 0.5) / n_phase:
        th = np.array([ph, DARK, CONTRAST, sigma_b])
        steps = np.array([1e-5, 1e-3, 1e-3, 1e-5])
        J = np.empty((k.size, 4))
        for i in range(4):
            d = np.zeros(4)
            d[i] = steps[i]
            J[:, i] = (_profile_model(th + d, k, n_a, n_o) - _profile_model(th - d, k, n_a, n_o)) / (2 * steps[i])
        F = J.T @ J / sigma_n ** 2
        var.append(np.linalg.inv(F)[0, 0])
    return math.sqrt(np.mean(var)) * n_a, 2 * hw + 2


def _dist(xy, point, n):
    return (xy - point) @ n


def run_config(normal_deg, sigma_b, sigma_n, reps, rng, shape=(160, 120)):
    point = np.array([shape[1] / 2 + 0.37, shape[0] / 2 + 0.21])
    clean, n = render(shape, point, normal_deg, sigma_b)
    m = 14
    errs = {"ours": [], "canny": [], "contour": []}
    for _ in range(reps):
        img = clean + rng.normal(0, sigma_n, shape) if sigma_n > 0 else clean
        e = find_edges(np.clip(img / 255.0, 0, 1))
        xy = e.xy
        inner = (xy[:, 0] > m) & (xy[:, 0] < shape[1] - m) & (xy[:, 1] > m) & (xy[:, 1] < shape[0] - m)
        errs["ours"].append(_dist(xy[inner], point, n))
        u8 = np.clip(np.round(img), 0, 255).astype(np.uint8)
        cy, cx = np.nonzero(cv2.Canny(u8, 50, 150, L2gradient=True))
        cxy = np.c_[cx, cy].astype(float)
        inner = (cx > m) & (cx < shape[1] - m) & (cy > m) & (cy < shape[0] - m)
        errs["canny"].append(_dist(cxy[inner], point, n))
        cs = find_contours(img, DARK + CONTRAST / 2)
        if cs:
            rc = np.concatenate(cs)
            pxy = rc[:, ::-1]
            inner = (pxy[:, 0] > m) & (pxy[:, 0] < shape[1] - m) & (pxy[:, 1] > m) & (pxy[:, 1] < shape[0] - m)
            errs["contour"].append(_dist(pxy[inner], point, n))
    out = {}
    for key, v in errs.items():
        d = np.concatenate(v) if v else np.zeros(0)
        out[key] = (float(d.mean()) if d.size else float("nan"),
                    float(math.sqrt(np.mean(d ** 2))) if d.size else float("nan"), d.size)
    return out


def accuracy_table(quick: bool):
    rng = np.random.default_rng(2026)
    orientations = [0.0, 0.5, 3.0, 17.0, 45.0, 90.0] if not quick else [0.0, 17.0, 45.0]
    blurs = [0.7, 1.0, 1.5, 2.5] if not quick else [0.7, 2.5]
    noises = [0.5, 2.0, 8.0] if not quick else [2.0, 8.0]
    reps = 3 if quick else 8
    print("Straight edges: per-point bias and RMS error (px) along the normal; ratio = RMS / CRLB")
    print(f"{'angle':>6} {'sb':>4} {'sn':>4} {'n':>5} | {'CRLB':>7} | {'ours bias':>9} {'RMS':>7} "
          f"{'ratio':>5} | {'canny bias':>10} {'RMS':>6} | {'contour bias':>12} {'RMS':>7} {'ratio':>5}")
    worst_ratio, worst_bias = 0.0, 0.0
    for ang in orientations:
        for sb in blurs:
            for sn in noises:
                bound, _ = crlb_px(sb, sn, ang)
                r = run_config(ang, sb, sn, reps, rng)
                ob, orms, nn = r["ours"]
                cb, crms, _ = r["canny"]
                tb, trms, _ = r["contour"]
                worst_ratio = max(worst_ratio, orms / bound)
                print(f"{ang:6.1f} {sb:4.1f} {sn:4.1f} {nn:5d} | {bound:7.4f} | {ob:+9.4f} {orms:7.4f} "
                      f"{orms / bound:5.2f} | {cb:+10.3f} {crms:6.3f} | {tb:+12.4f} {trms:7.4f} {trms / bound:5.2f}")
    print(f"worst ours RMS / CRLB: {worst_ratio:.3f} (target <= 1.1)")
    print()
    print("Noise-free systematic bias (px): mean and max |error| over 4 edge phases")
    print(f"{'angle':>6} {'sb':>4} | {'ours mean':>10} {'ours max':>9} | {'contour mean':>12} {'contour max':>11}")
    for ang in ([0.0, 0.5, 3.0, 17.0, 30.0, 45.0, 60.0, 90.0] if not quick else [0.0, 45.0, 90.0]):
        for sb in ([0.7, 1.0, 2.5] if not quick else [0.7]):
            om, ox, tm, tx = [], 0.0, [], 0.0
            for ph in (0.0, 0.25, 0.5, 0.75):
                shape = (120, 100)
                point = np.array([50.0 + ph, 60.0 + ph * 0.6])
                clean, n = render(shape, point, ang, sb)
                e = find_edges(clean / 255.0)
                m = 12
                xy = e.xy
                inner = (xy[:, 0] > m) & (xy[:, 0] < shape[1] - m) & (xy[:, 1] > m) & (xy[:, 1] < shape[0] - m)
                d = _dist(xy[inner], point, n)
                om.append(d.mean())
                ox = max(ox, float(np.abs(d).max()))
                rc = np.concatenate(find_contours(clean, DARK + CONTRAST / 2))
                pxy = rc[:, ::-1]
                inner = (pxy[:, 0] > m) & (pxy[:, 0] < shape[1] - m) & (pxy[:, 1] > m) & (pxy[:, 1] < shape[0] - m)
                dt = _dist(pxy[inner], point, n)
                tm.append(dt.mean())
                tx = max(tx, float(np.abs(dt).max()))
            worst_bias = max(worst_bias, max(abs(v) for v in om))
            print(f"{ang:6.1f} {sb:4.1f} | {np.mean(om):+10.6f} {ox:9.6f} | {np.mean(tm):+12.5f} {tx:11.5f}")
    print(f"worst ours |bias|: {worst_bias:.2e} px (target <= 0.01)")
    print()


def line_table(quick: bool):
    """Line fits through the edge points of a straight edge: offset and angle scatter over
    repeated noisy images beside the bound for L points, sigma_1 / sqrt(L) and
    sigma_1 / sqrt(sum (t - mean t)^2) rad for points at positions t along the line (for unit
    spacing sigma_1 sqrt(12 / (L (L^2 - 1))), vision-notes section 2), sigma_1 = per-point
    CRLB; 'reported' is the fit's own standard uncertainty."""
    rng = np.random.default_rng(7)
    reps = 60 if not quick else 10
    print("Line fits (weighted TLS on find_edges points), 100 px of edge, sigma_n = 2:")
    print(f"{'angle':>6} {'sb':>4} | {'offset std':>10} {'bound':>7} {'reported':>8} | "
          f"{'angle std deg':>13} {'bound':>8} {'reported':>8}")
    for ang in (0.0, 3.0, 45.0):
        for sb in (1.0, 2.0):
            shape = (130, 130)
            point = np.array([65.31, 65.17])
            clean, n = render(shape, point, ang, sb)
            offs, angs, so, sa = [], [], [], []
            for _ in range(reps):
                e = find_edges(np.clip((clean + rng.normal(0, 2.0, shape)) / 255, 0, 1))
                t = (e.xy - point) @ np.array([-n[1], n[0]])
                sel = np.abs(t) < 50
                f = fit_line(e.xy[sel], sigma_px=e.std_px[sel])
                offs.append((f.point - point) @ n)
                angs.append(math.atan2(f.direction[1], f.direction[0]) % math.pi)
                so.append(f.std_offset_px)
                sa.append(f.std_angle_rad)
            s1, _ = crlb_px(sb, 2.0, ang)
            L = int(sel.sum())
            tt = t[sel]
            ang_bound = s1 / math.sqrt(float(((tt - tt.mean()) ** 2).sum()))
            print(f"{ang:6.1f} {sb:4.1f} | {np.std(offs):10.5f} {s1 / math.sqrt(L):7.5f} "
                  f"{np.median(so):8.5f} | {math.degrees(np.std(angs)):13.5f} "
                  f"{math.degrees(ang_bound):8.5f} {math.degrees(np.median(sa)):8.5f}")
    print()


def disk_table(quick: bool):
    """Blurred disks (exact: non-central chi-square), radius fitted to find_edges points,
    raw and corrected for the sigma_e^2 / (2R) shift of curved edges (vision-notes 1.2)."""
    from scipy.stats import ncx2

    from profilecheck.imaging import correct_radius_for_blur
    print("Disks, noise-free, radius error (px): raw fit, expected -sigma_e^2/(2R), corrected")
    xg, wg = np.polynomial.legendre.leggauss(3)
    cases = [(10.0, 1.0), (20.0, 1.0), (40.0, 1.0), (20.0, 2.0)] if not quick else [(20.0, 1.0)]
    for R, sb in cases:
        size = int(2 * R + 12 * sb + 20)
        c = np.array([size / 2 + 0.31, size / 2 - 0.27])
        yy, xx = np.mgrid[0:size, 0:size].astype(float)
        inside = np.zeros((size, size))
        for u, wu in zip(xg / 2, wg / 2):
            for v, wv in zip(xg / 2, wg / 2):
                rho2 = (xx + u - c[0]) ** 2 + (yy + v - c[1]) ** 2
                inside += wu * wv * ncx2.cdf(R ** 2 / sb ** 2, 2, rho2 / sb ** 2)
        img = (DARK + CONTRAST * (1 - inside)) / 255
        e = find_edges(img)
        f = fit_circle(e.xy)
        rc = correct_radius_for_blur(f.radius, e.blur_px)
        print(f"  R {R:5.1f} sb {sb:3.1f}: raw {f.radius - R:+.4f}  expected "
              f"{-(sb ** 2 + 1 / 12) / (2 * R):+.4f}  corrected {rc - R:+.4f}  ({len(e)} points)")
    print()


def gamma_table(quick: bool):
    """estimate_gamma on an encoded straight edge, 200 x 150 px, sigma_n = 2 (linear), 8-bit."""
    from profilecheck.imaging import estimate_gamma
    rng = np.random.default_rng(3)
    print("Camera gamma from edge shape (estimate_gamma), sigma_b = 1.5:")
    for g in ((1.0, 2.2) if quick else (1.0, 1.8, 2.2, 2.6)):
        lin, _ = render((200, 150), np.array([75.3, 100.6]), 20.0, 1.5)
        lin = np.clip(lin + rng.normal(0, 2.0, lin.shape), 0.3, 255) / 255
        code = np.round(lin ** (1 / g) * 255) / 255
        est = estimate_gamma(code)
        print(f"  true {g:.2f}: estimated {est.gamma:.3f} +/- {est.std:.3f} (k = 1, "
              f"{est.n_profiles} profiles)")
    print()


def _thread_image(path, size=(1600, 1250), pitch_px=100.0, sigma_b=1.2, seed=0):
    """A 60 deg thread-like silhouette across a 2 MP frame, rendered by supersampling."""
    w, h = size
    ss = 4
    depth = pitch_px * math.sqrt(3) / 2 * 0.8
    xs = np.arange(-pitch_px, w + 2 * pitch_px, pitch_px / 2)
    ys = np.where(np.arange(xs.size) % 2 == 0, h * 0.45, h * 0.45 + depth)
    top = np.c_[xs, ys]
    poly = np.vstack([top, [[w + 2 * pitch_px, h + 10], [-pitch_px, h + 10]]])
    hi = np.zeros((h * ss, w * ss), np.uint8)
    cv2.fillPoly(hi, [np.round((poly + 0.5) * ss * 16 - 0.5 * 16).astype(np.int32)], 1, shift=4)
    cov = cv2.resize(hi.astype(np.float32), (w, h), interpolation=cv2.INTER_AREA)
    cov = cv2.GaussianBlur(cov, (0, 0), sigma_b)
    rng = np.random.default_rng(seed)
    img = 220.0 - 190.0 * cov + rng.normal(0, 2.0, cov.shape)
    cv2.imwrite(str(path), np.clip(np.round(img), 0, 255).astype(np.uint8))
    return pitch_px


def timing():
    with tempfile.TemporaryDirectory() as d:
        p = os.path.join(d, "thread_2mp.png")
        _thread_image(p)
        best = {}
        cpu = {}
        for _ in range(3):
            c0 = time.process_time()
            t0 = time.perf_counter()
            img = load_image(p)
            t1 = time.perf_counter()
            e = find_edges(img)
            t2 = time.perf_counter()
            # one line per flank: points between apexes, away from the corners
            fits = 0
            xs = e.xy[:, 0]
            for x0 in np.arange(0, img.shape[1], 50.0):
                sel = (xs > x0 + 12) & (xs < x0 + 38)
                if sel.sum() > 10:
                    fit_line(e.xy[sel], sigma_px=e.std_px[sel])
                    fits += 1
            fit_circle(e.xy[: min(len(e), 200)])
            t3 = time.perf_counter()
            c3 = time.process_time()
            for k, v in (("load", t1 - t0), ("edges", t2 - t1), ("fits", t3 - t2), ("total", t3 - t0)):
                best[k] = min(best.get(k, 1e9), v)
            cpu["total"] = min(cpu.get("total", 1e9), c3 - c0)
        print(f"Timing on a {img.shape[1]} x {img.shape[0]} ({img.size / 1e6:.1f} MP) thread image, one "
              f"thread, best of 3: load {best['load'] * 1e3:.0f} ms, edges {best['edges'] * 1e3:.0f} ms "
              f"({len(e)} points, {e.n_dropped} dropped), {fits} line fits + 1 circle "
              f"{best['fits'] * 1e3:.0f} ms, total {best['total'] * 1e3:.0f} ms wall, "
              f"{cpu['total'] * 1e3:.0f} ms CPU (one thread; target well under 1000 ms)")


def main(argv=None):
    argv = sys.argv[1:] if argv is None else argv
    quick = "--quick" in argv
    accuracy_table(quick)
    line_table(quick)
    disk_table(quick)
    gamma_table(quick)
    timing()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
