"""Tooth segmentation and flank / crest / root fits on one silhouette edge of a thread.

Works on an *ordered set of edge points in millimetres* in the limb frame of one edge:
``x`` along the thread axis, ``y`` radial with crests toward ``+y`` (docs/conventions.md).
For the far (lower) edge of a silhouette the caller mirrors ``y`` so that crests again
point to ``+y``; ``x`` keeps its direction, so 'left' stays the flank whose outward normal
points to ``-x`` on both edges (design.md: 'left' = outward normal toward image left).

Algorithm (all pure numpy):

1. crossings of the mid level between the 2 % and 98 % height quantiles, with hysteresis,
   give one crossing per flank: rising in ``x`` = left flank, falling = right flank;
2. each flank is fitted by an orthogonal line to the points of its own crossing window that
   lie inside a band clear of the crest and root corners by ``3 sigma_e + corner drop``
   (``../shared/vision-notes.md`` sections 1.2 and 6: never use contour apexes);
3. crest and root levels are fitted on the flats clear of the corners by ``3 sigma_e``
   (or a circle on the rounded part for radiused forms, corrected for the blur bias
   ``sigma_e^2 / (2R)``, vision-notes section 1.2);
4. pitch is the common slope of flank position against tooth number (left and right
   flanks with their own intercepts), taken at one height so flank-angle errors cancel;
5. the pitch line is where mean tooth thickness equals half the pitch (groove = tooth).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from ..errors import MeasurementError, QualityError
from ._lines import FlankLine, fit_circle_lsq, fit_flank_lines, fit_level
from ._thread_stats import (median1d, quantile1d, quantiles1d, segment_median, segment_quantile,
                            sorted_segments)

__all__ = ["Flank", "Flat", "LimbProfile", "analyse_limb", "find_crossings", "flat_sag",
           "MIN_FULL_TEETH"]

#: Fewest complete teeth (left flank, crest, right flank) a thread measurement rests on.
MIN_FULL_TEETH = 3

#: ``shift(x_mm, y_mm, side) -> axial shift (mm)`` of a flank point *outward from its tooth*
#: in the image; the analysis moves each flank point back by it (helix correction). It is
#: called once per side with the points of all that side's flanks, so it must act point by
#: point.
FlankShift = Callable[[np.ndarray, np.ndarray, str], np.ndarray]
#: ``arc_shift(x_mm, y_mm, slope) -> dx (mm)`` to add to points of a rounded crest or root
#: whose local profile slope d(y)/dx is ``slope`` (helix correction of arcs).
ArcShift = Callable[[np.ndarray, np.ndarray, np.ndarray], np.ndarray]


@dataclass(frozen=True)
class Flank:
    """One fitted flank: ``side`` 'left'|'right', tooth ``index``, its line, angle from the
    normal to the axis (rad, positive = the usual lean of that flank) and its std."""

    side: str
    index: int
    line: FlankLine
    angle_rad: float
    std_angle_rad: float


@dataclass(frozen=True)
class Flat:
    """A crest (``kind='crest'``, tooth ``index``) or root (groove after tooth ``index``).

    ``x`` is its axial centre, ``level`` the radial height of the flat (or of the arc apex for radiused forms),
    ``width`` the flat width between the two flank lines at that height (NaN when
    radiused), ``radius`` the fitted arc radius (NaN for flat forms); ``std_*`` standard
    uncertainties; ``n`` points used.
    """

    kind: str
    index: int
    x: float
    level: float
    std_level: float
    width: float
    std_width: float
    radius: float
    std_radius: float
    n: int


@dataclass(frozen=True)
class LimbProfile:
    """Result of :func:`analyse_limb` (mm and rad; standard uncertainties, k = 1)."""

    flanks: tuple[Flank, ...]
    crests: tuple[Flat, ...]
    roots: tuple[Flat, ...]
    pitch: float
    std_pitch: float
    pitch_per_tooth: np.ndarray
    pitch_residual_rms: float
    y_ref: float
    thickness_at_ref: float
    std_thickness_at_ref: float
    thickness_slope: float
    pitch_line_y: float
    std_pitch_line_y: float
    n_full_teeth: int
    n_points: int
    outlier_teeth: tuple[int, ...] = ()
    warnings: tuple[str, ...] = ()
    x_left: tuple[float, ...] = field(default=())
    x_right: tuple[float, ...] = field(default=())

    def side(self, side: str) -> tuple[Flank, ...]:
        return tuple(f for f in self.flanks if f.side == side)

    def mean_angle(self, side: str) -> tuple[float, float, int]:
        """Mean flank angle (rad) of one side, its standard uncertainty, count.

        The uncertainty is the larger of the fit-propagated value and the standard error
        of the tooth-to-tooth spread (type A), so neither a lucky small spread nor an
        optimistic fit hides the other.
        """
        fl = self.side(side)
        a = np.array([f.angle_rad for f in fl])
        s = np.array([f.std_angle_rad for f in fl])
        return float(a.mean()), _mean_std(a, s), len(fl)

    def flat_stats(self, kind: str, attr: str) -> tuple[float, float, int]:
        """Mean of ``attr`` ('width', 'radius', 'level') over crests or roots."""
        fl = self.crests if kind == "crest" else self.roots
        v = np.array([getattr(f, attr) for f in fl])
        s = np.array([getattr(f, "std_" + attr) for f in fl])
        ok = np.isfinite(v)
        if not ok.any():
            return float("nan"), float("nan"), 0
        return float(v[ok].mean()), _mean_std(v[ok], s[ok]), int(ok.sum())


def _mean_std(values: np.ndarray, stds: np.ndarray) -> float:
    n = len(values)
    fit = math.sqrt(float(np.sum(stds ** 2))) / n
    spread = float(np.std(values, ddof=1)) / math.sqrt(n) if n > 1 else fit
    return max(fit, spread)


def find_crossings(x: np.ndarray, y: np.ndarray, level: float,
                   hysteresis: float) -> list[tuple[float, int]]:
    """Crossings of ``y = level`` along points sorted by ``x``, with hysteresis.

    Returns ``[(x_cross, +1 rising | -1 falling), ...]`` alternating in sign. A crossing
    counts only once ``y`` has gone beyond ``level +/- hysteresis`` on both sides; its
    position is the linear interpolation at the last sign change in between.
    """
    x = np.asarray(x, float)
    y = np.asarray(y, float)
    if x.shape != y.shape or x.ndim != 1:
        raise ValueError("x and y must be 1-D arrays of the same length")
    definite = np.zeros(len(y), dtype=int)
    definite[y > level + hysteresis] = 1
    definite[y < level - hysteresis] = -1
    idx = np.flatnonzero(definite)
    if idx.size < 2:
        return []
    st = definite[idx]
    change = np.flatnonzero(st[1:] != st[:-1])
    sgn = np.sign(y - level)
    # the last sign change between the two definite points j < m of each change: the
    # largest flip i (sgn[i] != sgn[i + 1]) with j <= i < m
    flips = np.flatnonzero(sgn[1:] != sgn[:-1])
    j, m = idx[change], idx[change + 1]
    p = np.searchsorted(flips, m, side="left") - 1
    found = p >= 0
    found[found] = flips[p[found]] >= j[found]
    i = flips[p[found]]
    kind = st[change + 1][found]
    y0, y1 = y[i] - level, y[i + 1] - level
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(y1 == y0, 0.5, y0 / (y0 - y1))
    t = np.minimum(np.maximum(t, 0.0), 1.0)
    xc = x[i] + t * (x[i + 1] - x[i])
    return list(zip(xc.tolist(), kind.tolist()))


def analyse_limb(xy_mm: np.ndarray, *, sigma_e_mm: float, crest_drop_mm: float = 0.0,
                 root_drop_mm: float = 0.0, radiused_crest: bool = False,
                 radiused_root: bool = False, flank_shift: FlankShift | None = None,
                 arc_shift: ArcShift | None = None,
                 root_hidden: Callable[[float, float], float] | None = None,
                 min_full_teeth: int = MIN_FULL_TEETH) -> LimbProfile:
    """Segment one thread edge into teeth and fit flanks, crests and roots.

    Parameters
    ----------
    xy_mm : ndarray, shape (N, 2)
        Edge points (x along the axis, y radial, crests toward +y), mm, any order.
    sigma_e_mm : float
        Effective edge blur (Gaussian sigma) in mm; sets the corner exclusion ``3 sigma_e``.
    crest_drop_mm, root_drop_mm : float
        Radial height of the nominal corner rounding below the crest / above the root
        (``r (1 - sin theta)`` for an arc of radius r tangent to flanks at half-angle theta),
        added to the flank-band exclusion. Without a spec the caller passes a fraction of
        the depth.
    radiused_crest, radiused_root : bool
        Fit an arc (radius) instead of a flat (width).
    flank_shift : callable or None
        Helix / line-of-sight model: the image position of each flank point is moved back
        toward its tooth by ``flank_shift(x, y, side)`` before the line fit (NaN drops the
        point: its outline is not drawn by the flank); called once per side on the points
        of all that side's flanks (:data:`FlankShift`).
    root_hidden : callable or None
        ``root_hidden(x_mm, level_mm) -> mm``: how far in from each end a flat root is
        hidden from the line of sight by the flanks beside it (an inclined ray clears the
        groove only near its middle); the level is fitted on the rest, and a root hidden
        entirely is left out.
    arc_shift : callable or None
        Same model for points of rounded crests and roots (first order, from the local
        slope of a first circle fit).
    min_full_teeth : int
        Refuse (QualityError) with fewer complete teeth.

    Returns
    -------
    LimbProfile

    Raises
    ------
    MeasurementError
        No thread-like relief along the edge.
    QualityError
        Too few complete teeth, or flanks too short once the corners are excluded.
    """
    xy = np.asarray(xy_mm, dtype=float)
    if xy.ndim != 2 or xy.shape[1] != 2:
        raise ValueError(f"xy_mm must have shape (N, 2), got {xy.shape}")
    if not (sigma_e_mm > 0 and math.isfinite(sigma_e_mm)):
        raise ValueError(f"sigma_e_mm must be positive, got {sigma_e_mm!r}")
    finite = np.isfinite(xy[:, 0]) & np.isfinite(xy[:, 1])
    if not finite.all():
        xy = xy[finite]
    if len(xy) < 20:
        raise MeasurementError("too few edge points along the thread edge to find any teeth")
    order = np.argsort(xy[:, 0], kind="stable")
    x, y = xy[order, 0], xy[order, 1]
    hi, lo = quantiles1d(y, (0.98, 0.02))
    depth0 = float(hi - lo)
    if depth0 < 6 * sigma_e_mm:
        raise MeasurementError("no thread teeth found along this edge (the outline is almost "
                               "straight): is a threaded part in view?")
    mid = 0.5 * (hi + lo)
    cross = find_crossings(x, y, mid, 0.2 * depth0)
    rising = np.array([c[0] for c in cross if c[1] > 0])
    if len(rising) < 2:
        raise QualityError(f"only {len(rising)} tooth flank(s) found along the edge; "
                           f"at least {min_full_teeth} complete teeth must be in view")
    p_est = float(median1d(np.diff(rising)))
    if not p_est > 0:
        raise MeasurementError("tooth spacing could not be found along the edge")

    cx = np.array([c[0] for c in cross])
    ck = np.array([c[1] for c in cross])
    # Provisional level of each region between crossings (crest after a rising crossing).
    bounds = np.concatenate([[x[0] - 1.0], cx, [x[-1] + 1.0]])
    # x is sorted: the points strictly between two bounds are one slice
    r_lo = np.searchsorted(x, bounds[:-1], side="right")
    r_hi = np.searchsorted(x, bounds[1:], side="left")
    # region r lies before crossing r: crest if crossing r is falling.
    is_crest = np.append(ck < 0, ck[-1] > 0)
    levels_arr = np.where(is_crest, float(hi), float(lo))
    r = np.flatnonzero(r_hi - r_lo >= 3)
    if r.size:
        pos, seg = _gather(r_lo[r], r_hi[r])
        rows, count = sorted_segments(y[pos], seg, r.size)
        top = is_crest[r]
        levels_arr[r[top]] = segment_quantile(rows[top], count[top], 0.9)
        levels_arr[r[~top]] = segment_quantile(rows[~top], count[~top], 0.1)

    m_crest = 3.0 * sigma_e_mm + crest_drop_mm
    m_root = 3.0 * sigma_e_mm + root_drop_mm
    flanks: list[Flank] = []
    # flank windows, from the middle of the flat before to the middle of the flat after
    w_a = np.empty(len(cx))
    w_b = np.empty(len(cx))
    w_a[1:] = 0.5 * (cx[:-1] + cx[1:])
    w_b[:-1] = w_a[1:]
    w_a[0] = cx[0] - 0.25 * p_est
    w_b[-1] = cx[-1] + 0.25 * p_est
    win_lo = np.searchsorted(x, w_a)
    win_hi = np.searchsorted(x, w_b)
    # Band of each flank clear of the crest and root corners (levels before / after).
    rise = ck > 0
    before, after = levels_arr[:-1], levels_arr[1:]
    band_lo = np.where(rise, before, after) + m_root
    band_hi = np.where(rise, after, before) - m_crest
    if np.any(band_hi - band_lo < 4 * sigma_e_mm):
        raise QualityError(
            "the flanks are too short for this blur once the rounded crest and root "
            "corners are left out: refocus, or use more magnification")
    # Points of every window inside its band, gathered at once (window k is the slice
    # win_lo[k]:win_hi[k] of the sorted points).
    n_win = win_hi - win_lo
    pos = np.arange(int(n_win.sum())) - np.repeat(np.cumsum(n_win) - n_win - win_lo, n_win)
    seg = np.repeat(np.arange(len(cx)), n_win)
    wy = y[pos]
    sel = (wy > band_lo[seg]) & (wy < band_hi[seg])
    pos, seg = pos[sel], seg[sel]
    count = np.bincount(seg, minlength=len(cx))
    y_span = np.full(len(cx), -np.inf)
    if pos.size:
        y_top = np.full(len(cx), -np.inf)
        y_bot = np.full(len(cx), np.inf)
        np.maximum.at(y_top, seg, y[pos])
        np.minimum.at(y_bot, seg, y[pos])
        y_span = y_top - y_bot
    # fewer than 5 points, or spanning < 60 % of the band: the flank is cut by the end of
    # the edge or by damage, not a whole flank
    whole = (count >= 5) & ~(y_span < 0.6 * (band_hi - band_lo))
    keep = whole[seg]
    pos, seg = pos[keep], seg[keep]
    f_x, f_y = x[pos], y[pos]
    if flank_shift is not None:
        # the shift is per point: one call per side for all of that side's flanks
        for side, on in (("left", rise[seg]), ("right", ~rise[seg])):
            if on.any():
                sh = np.asarray(flank_shift(f_x[on], f_y[on], side), dtype=float)
                f_x[on] = f_x[on] + sh if side == "left" else f_x[on] - sh
        ok = np.isfinite(f_x)  # NaN: the outline point is not drawn by the flank
        whole &= np.bincount(seg[ok], minlength=len(cx)) >= 5
        ok &= whole[seg]
        f_x, f_y, seg = f_x[ok], f_y[ok], seg[ok]
    f_seg = np.cumsum(whole)[seg] - 1  # flanks renumbered 0 .. n - 1
    sides = [(int(k), "left" if ck[k] > 0 else "right") for k in np.flatnonzero(whole)]
    lines = fit_flank_lines(f_x, f_y, f_seg, len(sides)) if sides else []
    for (k, side), line in zip(sides, lines):
        ang = math.atan(line.k) if side == "left" else math.atan(-line.k)
        std_ang = line.std_k / (1.0 + line.k ** 2)
        flanks.append(Flank(side, 0, line, ang, std_ang))
    if not flanks:
        raise QualityError("no complete flank found along the thread edge")

    # Tooth numbers: left flanks on round((x - x0)/P), right flanks half a pitch later.
    x0 = min(f.line.x_at(mid) for f in flanks if f.side == "left") if any(
        f.side == "left" for f in flanks) else min(f.line.x_at(mid) for f in flanks) - 0.5 * p_est
    numbered = []
    for f in flanks:
        xm = float(f.line.x_at(mid))
        off = 0.0 if f.side == "left" else 0.5 * p_est
        numbered.append(Flank(f.side, int(round((xm - x0 - off) / p_est)), f.line, f.angle_rad,
                              f.std_angle_rad))
    first = min(f.index for f in numbered)
    numbered = [Flank(f.side, f.index - first, f.line, f.angle_rad, f.std_angle_rad)
                for f in numbered]  # tooth 0 is the first one seen
    flanks = _dedupe(numbered)

    # Outlier flanks (chipped, burred): angle far from the others of the same side.
    warnings: list[str] = []
    bad_teeth: set[int] = set()
    for side in ("left", "right"):
        fl = [f for f in flanks if f.side == side]
        if len(fl) >= 4:
            a = np.array([f.angle_rad for f in fl])
            med = median1d(a)
            mad = 1.4826 * median1d(np.abs(a - med))
            lim = max(6 * mad, math.radians(0.5))
            for f, ai in zip(fl, a):
                if abs(ai - med) > lim:
                    bad_teeth.add(f.index)

    pitch, std_pitch, per_tooth, rms, aL, aR, xl, xr = _fit_pitch(flanks, mid, bad_teeth)
    # Flank position outliers (a tooth out of place: drunken thread or damage).
    res = np.array([float(f.line.x_at(mid)) - ((aL if f.side == "left" else aR) + pitch * f.index)
                    for f in flanks])
    s_rob = 1.4826 * float(median1d(np.abs(res - median1d(res))))
    for f, e in zip(flanks, res):
        if abs(e) > max(6 * s_rob, 0.03 * pitch):
            bad_teeth.add(f.index)
    if bad_teeth:
        pitch, std_pitch, per_tooth, rms, aL, aR, xl, xr = _fit_pitch(flanks, mid, bad_teeth)

    crests, roots = _fit_flats(x, y, flanks, levels_arr, cross, sigma_e_mm, m_crest, m_root,
                               radiused_crest, radiused_root, mid, pitch, arc_shift,
                               root_hidden)
    # Chipped crest: crest level far below the others.
    if len(crests) >= 4:
        lv = np.array([c.level for c in crests])
        med = median1d(lv)
        mad = 1.4826 * median1d(np.abs(lv - med))
        lim = max(6 * mad, 4 * sigma_e_mm, 0.03 * depth0)
        for c, v in zip(crests, lv):
            if abs(v - med) > lim:
                bad_teeth.add(c.index)
    all_idx = [f.index for f in flanks]
    ends = {min(all_idx), max(all_idx)} if all_idx else set()
    inner_bad = sorted(bad_teeth - ends)
    end_bad = sorted(bad_teeth & ends)
    if inner_bad:
        warnings.append(
            f"{len(inner_bad)} tooth/teeth look damaged or out of place (chipped crest, burr "
            f"or drunken lead) and were left out: tooth no. "
            + ", ".join(str(i + 1) for i in inner_bad))
    if end_bad:
        warnings.append("the tooth at each end of the thread that is not full form (run-out, "
                        "chamfer, shoulder) was left out: tooth no. "
                        + ", ".join(str(i + 1) for i in end_bad))
    if bad_teeth:
        flanks = [f for f in flanks if f.index not in bad_teeth]
        crests = [c for c in crests if c.index not in bad_teeth]
        roots = [r for r in roots if r.index not in bad_teeth and r.index + 1 not in bad_teeth]

    left_idx = {f.index for f in flanks if f.side == "left"}
    right_idx = {f.index for f in flanks if f.side == "right"}
    crest_idx = {c.index for c in crests}
    full = left_idx & right_idx & crest_idx
    n_teeth_seen = len(left_idx | right_idx)
    if inner_bad and len(inner_bad) > max(1, n_teeth_seen // 3):
        raise QualityError(f"{len(inner_bad)} of {n_teeth_seen} teeth look damaged or out of "
                           "place: the thread is chipped, torn or drunken, or dirt is on the "
                           "part; clean it and check the lead before trusting any reading")
    if len(full) < min_full_teeth:
        raise QualityError(f"only {len(full)} complete teeth in view; at least "
                           f"{min_full_teeth} are needed: move the part or zoom out")

    # Mean tooth thickness at the reference height and its slope with height.
    kl = np.mean([f.line.k for f in flanks if f.side == "left"])
    kr = np.mean([f.line.k for f in flanks if f.side == "right"])
    thick = aR - aL
    slope = float(kr - kl)
    nl, nr = len(left_idx), len(right_idx)
    std_thick = rms * math.sqrt(1.0 / nl + 1.0 / nr) if rms > 0 else 0.0
    std_thick = max(std_thick, math.sqrt(
        np.mean([f.line.std_x_ref ** 2 for f in flanks]) * (1.0 / nl + 1.0 / nr)))
    if abs(slope) < 1e-6:
        raise MeasurementError("the flanks are parallel: this is not a V or trapezoidal thread")
    y_p = mid + (0.5 * pitch - thick) / slope
    std_y_p = math.hypot(std_thick, 0.5 * std_pitch) / abs(slope)
    n_pts = int(sum(f.line.n for f in flanks) + sum(c.n for c in crests) + sum(r.n for r in roots))
    return LimbProfile(tuple(flanks), tuple(crests), tuple(roots), float(pitch), float(std_pitch),
                       per_tooth, float(rms), float(mid), float(thick), float(std_thick), slope,
                       float(y_p), float(std_y_p), len(full), n_pts, tuple(sorted(bad_teeth)),
                       tuple(warnings), tuple(xl), tuple(xr))


def _dedupe(flanks: list[Flank]) -> list[Flank]:
    """Keep one flank per (side, index): the one with most points."""
    best: dict[tuple[str, int], Flank] = {}
    for f in flanks:
        key = (f.side, f.index)
        if key not in best or f.line.n > best[key].line.n:
            best[key] = f
    return sorted(best.values(), key=lambda f: (f.index, f.side != "left"))


def _fit_pitch(flanks: list[Flank], y_ref: float, exclude: set[int]):
    """Common pitch slope of flank position vs tooth number, separate side intercepts."""
    rows, xs = [], []
    xl: dict[int, float] = {}
    xr: dict[int, float] = {}
    for f in flanks:
        if f.index in exclude:
            continue
        rows.append((f.index, 1.0 if f.side == "left" else 0.0, 0.0 if f.side == "left" else 1.0))
        xs.append(float(f.line.x_at(y_ref)))
        (xl if f.side == "left" else xr)[f.index] = xs[-1]
    a = np.array(rows, dtype=float)
    b = np.array(xs)
    have_l, have_r = bool(xl), bool(xr)
    if len(b) < 3 or len({r[0] for r in rows}) < 2:
        raise QualityError("too few whole flanks to find the pitch: at least "
                           f"{MIN_FULL_TEETH} complete teeth must be in view")
    cols = [0] + ([1] if have_l else []) + ([2] if have_r else [])
    sol, *_ = np.linalg.lstsq(a[:, cols], b, rcond=None)
    res = b - a[:, cols] @ sol
    dof = max(len(b) - len(cols), 1)
    s2 = float(res @ res) / dof
    # Floor the scatter by the flank-line fit uncertainty (a perfect synthetic edge must not
    # claim zero uncertainty).
    fit_var = float(np.mean([f.line.std_x_ref ** 2 for f in flanks if f.index not in exclude]))
    s2 = max(s2, fit_var)
    cov = np.linalg.inv(a[:, cols].T @ a[:, cols]) * s2
    pitch = float(sol[0])
    aL = float(sol[1]) if have_l else float("nan")
    aR = float(sol[cols.index(2)]) if have_r else float("nan")
    per = []
    for i in sorted(set(xl) | set(xr)):
        d = [m[i + 1] - m[i] for m in (xl, xr) if i in m and i + 1 in m]
        if d:  # the mean of one or two values, as np.mean takes it
            per.append(d[0] if len(d) == 1 else (d[0] + d[1]) / 2.0)
    if not have_l or not have_r:
        aL = aL if have_l else aR - 0.5 * pitch
        aR = aR if have_r else aL + 0.5 * pitch
    return (pitch, math.sqrt(cov[0, 0]), np.array(per), math.sqrt(s2), aL, aR,
            [xl[i] for i in sorted(xl)], [xr[i] for i in sorted(xr)])


def _fit_flats(x, y, flanks, levels, cross, sigma_e, m_crest, m_root, radiused_crest,
               radiused_root, mid, pitch, arc_shift=None, root_hidden=None):
    left = {f.index: f for f in flanks if f.side == "left"}
    right = {f.index: f for f in flanks if f.side == "right"}
    crests, roots = [], []
    hi_all = float(median1d([lv for lv, k in zip(levels[1:], [c[1] for c in cross]) if k > 0]
                             or [levels.max()]))
    lo_all = float(median1d([lv for lv, k in zip(levels[1:], [c[1] for c in cross]) if k < 0]
                             or [levels.min()]))
    c_pairs = [(i, left[i], right[i]) for i in sorted(left) if i in right]
    r_pairs = [(i - 1, right[i - 1], left[i]) for i in sorted(left) if i - 1 in right]
    # flat floors: all at once; arcs, and roots partly hidden from the line of sight: one
    # by one
    if radiused_crest:
        crests = [_one_flat("crest", i, x, y, fa, fb, hi_all, sigma_e, m_crest, True,
                            arc_shift) for i, fa, fb in c_pairs]
    else:
        crests = _flat_floors("crest", c_pairs, x, y, hi_all, sigma_e, m_crest)
    if radiused_root or root_hidden is not None:
        roots = [_one_flat("root", i, x, y, fa, fb, lo_all, sigma_e, m_root, radiused_root,
                           arc_shift, root_hidden) for i, fa, fb in r_pairs]
    else:
        roots = _flat_floors("root", r_pairs, x, y, lo_all, sigma_e, m_root)
    return [c for c in crests if c is not None], [r for r in roots if r is not None]


def _ranges(x: np.ndarray, lo: np.ndarray, hi: np.ndarray, i0: np.ndarray, i1: np.ndarray
            ) -> tuple[np.ndarray, np.ndarray]:
    """Per row, the slice ``[j0, j1)`` of the sorted ``x`` with ``lo < x < hi`` inside the
    slice ``[i0, i1)`` (:func:`_open_range` on ``x[i0:i1]``, for many rows at once)."""
    with np.errstate(invalid="ignore"):
        empty = ~(lo < hi)
    j0 = np.minimum(np.maximum(np.searchsorted(x, lo, side="right"), i0), i1)
    j1 = np.minimum(np.maximum(np.searchsorted(x, hi, side="left"), j0), i1)
    j1 = np.where(empty, j0, j1)
    return j0, j1


def _gather(j0: np.ndarray, j1: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Point indices of the slices ``[j0[r], j1[r])`` one after another, and their row."""
    n = np.maximum(j1 - j0, 0)
    pos = np.arange(int(n.sum())) - np.repeat(np.cumsum(n) - n - j0, n)
    return pos, np.repeat(np.arange(len(n)), n)


