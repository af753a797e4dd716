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
from ._lines import FlankLine, fit_circle_lsq, fit_flank_line, fit_level
from ._thread_stats import median1d, quantile1d

__all__ = ["Flank", "Flat", "LimbProfile", "analyse_limb", "find_crossings", "flat_sag",
           "MIN_FULL_TEETH"]

#: Fewest complete teeth (left flank, crest, right flank) a thread measurement rests on.
MIN_FULL_TEETH = 3

#: ``shift(x_mm, y_mm, side) -> axial shift (mm)`` of a flank point *outward from its tooth*
#: in the image; the analysis moves each flank point back by it (helix correction).
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
    out: list[tuple[float, int]] = []
    for c in change:
        j, m = idx[c], idx[c + 1]
        seg = sgn[j:m + 1]
        flips = np.flatnonzero(seg[1:] != seg[:-1])
        if flips.size == 0:
            continue
        i = j + int(flips[-1])
        y0, y1 = y[i] - level, y[i + 1] - level
        t = 0.5 if y1 == y0 else y0 / (y0 - y1)
        t = min(max(t, 0.0), 1.0)
        out.append((float(x[i] + t * (x[i + 1] - x[i])), int(st[c + 1])))
    return out


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
        point: its outline is not drawn by the flank).
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
    xy = xy[np.all(np.isfinite(xy), axis=1)]
    if len(xy) < 20:
        raise MeasurementError("too few edge points along the thread edge to find any teeth")
    order = np.argsort(xy[:, 0], kind="stable")
    x, y = xy[order, 0], xy[order, 1]
    hi, lo = quantile1d(y, 0.98), quantile1d(y, 0.02)
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
    levels = []
    for r in range(len(bounds) - 1):
        sel = (x > bounds[r]) & (x < bounds[r + 1])
        # region r lies before crossing r: crest if crossing r is falling.
        is_crest = bool(ck[r] < 0) if r < len(ck) else bool(ck[-1] > 0)
        if sel.sum() >= 3:
            levels.append(float(quantile1d(y[sel], 0.9 if is_crest else 0.1)))
        else:
            levels.append(float(hi if is_crest else lo))
    levels_arr = np.array(levels)

    m_crest = 3.0 * sigma_e_mm + crest_drop_mm
    m_root = 3.0 * sigma_e_mm + root_drop_mm
    flanks: list[Flank] = []
    for k, (xc, kind) in enumerate(cross):
        side = "left" if kind > 0 else "right"
        before, after = levels_arr[k], levels_arr[k + 1]
        hi_loc, lo_loc = (after, before) if kind > 0 else (before, after)
        band_lo, band_hi = lo_loc + m_root, hi_loc - m_crest
        if band_hi - band_lo < 4 * sigma_e_mm:
            raise QualityError(
                "the flanks are too short for this blur once the rounded crest and root "
                "corners are left out: refocus, or use more magnification")
        # Window: from the middle of the flat before to the middle of the flat after.
        xa = 0.5 * (cx[k - 1] + xc) if k > 0 else xc - 0.25 * p_est
        xb = 0.5 * (cx[k + 1] + xc) if k + 1 < len(cx) else xc + 0.25 * p_est
        i0, i1 = np.searchsorted(x, [xa, xb])  # x is sorted: slice the window first
        wx, wy = x[i0:i1], y[i0:i1]
        sel = (wy > band_lo) & (wy < band_hi)
        if sel.sum() < 5:
            continue
        px, py = wx[sel], wy[sel]
        if float(py.max() - py.min()) < 0.6 * (band_hi - band_lo):
            continue  # flank cut by the end of the edge or by damage: not a whole flank
        if flank_shift is not None:
            s = np.asarray(flank_shift(px, py, side), dtype=float)
            ok = np.isfinite(s)  # NaN: the outline point is not drawn by the flank
            if ok.sum() < 5:
                continue
            px, py, s = px[ok], py[ok], s[ok]
            px = px + s if side == "left" else px - s
        line = fit_flank_line(np.column_stack([px, py]))
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
    for f in flanks:
        if f.index in exclude:
            continue
        rows.append((f.index, 1.0 if f.side == "left" else 0.0, 0.0 if f.side == "left" else 1.0))
        xs.append(float(f.line.x_at(y_ref)))
    a = np.array(rows, dtype=float)
    b = np.array(xs)
    have_l, have_r = a[:, 1].sum() > 0, a[:, 2].sum() > 0
    if len(b) < 3 or len(np.unique(a[:, 0])) < 2:
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
    xl = {f.index: float(f.line.x_at(y_ref)) for f in flanks if f.side == "left" and f.index not in exclude}
    xr = {f.index: float(f.line.x_at(y_ref)) for f in flanks if f.side == "right" and f.index not in exclude}
    for i in sorted(set(xl) | set(xr)):
        d = [m[i + 1] - m[i] for m in (xl, xr) if i in m and i + 1 in m]
        if d:
            per.append(float(np.mean(d)))
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
    for i in sorted(left):
        if i in right:
            crests.append(_one_flat("crest", i, x, y, left[i], right[i], hi_all, sigma_e,
                                    m_crest, radiused_crest, arc_shift))
        if i - 1 in right:
            roots.append(_one_flat("root", i - 1, x, y, right[i - 1], left[i], lo_all, sigma_e,
                                   m_root, radiused_root, arc_shift, root_hidden))
    return [c for c in crests if c is not None], [r for r in roots if r is not None]


