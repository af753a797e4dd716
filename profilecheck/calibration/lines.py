"""Scale calibration from a ruled scale (stage micrometer): dark lines at a known spacing.

Line *centres* are found from both edges of each line, so the edge offset b cancels in the
centre-to-centre spacing (same-polarity distance) and the scale is free of it
(../shared/vision-notes.md section 4). When the line width is known too, the measured width
minus the true width gives 2 b, the edge offset of this camera and light.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import CalibrationError
from ..quantity import K_COVERAGE, combine_u
from ._pair import (dominant_normal, split_clusters, fit_edge_line, MIN_EDGE_LENGTH_PX,
                    EDGE_LOCATION_BOUND_PX)
from .gauges import (gauge_edges, utc_now, _check_size, _check_u, _check_gamma,
                     ASSUMED_EDGE_OFFSET_BOUND_PX)
from .model import Calibration, Lens

__all__ = ["calibrate_from_lines", "MIN_LINES"]

#: Fewest lines accepted: three centres leave one degree of freedom to check the spacing.
MIN_LINES = 3

_MIN_POINTS = 20
_NORMAL_TOL_DEG = 10.0


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
        True width of the lines; when given the edge offset b is calibrated too.
    u_gauge_mm : float
        Expanded uncertainty (k = 2) of one spacing (mm).
    u_line_width_mm : float
        Expanded uncertainty (k = 2) of the line width (mm).
    gamma, label, roi, lens
        As in :func:`profilecheck.calibration.calibrate_from_pin`.

    Returns
    -------
    Calibration
        ``scale_absorbs_offset = False``. Without ``line_width_mm`` the edge offset is
        not measured: ``edge_offset_px = 0`` with an assumed bound of +/-
        :data:`ASSUMED_EDGE_OFFSET_BOUND_PX` px as its uncertainty, and a note says so.

    Raises
    ------
    CalibrationError
        Fewer than :data:`MIN_LINES` complete lines, or centres that do not fall on a
        regular spacing.

    Notes
    -----
    Each edge is fitted with :func:`profilecheck.imaging.fit_line`; a line's centre is the
    mean of its two edge positions along the common normal u at the image centre. The
    pitch in px is the weighted least-squares slope of centre position against line index;
    its standard uncertainty is the larger of the propagated centre uncertainty and the
    residual scatter (GUM 4.2, type A). Scale = spacing / pitch.
    """
    sp = _check_size("spacing_mm", spacing_mm)
    u_sp = _check_u("u_gauge_mm", u_gauge_mm)
    wmm = None if line_width_mm is None else _check_size("line_width_mm", line_width_mm)
    u_w = _check_u("u_line_width_mm", u_line_width_mm)
    g = _check_gamma(gamma)
    img, edges, xy = gauge_edges(image, roi=roi, gamma=g, lens=lens)
    hint = "no ruled scale found: need at least 3 dark parallel lines across the view on a bright backlight"
    if len(xy) < 2 * MIN_LINES * _MIN_POINTS:
        raise CalibrationError(f"{hint} (only {len(xy)} edge points)")
    normal = np.asarray(edges.normal, dtype=np.float64)
    std = np.asarray(edges.std_px, dtype=np.float64)
    blur = float(edges.blur_px)
    u = dominant_normal(normal)
    cos_tol = math.cos(math.radians(_NORMAL_TOL_DEG))
    ref = np.array([(img.shape[1] - 1) / 2.0, (img.shape[0] - 1) / 2.0])
    gap = max(2.0, 2.0 * blur) if math.isfinite(blur) else 2.0
    found: dict[float, list[tuple[float, float, float]]] = {-1.0: [], 1.0: []}
    rms = []
    n_pts = 0
    for sign in (-1.0, 1.0):
        sel = np.nonzero(sign * (normal @ u) > cos_tol)[0]
        for run in split_clusters(xy[sel] @ u, gap=gap):
            idx = sel[run]
            if len(idx) < _MIN_POINTS:
                continue
            line = fit_edge_line(xy[idx], std[idx], "lines")
            inl = np.asarray(line.inliers, dtype=bool)
            t = (xy[idx][inl] - np.asarray(line.point)) @ np.asarray(line.direction)
            if len(t) == 0 or t.max() - t.min() < MIN_EDGE_LENGTH_PX:
                continue
            pos, s = _position_along(line, ref, u)
            found[sign].append((pos, s, float(line.rms_px)))
            rms.append(float(line.rms_px))
            n_pts += int(np.count_nonzero(inl))
    lows = sorted(found[-1.0])
    highs = sorted(found[1.0])
    # A dark line: its -u edge (bright on the -u side) comes first, its +u edge next.
    pairs = []
    hi = 0
    for k, (p_lo, s_lo, _) in enumerate(lows):
        nxt = lows[k + 1][0] if k + 1 < len(lows) else math.inf
        while hi < len(highs) and highs[hi][0] <= p_lo:
            hi += 1
        if hi < len(highs) and highs[hi][0] < nxt:
            p_hi, s_hi, _ = highs[hi]
            pairs.append((0.5 * (p_lo + p_hi), 0.5 * math.hypot(s_lo, s_hi), p_hi - p_lo,
                          math.hypot(s_lo, s_hi)))
            hi += 1
    if len(pairs) < MIN_LINES:
        raise CalibrationError(f"{hint} (found {len(pairs)} complete line(s))")
    c = np.array([p[0] for p in pairs])
    # statistical centre uncertainty plus the type B edge-location bound of both edges
    sys_c = EDGE_LOCATION_BOUND_PX / math.sqrt(3.0) / math.sqrt(2.0)
    sc = np.sqrt(np.array([p[1] for p in pairs]) ** 2 + sys_c ** 2)
    widths = np.array([p[2] for p in pairs])
    sw = np.sqrt(np.array([p[3] for p in pairs]) ** 2 + 2.0 * (EDGE_LOCATION_BOUND_PX / math.sqrt(3.0)) ** 2)
    est = float(np.median(np.diff(c)))
    if est <= 0 or est < 2.0 * float(np.median(widths)):
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
    notes = [str(x) for x in getattr(edges, "warnings", ())]
    gauge = {"kind": "lines", "size_mm": sp, "u_mm": u_sp, "lines": len(pairs),
             "pitch_px": pitch, "std_pitch_px": std_pitch, "rms_centre_px": float(np.sqrt(np.mean(resid ** 2))),
             "width_px": float(np.mean(widths)), "n_points": n_pts,
             "rms_px": float(max(rms)) if rms else float("nan")}
    if wmm is not None:
        w_px = float(np.mean(widths))
        std_wpx = float(np.sqrt(np.sum(sw ** 2))) / len(sw)
        b = 0.5 * (w_px - wmm / s)
        std_b = 0.5 * combine_u(std_wpx, (u_w / K_COVERAGE) / s, (wmm / s) * rel)
        u_b = K_COVERAGE * std_b
        gauge["line_width_mm"] = wmm
        gauge["u_line_width_mm"] = u_w
    else:
        b = 0.0
        u_b = K_COVERAGE * ASSUMED_EDGE_OFFSET_BOUND_PX / math.sqrt(3.0)
        notes.append(f"edge offset not measured (no line width given): widths and diameters "
                     f"carry an assumed +/-{ASSUMED_EDGE_OFFSET_BOUND_PX} px per edge; combine with "
                     f"a pin gauge in the same light to measure it")
    if lens is not None:
        notes.append("lens model applied: edge points undistorted before the line fits")
    return Calibration(
        mm_per_px=s, u_mm_per_px=K_COVERAGE * s * rel,
        image_size=(int(img.shape[1]), int(img.shape[0])), gauge=gauge, created=utc_now(),
        label=str(label), edge_offset_px=float(b), u_edge_offset_px=float(u_b),
        scale_absorbs_offset=False, gamma=g, blur_px=blur, lens=lens, notes=tuple(notes))