def _flat_floors(kind, pairs, x, y, level0, sigma_e, margin):
    """:func:`_one_flat` for flat floors (not radiused, nothing hidden) of every pair
    ``(index, fa, fb)`` at once: the same selections, level quantiles and medians; the
    means and sums are taken flat by flat in point order (equal to rounding)."""
    if not pairs:
        return []
    sgn = 1.0 if kind == "crest" else -1.0
    m = len(pairs)
    la = [fa.line for _, fa, _ in pairs]
    lb = [fb.line for _, _, fb in pairs]
    xr_a = np.array([ln.x_ref for ln in la])
    xr_b = np.array([ln.x_ref for ln in lb])
    yr_a = np.array([ln.y_ref for ln in la])
    yr_b = np.array([ln.y_ref for ln in lb])
    k_a = np.array([ln.k for ln in la])
    k_b = np.array([ln.k for ln in lb])
    # The flat lies between the two flanks' mid-height points (x is sorted: slices).
    i0 = np.searchsorted(x, np.minimum(xr_a, xr_b))
    i1 = np.searchsorted(x, np.maximum(xr_a, xr_b))
    ok = i1 - i0 >= 2
    lev0 = np.full(m, float(level0))
    xa, xb = xr_a + k_a * (lev0 - yr_a), xr_b + k_b * (lev0 - yr_b)
    # Local level: a chipped crest or a deeper root sits away from the common level.
    j0, j1 = _ranges(x, np.minimum(xa, xb), np.maximum(xa, xb), i0, i1)
    local = ok & (j1 - j0 >= 3)
    if local.any():
        r = np.flatnonzero(local)
        pos, seg = _gather(j0[r], j1[r])
        lev0[r] = segment_quantile(*sorted_segments(y[pos], seg, len(r)),
                                   0.9 if kind == "crest" else 0.1)
        xa, xb = xr_a + k_a * (lev0 - yr_a), xr_b + k_b * (lev0 - yr_b)
    reach = -(margin + 3 * sigma_e)
    j0, j1 = _ranges(x, xa + 3 * sigma_e, xb - 3 * sigma_e, i0, i1)
    pos, seg = _gather(j0, j1)
    near = sgn * (y[pos] - lev0[seg]) > reach
    pos, seg = pos[near], seg[near]
    n_sel = np.bincount(seg, minlength=m)
    fall = ok & (n_sel < 3)
    if fall.any():  # too few points: the middle half between the flank lines
        r = np.flatnonzero(fall)
        c = 0.5 * (xa[r] + xb[r])
        h = 0.25 * np.abs(xb[r] - xa[r])
        f0, f1 = _ranges(x, c - h, c + h, i0[r], i1[r])
        fpos, fseg = _gather(f0, f1)
        fseg = r[fseg]
        fnear = sgn * (y[fpos] - lev0[fseg]) > reach
        keep = ~fall[seg]
        pos = np.concatenate([pos[keep], fpos[fnear]])
        seg = np.concatenate([seg[keep], fseg[fnear]])
        n_sel = np.bincount(seg, minlength=m)
    good = ok & (n_sel >= 2)
    use = good[seg]
    pos, seg = pos[use], seg[use]
    # fit_level on each floor: median, 3.5 robust sigma (MAD), mean and sample std
    v = y[pos]
    dev = np.abs(v - segment_median(*sorted_segments(v, seg, m))[seg])
    mad = segment_median(*sorted_segments(dev, seg, m))
    keep = dev <= 3.5 * (1.4826 * mad + 1e-12)[seg]
    nk = np.bincount(seg, keep, m)
    keep |= (nk < 2)[seg]
    seg_k, v_k = seg[keep], v[keep]
    n = np.bincount(seg_k, minlength=m)
    with np.errstate(invalid="ignore", divide="ignore"):
        lev = np.bincount(seg_k, v_k, m) / n
        d = v_k - lev[seg_k]
        rms = np.sqrt(np.bincount(seg_k, d * d, m) / (n - 1))
        std_lev = rms / np.sqrt(n)
    # width between the flank lines at the fitted level, and its uncertainty (as _one_flat)
    g = np.flatnonzero(good)
    lv, slv = lev[g], std_lev[g]
    xa_l = xr_a[g] + k_a[g] * (lv - yr_a[g])
    xb_l = xr_b[g] + k_b[g] * (lv - yr_b[g])
    sa = np.array([[ln.std_x_ref, ln.std_k] for ln in la])[g]
    sb = np.array([[ln.std_x_ref, ln.std_k] for ln in lb])[g]
    var_a = np.hypot(sa[:, 0], (lv - yr_a[g]) * sa[:, 1]) ** 2
    var_b = np.hypot(sb[:, 0], (lv - yr_b[g]) * sb[:, 1]) ** 2
    std_w = np.sqrt(var_a + var_b + ((k_b[g] - k_a[g]) * slv) ** 2)
    nan = float("nan")
    return [Flat(kind, pairs[j][0], xm, level, s_level, w, s_w, nan, nan, n)
            for j, xm, level, s_level, w, s_w, n in zip(
                g.tolist(), (0.5 * (xb_l + xa_l)).tolist(), lv.tolist(), slv.tolist(),
                (xb_l - xa_l).tolist(), std_w.tolist(), n_sel[g].tolist())]