def _one_flat(kind, index, x, y, fa, fb, level0, sigma_e, margin, radiused, arc_shift=None,
              hidden=None):
    """Flat between flank lines ``fa`` (at smaller x) and ``fb``; crest is above, root below."""
    sgn = 1.0 if kind == "crest" else -1.0
    # The flat lies between the two flanks' mid-height points; x is sorted, so slice.
    i0, i1 = np.searchsorted(x, sorted((fa.line.x_ref, fb.line.x_ref)))
    x, y = x[i0:i1], y[i0:i1]
    if len(x) < 2:
        return None
    xa, xb = float(fa.line.x_at(level0)), float(fb.line.x_at(level0))
    # Local level: a chipped crest or a deeper root sits away from the common level.
    around = (x > min(xa, xb)) & (x < max(xa, xb))
    if around.sum() >= 3:
        level0 = float(quantile1d(y[around], 0.9 if kind == "crest" else 0.1))
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
    near = sgn * (y - level0) > -(margin + 3 * sigma_e)
    sel = (x > lo_x) & (x < hi_x) & near
    if sel.sum() < 3 and hidden is not None and kind == "root":
        return None
    if sel.sum() < 3:
        c = 0.5 * (xa + xb)
        h = 0.25 * abs(xb - xa)
        sel = (x > c - h) & (x < c + h) & near
        if sel.sum() < 2:
            return None
    lev, std_lev, _ = fit_level(y[sel])
    w = float(fb.line.x_at(lev) - fa.line.x_at(lev))
    dk = fb.line.k - fa.line.k
    std_w = math.sqrt(fa.line.std_x_at(lev) ** 2 + fb.line.std_x_at(lev) ** 2
                      + (dk * std_lev) ** 2)
    xm = 0.5 * float(fb.line.x_at(lev) + fa.line.x_at(lev))
    return Flat(kind, index, xm, lev, std_lev, w, std_w, float("nan"), float("nan"), int(sel.sum()))


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
    sags, stds, radii = [], [], []
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
        i0, i1 = np.searchsorted(x, [lo_x, hi_x])
        px, py = x[i0:i1], y[i0:i1]
        xa, xb = fa.line.x_at(py), fb.line.x_at(py)
        inside = ((px > np.minimum(xa, xb) + gap) & (px < np.maximum(xa, xb) - gap)
                  & (sgn * (py - fl.level) > -(0.5 * abs(fl.level - y_v) + 3 * sigma_e_mm)))
        if inside.sum() < 5:
            continue
        u, v = px[inside], py[inside]
        xm = 0.5 * (u.min() + u.max())
        a = np.column_stack([np.ones(len(u)), u - xm, (u - xm) ** 2])
        sol, *_ = np.linalg.lstsq(a, v, rcond=None)
        res = v - a @ sol
        s2 = float(res @ res) / max(len(u) - 3, 1)
        try:
            std_c = math.sqrt(max(float(np.linalg.inv(a.T @ a)[2, 2]) * s2, 0.0))
        except np.linalg.LinAlgError:
            continue
        w2 = 0.25 * float(np.ptp(u)) ** 2
        sags.append(-sgn * float(sol[2]) * w2)
        stds.append(std_c * w2)
        t = abs(float(fl.level) - y_v)
        radii.append(t * math.sin(th) / (1.0 - math.sin(th)))
    if not sags:
        return float("nan"), float("nan"), float("nan")
    s_arr, e_arr = np.array(sags), np.array(stds)
    return float(s_arr.mean()), _mean_std(s_arr, e_arr), float(median1d(radii))
