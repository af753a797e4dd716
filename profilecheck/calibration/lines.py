"""Scale calibration from a ruled scale (stage micrometer): dark lines at a known spacing.

Line *centres* are found from both edges of each line, so the edge offset b cancels in the
centre-to-centre spacing (same-polarity distance) and the scale is free of it
(../shared/vision-notes.md section 4). When the line width is known too, the measured width
minus the true width gives 2 b, the edge offset of this camera and light.

Each line is measured with the blurred-bar model (:mod:`profilecheck.imaging._barfit`):
both edges of the line fitted together on every pixel row (column) across it, so thin
lines (1-4 px at common magnifications) are measured, and neither edge is pulled by the
blurred tail of the other. A line too thin for its width to be told apart from its contrast
and blur gives the scale only: its centre stays well determined by symmetry.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import CalibrationError
from ..quantity import K_COVERAGE, combine_u
from ._pair import fit_edge_line, MIN_EDGE_LENGTH_PX, EDGE_LOCATION_BOUND_PX
from .gauges import (_load, utc_now, _check_size, _check_u, _check_gamma,
                     gamma_check_note, ASSUMED_EDGE_OFFSET_BOUND_PX)
from .lens import undistort_points
from .model import Calibration, Lens

__all__ = ["calibrate_from_lines", "MIN_LINES", "EDGE_OFFSET_MAX_STD_WIDTH_PX",
           "MIN_WIDTH_OVER_SIGMA_E"]

#: Fewest lines accepted: three centres leave one degree of freedom to check the spacing.
MIN_LINES = 3

#: Largest standard uncertainty (px, k = 1, statistical part) of the mean line width for
#: which the edge offset is calibrated: then U(b) = 2 x std_width / 2 stays within 0.02 px,
#: the edge-offset tolerance of benchmarks/independent_check.py (common practice, no source).
EDGE_OFFSET_MAX_STD_WIDTH_PX = 0.02

#: Narrowest line, in units of sigma_e = sqrt(blur^2 + 1/12), whose width is calibrated. A
#: narrower line never reaches its dark level (its centre dips to 2 Phi(w / 2 sigma_e) - 1 =
#: 79 % of the contrast at 2.5 sigma_e): width, contrast and blur then trade against each
#: other (|corr(width, contrast)| > 0.99, imaging._barfit notes) and the width rests on the
#: exact shape of the blur, which real optics do not keep Gaussian (a judgement within
#: 2-3 blur sigmas: common practice, no source).
MIN_WIDTH_OVER_SIGMA_E = 2.5

_MIN_POINTS = 20          # profiles a line needs (common practice, no source)
_BIN_PX = 0.5             # projection bin, px along the line normal (common practice, no source)
_BLUR_GUESS_PX = 1.6      # sets window clearances before the blur is measured (vision-notes 6)
#: projection peaks below this share of the deepest are not lines (common practice, no source)
_PEAK_REL = 0.25


def _position_along(line: Any, ref: np.ndarray, u: np.ndarray) -> tuple[float, float]:
    """Position along ``u`` where the line crosses the ray ``ref + lam * u``, and its
    standard uncertainty from the line's offset and angle (lever = distance of ``ref`` from
    the line's point along the line)."""
    n = np.asarray(line.normal, dtype=np.float64)
    p = np.asarray(line.point, dtype=np.float64)
    nu = float(n @ u)
    lam = -float(n @ (ref - p)) / nu
    lever = float((ref - p) @ np.asarray(line.direction, dtype=np.float64))
    std = math.hypot(float(line.std_offset_px), lever * float(line.std_angle_rad)) / abs(nu)
    return float(u @ ref) + lam, std