def _one_flat(kind, index, x, y, fa, fb, level0, sigma_e, margin, radiused, arc_shift=None,
              hidden=None):
    """Flat between flank lines ``fa`` (at smaller x) and ``fb``; crest is above, root below."""
    sgn = 1.0 if kind == "crest" else -1.0
    # The flat lies between the two flanks' mid-height points; x is sorted, so slice (the
    # x ranges of the local level and of a flat floor below are slices too).
    ra, rb = sorted((fa.line.x_ref, fb.line.x_ref))
    i0, i1 = int(x.searchsorted(ra)), int(x.searchsorted(rb))
    x, y = x[i0:i1], y[i0:i1]
    if len(x) < 2:
        return None
    xa, xb = float(fa.line.x_at(level0)), float(fb.line.x_at(level0))
    # Local level: a chipped crest or a deeper root sits away from the common level.
    j0, j1 = _open_range(x, min(xa, xb), max(xa, xb))
    if j1 - j0 >= 3:
        level0 = float(quantile1d(y[j0:j1], 0.9 if kind == "crest" else 0.1))
        xa, xb = float(fa.line.x_at(level0)), float(fb.line.x_at(level0))
    if radiused:
        # Arc points: between the straight-flank ends, beyond the flank band.
        edge = level0 - sgn * (margin - 3 * sigma_e)
        xa2, xb2 = float(fa.line.x_at(edge)), float(fb.line.x_at(edge))
        lo_x, hi_x = min(xa2, xb2), max(xa2, xb2)
        sel = (x > lo_x) & (x < hi_x) & (sgn * (y - edge) > -sigma_e)
        if sel.sum() < 6:
            return None
        pts = np.column_stack([x[sel], y[sel]])
        centre, r, std_r, _ = fit_circle_lsq(pts)
        if arc_shift is not None and 0 < r < 10 * (hi_x - lo_x + 1e-9):
            d = pts - centre
            slope = -d[:, 0] / np.where(np.abs(d[:, 1]) > 1e-12, d[:, 1], 1e-12)
            pts = pts + np.column_stack([arc_shift(pts[:, 0], pts[:, 1], slope),
                                         np.zeros(len(pts))])
            centre, r, std_r, _ = fit_circle_lsq(pts)
        if not (0 < r < 10 * (hi_x - lo_x + 1e-9)):
            return None
        r_corr = r + sigma_e ** 2 / (2 * r)  # blur bias of a curved edge, vision-notes 1.2
        apex = centre[1] + sgn * r_corr
        return Flat(kind, index, float(centre[0]), float(apex), float(std_r), float("nan"), float("nan"),
                    float(r_corr), float(std_r), int(sel.sum()))
    lo_x, hi_x = xa + 3 * sigma_e, xb - 3 * sigma_e
    if hidden is not None and kind == "root":
        cut = float(hidden(0.5 * (xa + xb), level0))
        lo_x, hi_x = lo_x + cut, hi_x - cut
        if hi_x - lo_x < 2 * sigma_e:
            return None  # the whole floor is hidden behind the flanks
    reach = -(margin + 3 * sigma_e)
    j0, j1 = _open_range(x, lo_x, hi_x)
    ys = y[j0:j1]
    ys = ys[sgn * (ys - level0) > reach]  # near the level
    if ys.size < 3 and hidden is not None and kind == "root":
        return None
    if ys.size < 3:
        c = 0.5 * (xa + xb)
        h = 0.25 * abs(xb - xa)
        j0, j1 = _open_range(x, c - h, c + h)
        ys = y[j0:j1]
        ys = ys[sgn * (ys - level0) > reach]
        if ys.size < 2:
            return None
    lev, std_lev, _ = fit_level(ys)
    w = float(fb.line.x_at(lev) - fa.line.x_at(lev))
    dk = fb.line.k - fa.line.k
    std_w = math.sqrt(fa.line.std_x_at(lev) ** 2 + fb.line.std_x_at(lev) ** 2
                      + (dk * std_lev) ** 2)
    xm = 0.5 * float(fb.line.x_at(lev) + fa.line.x_at(lev))
    return Flat(kind, index, xm, lev, std_lev, w, std_w, float("nan"), float("nan"), int(ys.size))


def _open_range(x: np.ndarray, lo: float, hi: float) -> tuple[int, int]:
    """Slice ``[j0, j1)`` of the sorted ``x`` with ``lo < x < hi``."""
    if not lo < hi:  # empty (also for NaN bounds, as the masks it replaces)
        return 0, 0
    j0 = int(x.searchsorted(lo, side="right"))
    return j0, max(j0, int(x.searchsorted(hi, side="left")))


def flat_sag(xy_mm: np.ndarray, limb: LimbProfile, sigma_e_mm: float,
             kind: str = "root") -> tuple[float, float, float]:
    """Evidence of a rounded crest or root: mean sag of the floor between the flank lines.

    On each crest (or root) of ``limb`` the outline points lying inside the tooth (or
    groove) and at least ``2.5 sigma_e`` from both flank lines (clear of the blurred corners,
    vision-notes section 1.2) are fitted by a parabola ``y = a + b x + c x^2``; its sag over
    that span, ``|c| w^2 / 4`` toward the material, is 0 on a flat and ``w^2 / (8 R)`` on an
    arc of radius R (analytic geometry). (The margin is 2.5 sigma_e along the normal of each
    flank, the fewest points 5: small radii at 10 um/px leave only a few px of floor.)

    Returns
    -------
    (sag_mm, std_sag_mm, radius_mm)
        Mean sag over the flats (positive: bulging as an arc tangent to the flanks would),
        its standard error (larger of fit and spread), and the radius of the arc tangent to
        both flank lines through the fitted bottom, ``R = t sin(theta) / (1 - sin(theta))``
        with ``t`` the distance from the sharp-V apex (NaN when nothing could be fitted).
    """
    sgn = 1.0 if kind == "crest" else -1.0
    xy = np.asarray(xy_mm, dtype=float)
    order = np.argsort(xy[:, 0], kind="stable")
    x, y = xy[order, 0], xy[order, 1]
    left = {f.index: f for f in limb.side("left")}
    right = {f.index: f for f in limb.side("right")}
    flats = limb.crests if kind == "crest" else limb.roots
    rows = []  # per flat: the two flank lines, level, margins, its slice of the sorted x
    for fl in flats:
        fa, fb = ((left.get(fl.index), right.get(fl.index)) if kind == "crest"
                  else (right.get(fl.index), left.get(fl.index + 1)))
        if fa is None or fb is None:
            continue
        dk = fb.line.k - fa.line.k
        if abs(dk) < 1e-9:
            continue
        # sharp-V apex: where the two flank lines meet
        y_v = (fb.line.x_ref - fb.line.k * fb.line.y_ref
               - fa.line.x_ref + fa.line.k * fa.line.y_ref) / (fa.line.k - fb.line.k)
        th = 0.5 * (abs(math.atan(fa.line.k)) + abs(math.atan(fb.line.k)))
        gap = 2.5 * sigma_e_mm / max(math.cos(th), 0.1)
        lo_x, hi_x = sorted((float(fa.line.x_ref), float(fb.line.x_ref)))
        rows.append((fa.line.x_ref, fa.line.k, fa.line.y_ref, fb.line.x_ref, fb.line.k,
                     fb.line.y_ref, float(fl.level), gap,
                     -(0.5 * abs(fl.level - y_v) + 3 * sigma_e_mm), lo_x, hi_x,
                     abs(float(fl.level) - y_v), th))
    if not rows:
        return float("nan"), float("nan"), float("nan")
    r = np.array(rows)
    # every flat's points at once (each flat is a slice of the sorted points)
    pos, seg = _gather(np.searchsorted(x, r[:, 9]), np.searchsorted(x, r[:, 10]))
    px, py = x[pos], y[pos]
    xa = r[seg, 0] + r[seg, 1] * (py - r[seg, 2])
    xb = r[seg, 3] + r[seg, 4] * (py - r[seg, 5])
    inside = ((px > np.minimum(xa, xb) + r[seg, 7]) & (px < np.maximum(xa, xb) - r[seg, 7])
              & (sgn * (py - r[seg, 6]) > r[seg, 8]))
    m = len(rows)
    valid = np.bincount(seg[inside], minlength=m) >= 5
    inside &= valid[seg]
    seg, u, v = seg[inside], px[inside], py[inside]
    u_hi = np.full(m, -np.inf)
    u_lo = np.full(m, np.inf)
    np.maximum.at(u_hi, seg, u)
    np.minimum.at(u_lo, seg, u)
    valid &= u_hi > u_lo  # all on one abscissa: no parabola (singular normal matrix)
    keep = valid[seg]
    seg, u, v = seg[keep], u[keep], v[keep]
    f = np.flatnonzero(valid)
    sags, stds = np.empty(0), np.empty(0)
    if f.size:
        # y = a + b z + c z^2 with z = (x - x_mid) / half-span in [-1, 1], so that the sag
        # |c| w^2 / 4 of the unscaled fit is |c| here; least squares by its normal equations
        xm = np.zeros(m)
        hw = np.ones(m)
        xm[f] = 0.5 * (u_lo[f] + u_hi[f])
        hw[f] = 0.5 * (u_hi[f] - u_lo[f])
        z = (u - xm[seg]) / hw[seg]
        z2 = z * z
        sm = [np.bincount(seg, w, m)[f] for w in (None, z, z2, z2 * z, z2 * z2)]
        sm[0] = np.bincount(seg, minlength=m)[f].astype(float)
        nrm = np.stack([np.stack(sm[i:i + 3], axis=-1) for i in range(3)], axis=-2)
        rhs = np.stack([np.bincount(seg, w, m)[f] for w in (v, v * z, v * z2)], axis=-1)
        try:
            ginv = np.linalg.inv(nrm)
        except np.linalg.LinAlgError:  # a singular floor is left out, the others kept
            ginv = np.full_like(nrm, np.nan)
            for i in range(len(f)):
                try:
                    ginv[i] = np.linalg.inv(nrm[i])
                except np.linalg.LinAlgError:
                    pass
        fine = np.isfinite(ginv).all(axis=(1, 2))
        sol = np.einsum("fij,fj->fi", np.where(fine[:, None, None], ginv, 0.0), rhs)
        full = np.zeros((m, 3))
        full[f] = sol
        res = v - (full[seg, 0] + full[seg, 1] * z + full[seg, 2] * z2)
        cnt = sm[0]
        s2 = np.bincount(seg, res * res, m)[f] / np.maximum(cnt - 3, 1)
        sags = -sgn * sol[fine, 2]
        stds = np.sqrt(np.maximum(ginv[fine, 2, 2] * s2[fine], 0.0))
        f = f[fine]
    radii = [t * math.sin(th) / (1.0 - math.sin(th)) for t, th in r[f, 11:13]]
    sags, stds = sags.tolist(), stds.tolist()
    if not sags:
        return float("nan"), float("nan"), float("nan")
    s_arr, e_arr = np.array(sags), np.array(stds)
    return float(s_arr.mean()), _mean_std(s_arr, e_arr), float(median1d(radii))