def _line_normal(flat: np.ndarray) -> np.ndarray:
    """Unit normal (x, y) of the dominant straight structure: the doubled-angle mean of the
    gradient directions weighted by the squared gradient (structure tensor; Bigun &
    Granlund, ICCV 1987), sign chosen with a non-negative x (else y) component."""
    import cv2

    f = cv2.GaussianBlur(flat.astype(np.float32), (0, 0), 1.0, borderType=cv2.BORDER_REPLICATE)
    gy, gx = np.gradient(f.astype(np.float64))
    jxx, jyy, jxy = float(np.sum(gx * gx)), float(np.sum(gy * gy)), float(np.sum(gx * gy))
    ang = 0.5 * math.atan2(2.0 * jxy, jxx - jyy)
    u = np.array([math.cos(ang), math.sin(ang)])
    if u[0] < 0 or (u[0] == 0 and u[1] < 0):
        u = -u
    return u


def _find_lines(flat: np.ndarray, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Positions (px along ``u`` from the origin) and rough widths (px, along u) of the
    dark lines, from the mean darkness 1 - flat projected onto u in 0.5 px bins."""
    from scipy.ndimage import gaussian_filter1d
    from scipy.signal import find_peaks

    H, W = flat.shape
    yy, xx = np.mgrid[0:H, 0:W]
    p = (xx * u[0] + yy * u[1]).ravel()
    lo = float(p.min())
    b = ((p - lo) / _BIN_PX).astype(np.int64)
    n = np.bincount(b)
    dsum = np.bincount(b, weights=1.0 - flat.ravel().astype(np.float64))
    ok = n >= max(3, int(0.1 * np.median(n[n > 0])))
    prof = np.zeros(len(n))
    prof[ok] = dsum[ok] / n[ok]
    if ok.any():
        prof[~ok] = np.interp(np.flatnonzero(~ok), np.flatnonzero(ok), prof[ok])
    prof = gaussian_filter1d(prof, 1.0 / _BIN_PX)
    if not np.any(prof > 0):
        return np.empty(0), np.empty(0)
    pk, prop = find_peaks(prof, prominence=1e-3, width=0.0, rel_height=0.5)
    if len(pk) == 0:
        return np.empty(0), np.empty(0)
    prom = prop["prominences"]
    keep = prom >= _PEAK_REL * float(prom.max())
    pos = lo + (pk[keep] + 0.5) * _BIN_PX
    fwhm = prop["widths"][keep] * _BIN_PX
    return pos, fwhm


def _gather_rows(flat, raw, pos_line, u, hw, HW):
    """Samples of every pixel row across one line (normal ``u`` closer to x).

    Returns (y (N, 2 HW + 2), mask, start (N,), row (N,), c0 (N,)): sample j of profile i
    is pixel (row[i], start[i] + j); c0 the predicted centre in the profile's frame.
    """
    H, Wi = flat.shape
    rows = np.arange(H)
    xc = (pos_line - rows * u[1]) / u[0]
    start = np.floor(xc).astype(np.int64) - HW
    cols = start[:, None] + np.arange(2 * HW + 2)[None, :]
    inb = (cols >= 0) & (cols < Wi)
    cc = np.clip(cols, 0, Wi - 1)
    y = flat[rows[:, None], cc].astype(np.float64)
    r = raw[rows[:, None], cc]
    clipped = (r >= 1.0 - 1e-9) | (r <= 1e-9)
    c0 = xc - start
    j = np.arange(2 * HW + 2)[None, :]
    m = inb & ~clipped & (np.abs(j - c0[:, None]) <= hw)
    return y, m, start, rows, c0


def calibrate_from_lines(image: Any, spacing_mm: float, *, line_width_mm: float | None = None,
                         u_gauge_mm: float = 0.0, u_line_width_mm: float = 0.0, gamma: float = 1.0,
                         label: str = "", roi=None, lens: Lens | None = None) -> Calibration:
    """Scale (and optionally edge offset) from dark ruled lines at a known spacing.

    Parameters
    ----------
    image : (H, W) array or path
        A stage micrometer or ruled glass scale on the backlight: parallel dark lines.
    spacing_mm : float
        Distance between neighbouring line centres (mm). Missing lines are allowed: each
        centre's index is its distance from the first over the median spacing, rounded.
    line_width_mm : float, optional
        True width of the lines; when given the edge offset b is calibrated too, if the
        lines are wide enough for their width to be measured (see Returns).
    u_gauge_mm : float
        Expanded uncertainty (k = 2) of one spacing (mm).
    u_line_width_mm : float
        Expanded uncertainty (k = 2) of the line width (mm).
    gamma, label, roi, lens
        As in :func:`profilecheck.calibration.calibrate_from_pin`.

    Returns
    -------
    Calibration
        ``scale_absorbs_offset = False``. Without ``line_width_mm``, or with lines too thin
        for their width to be measured (narrower than :data:`MIN_WIDTH_OVER_SIGMA_E` sigma_e,
        or a mean width less certain than :data:`EDGE_OFFSET_MAX_STD_WIDTH_PX`), the edge
        offset is not measured: ``edge_offset_px = 0`` with an assumed bound of +/-
        :data:`ASSUMED_EDGE_OFFSET_BOUND_PX` px as its uncertainty, and a note says why.
        ``gauge`` holds the pitch, the mean measured width (``width_px``, with
        ``std_width_px``) and ``edge_offset_measured``.

    Raises
    ------
    CalibrationError
        Fewer than :data:`MIN_LINES` complete lines, or centres that do not fall on a
        regular spacing.

    Notes
    -----
    1. Linearise (``gamma``) and flatten the backlight
       (:func:`profilecheck.imaging.flatten_backlight`).
    2. The lines' normal u from the structure tensor of the image; the lines from the peaks
       of the mean darkness projected onto u (a thin line that never reaches 50 % is found
       as well as a wide one).
    3. On every pixel row (column when u is nearer y) across each line, the blurred-bar
       model (:func:`profilecheck.imaging._barfit.fit_bars`: bright level, contrast, centre,
       width, blur free) over a window that stays clear of the neighbouring lines' blur;
       profiles without the line (beyond its ends), with a run-away centre or a poor fit
       are dropped.
    4. Per line, one fit of all its profiles with width, contrast and blur shared
       (:func:`profilecheck.imaging._barfit.fit_bar_line`): the centres on every row and the
       line's width with its covariance (Schur complement, scaled by the residual variance).
    5. A robust line through the centres (:func:`profilecheck.imaging.fit_line`); its
       position along u at the image centre. The pitch in px is the weighted least-squares
       slope of centre position against line index; its standard uncertainty is the larger
       of the propagated centre uncertainty and the residual scatter (GUM 4.2, type A).
       Scale = spacing / pitch.
    6. Width: the weighted mean over the lines, its standard uncertainty the larger of the
       propagated and the scatter between lines, plus the type B bound
       :data:`EDGE_LOCATION_BOUND_PX` on each edge, common to all lines (GUM 4.3.7).
       b = (width - true width / scale) / 2.
    """
    sp = _check_size("spacing_mm", spacing_mm)
    u_sp = _check_u("u_gauge_mm", u_gauge_mm)
    wmm = None if line_width_mm is None else _check_size("line_width_mm", line_width_mm)
    u_w = _check_u("u_line_width_mm", u_line_width_mm)
    g = _check_gamma(gamma)
    from ..imaging import flatten_backlight, linearise
    from ..imaging.edges import _check_roi
    from ..imaging._barfit import fit_bars, fit_bar_line

    img = _load(image)
    x_off, y_off, x_end, y_end = _check_roi(roi, img.shape)
    raw = np.asarray(img[y_off:y_end, x_off:x_end], dtype=np.float64)
    hint = "no ruled scale found: need at least 3 dark parallel lines across the view on a bright backlight"
    lin = linearise(raw, g)
    sil = flatten_backlight(lin)
    if not (sil.contrast > 0.05):
        raise CalibrationError(f"{hint} (no backlight contrast)")
    flat = np.asarray(sil.flat, dtype=np.float64)
    u = _line_normal(flat)
    pos, fwhm = _find_lines(flat, u)
    if len(pos) < MIN_LINES:
        raise CalibrationError(f"{hint} (found {len(pos)} complete line(s))")
    # profiles along x when the normal is nearer x, else along y (work on the transpose)
    along_x = abs(u[0]) >= abs(u[1])
    fw, rw, uu = (flat, raw, u) if along_x else (flat.T, raw.T, u[::-1].copy())
    n_a, n_o = abs(float(uu[0])), abs(float(uu[1]))
    t_box = n_o / n_a
    se_guess = math.sqrt(_BLUR_GUESS_PX ** 2 + 1.0 / 12.0)
    order = np.argsort(pos)
    pos, fwhm = pos[order], fwhm[order]
    ys, ms, starts, rows_l, c0s, lid, hws = [], [], [], [], [], [], []
    w_guess = np.maximum(fwhm - 1.0, 1.0) / n_a
    for k, pk in enumerate(pos):
        gaps = [abs(pos[j] - pk) for j in (k - 1, k + 1) if 0 <= j < len(pos)]
        d_nb = (min(gaps) if gaps else 10 * fwhm[k]) / n_a
        wk = float(w_guess[k])
        w_nb = float(np.max(w_guess[max(k - 1, 0):k + 2]))
        # window: the line and 5 sigma_e each side, but 3 sigma_e clear of the neighbour's
        # nearest edge (the blur's tail there is 1.3e-3 of the contrast; vision-notes 6)
        hw = min(wk / 2 + 5 * se_guess / n_a, d_nb - w_nb / 2 - 3 * se_guess / n_a)
        if hw < wk / 2 + 2.0:
            continue  # lines too close for their blur
        HW = int(math.ceil(hw)) + 1
        y, m, st, rw_i, c0 = _gather_rows(fw, rw, pk * 1.0, uu, hw, HW)
        ys.append((y, m))
        starts.append(st)
        rows_l.append(rw_i)
        c0s.append(c0)
        lid.append(k)
        hws.append(HW)
    if not lid:
        raise CalibrationError(f"{hint} (lines too close together for their width)")
    # pad all profiles to one length for a single batched fit
    Wmax = max(2 * h + 2 for h in hws)
    Y = np.concatenate([np.pad(y, ((0, 0), (0, Wmax - y.shape[1])), constant_values=1.0)
                        for y, _ in ys])
    M = np.concatenate([np.pad(m, ((0, 0), (0, Wmax - m.shape[1]))) for _, m in ys])
    C0 = np.concatenate(c0s)
    ST = np.concatenate(starts)
    RW = np.concatenate(rows_l)
    LID = np.concatenate([np.full(len(c), k) for c, k in zip(c0s, lid)])
    W0 = np.concatenate([np.full(len(c), w_guess[k]) for c, k in zip(c0s, lid)])
    # samples enough on both sides of the line (3 beyond each edge, as find_edges asks)
    jj = np.arange(Wmax)[None, :]
    n_left = (M & (jj < (C0 - 0.5 * W0 - 1.0)[:, None])).sum(1)
    n_right = (M & (jj > (C0 + 0.5 * W0 + 1.0)[:, None])).sum(1)
    enough = (M.sum(1) >= 10) & (n_left >= 3) & (n_right >= 3)
    use = np.flatnonzero(enough)
    fits = fit_bars(Y[use], M[use], np.full(len(use), t_box), C0[use], W0[use],
                    np.full(len(use), 1.0 / n_a))
    found = []
    rms_list = []
    n_pts = 0
    ref = np.array([(raw.shape[1] - 1) / 2.0, (raw.shape[0] - 1) / 2.0])
    blur_list = []
    for k in lid:
        sel = np.flatnonzero(LID[use] == k)
        if len(sel) < _MIN_POINTS:
            continue
        # not selected on the per-profile convergence: along the nearly degenerate (w, C, s)
        # valley of a thin line a profile's fit may still crawl, and keeping only those
        # that stopped would select on the noise and bias the shared width below
        ok = np.isfinite(fits.c[sel]) & np.isfinite(fits.rss[sel]) & (fits.dof[sel] > 0)
        ok &= np.abs(fits.c[sel] - C0[use][sel]) <= 1.5 + 0.5 * float(w_guess[k])
        area = fits.C[sel] * fits.w[sel]
        if ok.sum() < _MIN_POINTS:
            continue
        med_area = float(np.median(area[ok]))
        ok &= (area >= 0.5 * med_area) & (area <= 2.0 * med_area) & (fits.C[sel] > 0)
        s2 = fits.rss[sel] / np.maximum(fits.dof[sel], 1.0)
        if ok.sum() < _MIN_POINTS:
            continue
        ok &= s2 <= 4.0 * float(np.median(s2[ok]))
        ii = sel[ok]
        if len(ii) < _MIN_POINTS:
            continue
        gi = use[ii]
        lf = fit_bar_line(Y[gi], M[gi], t_box, fits.c[ii], fits.A[ii], float(np.median(fits.w[ii])),
                          float(np.median(fits.C[ii])), float(np.median(fits.s[ii])))
        s2l = lf.rss / max(lf.dof, 1.0)
        std_c = np.sqrt(np.maximum(lf.var_c_unit, 0.0) * s2l) * n_a  # along the normal
        cx = ST[gi] + lf.c
        pts = np.c_[cx, RW[gi].astype(np.float64)]
        if not along_x:
            pts = pts[:, ::-1]
        pts = pts + np.array([x_off, y_off], dtype=np.float64)
        if lens is not None:
            pts = undistort_points(pts, lens)
        line = fit_edge_line(pts, std_c, "ruled scale")
        inl = np.asarray(line.inliers, dtype=bool)
        tt = (pts[inl] - np.asarray(line.point)) @ np.asarray(line.direction)
        if len(tt) == 0 or tt.max() - tt.min() < MIN_EDGE_LENGTH_PX:
            continue
        u_img = u if lens is None else np.asarray(line.normal, dtype=np.float64) * np.sign(
            float(np.asarray(line.normal) @ u) or 1.0)
        pc, s_pc = _position_along(line, ref + np.array([x_off, y_off]), u_img)
        std_w = math.sqrt(max(float(lf.cov_shared_unit[0, 0]) * s2l, 0.0)) * n_a
        sigma_b = lf.s * n_a
        found.append((pc, s_pc, lf.w * n_a, std_w, sigma_b))
        blur_list.append(sigma_b)
        rms_list.append(float(line.rms_px))
        n_pts += int(np.count_nonzero(inl))
    if len(found) < MIN_LINES:
        raise CalibrationError(f"{hint} (found {len(found)} complete line(s))")
    found.sort()
    c = np.array([f[0] for f in found])
    # statistical centre uncertainty plus the type B edge-location bound of both edges
    sys_c = EDGE_LOCATION_BOUND_PX / math.sqrt(3.0) / math.sqrt(2.0)
    sc = np.sqrt(np.array([f[1] for f in found]) ** 2 + sys_c ** 2)
    widths = np.array([f[2] for f in found])
    sw_stat = np.array([f[3] for f in found])
    est = float(np.median(np.diff(c)))
    # dark lines must leave bright gaps between them (a fifth of the spacing at least;
    # common practice, no source): else the "lines" may be the gaps of a scale imaged inverted
    if est <= 0 or est < 1.25 * float(np.median(widths)):
        raise CalibrationError(f"{hint} (lines too close together for their width)")
    index = np.round((c - c[0]) / est)
    if len(np.unique(index)) != len(index) or np.max(np.abs((c - c[0]) / est - index)) > 0.25:
        raise CalibrationError("the ruled lines are not evenly spaced: check the scale is the "
                               "right way up and clean, and that no foreign line is in view")
    w = 1.0 / sc ** 2
    a = np.column_stack([np.ones_like(index), index])
    cov = np.linalg.inv(a.T @ (a * w[:, None]))
    coef = cov @ (a.T @ (w * c))
    pitch = float(coef[1])
    resid = c - a @ coef
    dof = len(c) - 2
    std_prop = math.sqrt(cov[1, 1])
    if dof > 0:
        s2 = float(np.sum(resid ** 2)) / dof
        sxx = float(np.sum((index - index.mean()) ** 2))
        std_pitch = max(std_prop, math.sqrt(s2 / sxx))
    else:
        std_pitch = std_prop
    s = sp / pitch
    rel = combine_u(std_pitch / pitch, (u_sp / K_COVERAGE) / sp)
    # mean width over the lines (weighted), type A from the fits or the scatter between lines
    ww = 1.0 / np.maximum(sw_stat, 1e-6) ** 2
    w_px = float(np.sum(ww * widths) / np.sum(ww))
    std_w_stat = math.sqrt(1.0 / float(np.sum(ww)))
    if len(widths) > 1:
        std_w_stat = max(std_w_stat, float(np.std(widths, ddof=1)) / math.sqrt(len(widths)))
    std_w_px = math.hypot(std_w_stat, math.sqrt(2.0) * EDGE_LOCATION_BOUND_PX / math.sqrt(3.0))
    blur = float(np.median(blur_list))
    sigma_e = math.sqrt(blur ** 2 + 1.0 / 12.0)
    notes = []
    g_note = gamma_check_note(img, g, roi)
    if g_note:
        notes.append(g_note)
    if float(np.mean(raw >= 1.0 - 1e-9)) > 1e-4:
        notes.append("pixels are clipped at full brightness: lower the exposure or backlight "
                     "(clipped samples were left out of the line fits)")
    gauge = {"kind": "lines", "size_mm": sp, "u_mm": u_sp, "lines": len(found),
             "pitch_px": pitch, "std_pitch_px": std_pitch,
             "rms_centre_px": float(np.sqrt(np.mean(resid ** 2))),
             "width_px": w_px, "std_width_px": std_w_px, "n_points": n_pts,
             "rms_px": float(max(rms_list)) if rms_list else float("nan"),
             "edge_offset_measured": False}
    thin = w_px < MIN_WIDTH_OVER_SIGMA_E * sigma_e
    vague = std_w_stat > EDGE_OFFSET_MAX_STD_WIDTH_PX
    if wmm is not None and not thin and not vague:
        b = 0.5 * (w_px - wmm / s)
        std_b = 0.5 * combine_u(std_w_px, (u_w / K_COVERAGE) / s, (wmm / s) * rel)
        u_b = K_COVERAGE * std_b
        gauge["line_width_mm"] = wmm
        gauge["u_line_width_mm"] = u_w
        gauge["edge_offset_measured"] = True
    else:
        b = 0.0
        u_b = K_COVERAGE * ASSUMED_EDGE_OFFSET_BOUND_PX / math.sqrt(3.0)
        if wmm is None:
            notes.append(f"edge offset not measured (no line width given): widths and diameters "
                         f"carry an assumed +/-{ASSUMED_EDGE_OFFSET_BOUND_PX} px per edge; combine with "
                         f"a pin gauge in the same light to measure it")
        else:
            gauge["line_width_mm"] = wmm
            gauge["u_line_width_mm"] = u_w
            why = (f"the lines ({w_px:.2f} px) are narrower than {MIN_WIDTH_OVER_SIGMA_E:g} x "
                   f"the blur ({MIN_WIDTH_OVER_SIGMA_E * sigma_e:.2f} px at blur sigma "
                   f"{blur:.2f} px), so their width cannot be told apart from their contrast "
                   f"and blur" if thin else
                   f"the measured line width is uncertain by {std_w_stat:.3f} px (more than "
                   f"{EDGE_OFFSET_MAX_STD_WIDTH_PX} px)")
            notes.append(f"edge offset not measured: {why}; the scale is measured (line "
                         f"centres), widths and diameters carry an assumed "
                         f"+/-{ASSUMED_EDGE_OFFSET_BOUND_PX} px per edge; use wider lines "
                         f"(higher magnification) or a pin gauge in the same light (combine)")
    if lens is not None:
        notes.append("lens model applied: line centres undistorted before the line fits")
    return Calibration(
        mm_per_px=s, u_mm_per_px=K_COVERAGE * s * rel,
        image_size=(int(img.shape[1]), int(img.shape[0])), gauge=gauge, created=utc_now(),
        label=str(label), edge_offset_px=float(b), u_edge_offset_px=float(u_b),
        scale_absorbs_offset=False, gamma=g, blur_px=blur, lens=lens, notes=tuple(notes))
