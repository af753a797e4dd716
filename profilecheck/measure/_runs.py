"""Straight runs of edge points, and the shapes built from them (points, parallel pairs).

Private helpers shared by :mod:`profilecheck.measure.tool` and
:mod:`profilecheck.measure.height`. Everything here works on point sets in image pixels,
(x, y) = (col, row) with integer values at pixel centres (``docs/conventions.md``), and on
the line fits of :mod:`profilecheck.imaging`.

A *run* is a stretch of one edge contour that is straight to within a fraction of a pixel.
Corners, nose radii and the 50 % contour's rounding of corners (``../shared/vision-notes.md``
section 1.2) are left out of every run, so lines fitted to runs are free of corner bias and
can be intersected to find a virtual sharp point.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Line", "Run", "Wedge", "straight_runs", "find_wedges", "find_parallel_pairs",
           "intersect", "signed_angle"]


@dataclass(frozen=True)
class Line:
    """A fitted straight edge with its outward normal (dark part -> bright field).

    ``point`` (2,) px on the line; ``direction`` (2,) unit; ``normal`` (2,) unit, pointing
    out of the dark part; ``std_angle_rad`` and ``std_offset_px`` 1-sigma from the fit;
    ``rms_px`` fit residual; ``n`` points used; ``fit`` the underlying
    :class:`profilecheck.imaging.LineFit` (for :func:`profilecheck.imaging.intersect_lines`).
    """

    point: np.ndarray
    direction: np.ndarray
    normal: np.ndarray
    std_angle_rad: float
    std_offset_px: float
    rms_px: float
    n: int
    fit: object

    def distance(self, xy: np.ndarray) -> np.ndarray:
        """Signed distance (px) of points from the line, + on the bright (outward) side."""
        return (np.asarray(xy, float) - self.point) @ self.normal

    def shifted(self, offset_px: float) -> "Line":
        """The same line moved ``offset_px`` along its outward normal."""
        return Line(self.point + offset_px * self.normal, self.direction, self.normal,
                    self.std_angle_rad, self.std_offset_px, self.rms_px, self.n, None)


@dataclass(frozen=True)
class Run:
    """A straight run of edge points: indices into the edge set, its extent and line."""

    index: np.ndarray
    contour: int
    start_xy: np.ndarray
    end_xy: np.ndarray
    length_px: float
    line: Line


@dataclass(frozen=True)
class Wedge:
    """A convex point formed by two runs (tool point, centre cone, tool corner).

    ``apex`` (2,) px is the intersection of the two fitted lines (the virtual sharp), with
    covariance ``apex_cov`` (2, 2) px^2; ``bisector`` (2,) unit points from the body out
    through the apex; ``included_rad`` is the angle between the two edges; ``gap_px`` is the
    distance from the apex to the nearest fitted point (how much the tip is rounded or
    truncated plus the margin left out of the runs).
    """

    a: Run
    b: Run
    apex: np.ndarray
    apex_cov: np.ndarray
    bisector: np.ndarray
    included_rad: float
    gap_px: float


def _line_from_points(xy: np.ndarray, weights: np.ndarray | None, outward_hint: np.ndarray) -> Line:
    from ..imaging import fit_line

    fit = fit_line(xy, weights=weights, robust=True)
    d = np.asarray(fit.direction, float)
    d = d / np.hypot(*d)
    nrm = np.array([-d[1], d[0]])
    if nrm @ outward_hint < 0:
        nrm = -nrm
    return Line(np.asarray(fit.point, float), d, nrm, float(fit.std_angle_rad),
                float(fit.std_offset_px), float(fit.rms_px), int(fit.n), fit)


def _chord_angles(xy: np.ndarray, s: np.ndarray, centres: np.ndarray, half_px: float,
                  closed: bool) -> np.ndarray:
    """Direction (rad) of the chord from arc length c - half to c + half, per centre c.

    NaN where the chord runs off an open contour's end.
    """
    if closed:
        total = s[-1] + float(np.hypot(*(xy[0] - xy[-1])))
        ext_s = np.concatenate([s - total, s, s + total])
        ext_xy = np.concatenate([xy, xy, xy])
    else:
        ext_s, ext_xy = s, xy
    lo_s, hi_s = centres - half_px, centres + half_px
    lo = np.clip(np.searchsorted(ext_s, lo_s, side="left"), 0, len(ext_s) - 1)
    hi = np.clip(np.searchsorted(ext_s, hi_s, side="right") - 1, 0, len(ext_s) - 1)
    v = ext_xy[hi] - ext_xy[lo]
    ang = np.arctan2(v[:, 1], v[:, 0])
    off_end = (lo_s < ext_s[0] - 0.5) | (hi_s > ext_s[-1] + 0.5)
    ang[(np.hypot(v[:, 0], v[:, 1]) < 0.5 * half_px) | off_end] = np.nan
    return ang


def straight_runs(xy: np.ndarray, normal: np.ndarray, contour: np.ndarray, *,
                  weights: np.ndarray | None = None, min_length_px: float = 20.0,
                  trim_px: float = 4.0, turn_tol_deg: float = 4.0,
                  split_tol_px: float = 0.6, window_px: float = 8.0) -> list[Run]:
    """Split ordered edge contours into straight runs and fit a line to each.

    Parameters
    ----------
    xy : (N, 2) float array
        Edge points (px), ordered along each contour.
    normal : (N, 2) float array
        Unit normals dark -> bright (used only to orient each line's normal).
    contour : (N,) int array
        Contour id per point.
    weights : (N,) float array, optional
        Fit weights (1 / std_px^2).
    min_length_px : float
        Shortest run kept (after trimming).
    trim_px : float
        Arc length cut from each end of a run (keeps corner rounding out of the fits).
    turn_tol_deg : float
        A point is "straight" when the chords before and after it differ by less than this.
    split_tol_px : float
        A run whose points stray further than this from its line is split at the worst point.
    window_px : float
        Chord half-length (px) used to measure the local turning.

    Returns
    -------
    list of Run
        Longest first.
    """
    xy = np.asarray(xy, float)
    normal = np.asarray(normal, float)
    contour = np.asarray(contour)
    runs: list[Run] = []
    for cid in np.unique(contour):
        idx = np.flatnonzero(contour == cid)
        if len(idx) < 5:
            continue
        p = xy[idx]
        step = np.hypot(*np.diff(p, axis=0).T)
        s = np.concatenate([[0.0], np.cumsum(step)])
        closed = bool(np.hypot(*(p[0] - p[-1])) < 3.0) and s[-1] > 10.0
        a_before = _chord_angles(p, s, s - window_px / 2, window_px / 2, closed)
        a_after = _chord_angles(p, s, s + window_px / 2, window_px / 2, closed)
        turn = np.abs(np.angle(np.exp(1j * (a_after - a_before))))
        straight = np.nan_to_num(turn, nan=np.pi) < math.radians(turn_tol_deg)
        if closed and straight.all():
            straight[0] = False
        # label contiguous straight stretches (joining across the wrap for closed contours)
        labels = np.cumsum(np.concatenate([[1], np.diff(straight.astype(int)) != 0]))
        groups = [np.flatnonzero((labels == k) & straight) for k in np.unique(labels[straight])]
        if closed and len(groups) > 1 and straight[0] and straight[-1]:
            groups[0] = np.concatenate([groups[-1], groups[0]])
            groups.pop()
        pieces: list[np.ndarray] = []
        for g in groups:
            pieces.extend(_split(p, s, g, split_tol_px, min_length_px))
        kept: list[np.ndarray] = []
        for g in pieces:
            sg = _unwrapped_s(s, g, closed)
            keep = (sg >= sg[0] + trim_px) & (sg <= sg[-1] - trim_px)
            g = g[keep]
            if len(g) >= 5:
                kept.append(g)
        kept = _merge_collinear(p, kept, closed)
        for g in kept:
            length = float(np.hypot(*(p[g[-1]] - p[g[0]])))
            if length < min_length_px:
                continue
            gi = idx[g]
            w = None if weights is None else np.asarray(weights, float)[gi]
            hint = normal[gi].mean(axis=0)
            line = _line_from_points(xy[gi], w, hint)
            runs.append(Run(gi, int(cid), xy[gi[0]].copy(), xy[gi[-1]].copy(), length, line))
    runs.sort(key=lambda r: -r.length_px)
    return runs


def _merge_collinear(p: np.ndarray, groups: list[np.ndarray], closed: bool,
                     tol_px: float = 0.35) -> list[np.ndarray]:
    """Join neighbouring pieces of one contour that lie on one straight line.

    Noise can break a long edge where the local turning test fires by chance; two pieces
    are joined when every point of both lies within ``tol_px`` of a line through both
    (checked with a TLS fit of the union).
    """
    if len(groups) < 2:
        return groups
    groups = sorted(groups, key=lambda g: int(g[0]))
    out = [groups[0]]
    for g in groups[1:]:
        u = np.concatenate([out[-1], g])
        if _straight(p[u], tol_px):
            out[-1] = u
        else:
            out.append(g)
    if closed and len(out) > 1:
        u = np.concatenate([out[-1], out[0]])
        if _straight(p[u], tol_px):
            out[0] = u
            out.pop()
    return out


def _straight(q: np.ndarray, tol_px: float) -> bool:
    c = q.mean(axis=0)
    _, _, vt = np.linalg.svd(q - c, full_matrices=False)
    r = (q - c) @ vt[1]
    return bool(np.percentile(np.abs(r), 98) < tol_px)


def _unwrapped_s(s: np.ndarray, g: np.ndarray, closed: bool) -> np.ndarray:
    sg = s[g].copy()
    if closed and len(sg) > 1:
        jumps = np.flatnonzero(np.diff(sg) < 0)
        if len(jumps):
            sg[jumps[0] + 1:] += s[-1] + 1.0
    return sg


def _split(p: np.ndarray, s: np.ndarray, g: np.ndarray, tol: float, min_len: float) -> list[np.ndarray]:
    """Recursively split a run where it bends (largest chord deviation above ``tol``)."""
    if len(g) < 5:
        return [g]
    a, b = p[g[0]], p[g[-1]]
    d = b - a
    L = float(np.hypot(*d))
    if L < 1e-9:
        return [g]
    nrm = np.array([-d[1], d[0]]) / L
    dev = (p[g] - a) @ nrm
    k = int(np.argmax(np.abs(dev)))
    if abs(dev[k]) <= tol or k < 2 or k > len(g) - 3 or L < 2 * min_len / 3:
        return [g]
    return _split(p, s, g[:k + 1], tol, min_len) + _split(p, s, g[k:], tol, min_len)


def intersect(a: Line, b: Line) -> tuple[np.ndarray, np.ndarray]:
    """Intersection of two fitted lines and its covariance (px, px^2)."""
    from ..imaging import intersect_lines

    if a.fit is not None and b.fit is not None:
        pt, cov = intersect_lines(a.fit, b.fit)
        return np.asarray(pt, float), np.asarray(cov, float)
    m = np.array([a.normal, b.normal])
    pt = np.linalg.solve(m, np.array([a.normal @ a.point, b.normal @ b.point]))
    return pt, np.full((2, 2), np.nan)


def signed_angle(u: np.ndarray, v: np.ndarray) -> float:
    """Angle (rad) that turns unit vector ``u`` onto ``v``; + toward +y (clockwise on screen)."""
    return math.atan2(u[0] * v[1] - u[1] * v[0], u[0] * v[0] + u[1] * v[1])


def find_wedges(runs: list[Run], *, min_included_deg: float = 15.0,
                max_included_deg: float = 100.0, max_gap_frac: float = 0.6) -> list[Wedge]:
    """Every convex point two runs form, best (shortest gap relative to run length) first.

    Two runs form a point when their lines meet ahead of both runs (each run lies wholly
    behind the apex along the bisector), the outward normals open away from each other, and
    the included angle is in range. The apex is the intersection of the fitted lines, never
    a contour extreme (the 50 % contour recedes from a sharp corner,
    ``../shared/vision-notes.md`` section 1.2).
    """
    out: list[Wedge] = []
    for i in range(len(runs)):
        for j in range(i + 1, len(runs)):
            w = _wedge(runs[i], runs[j], min_included_deg, max_included_deg)
            if w is None:
                continue
            if w.gap_px > max_gap_frac * min(w.a.length_px, w.b.length_px) + 40.0:
                continue
            out.append(w)
    out.sort(key=lambda w: w.gap_px / min(w.a.length_px, w.b.length_px))
    return out


def _wedge(ra: Run, rb: Run, lo_deg: float, hi_deg: float) -> Wedge | None:
    na, nb = ra.line.normal, rb.line.normal
    cos_nn = float(np.clip(na @ nb, -1, 1))
    included = math.pi - math.acos(cos_nn)
    if not (math.radians(lo_deg) <= included <= math.radians(hi_deg)):
        return None
    bis = na + nb
    if np.hypot(*bis) < 1e-9:
        return None
    bis = bis / np.hypot(*bis)
    try:
        apex, cov = intersect(ra.line, rb.line)
    except (np.linalg.LinAlgError, ValueError):
        return None
    ends = np.array([ra.start_xy, ra.end_xy, rb.start_xy, rb.end_xy])
    along = (ends - apex) @ bis
    if np.any(along > 0.5):
        return None
    # each run must lie on its own side of the bisector (a true point, not a crossing)
    perp = np.array([-bis[1], bis[0]])
    sa = np.sign(((np.array([ra.start_xy, ra.end_xy]) - apex) @ perp))
    sb = np.sign(((np.array([rb.start_xy, rb.end_xy]) - apex) @ perp))
    if not (abs(sa.sum()) == 2 and abs(sb.sum()) == 2 and sa[0] != sb[0]):
        return None
    gap = float(min(np.hypot(*(e - apex)) for e in ends))
    return Wedge(ra, rb, apex, cov, bis, included, gap)


def find_parallel_pairs(runs: list[Run], *, exclude: tuple[Run, ...] = (),
                        tol_deg: float = 2.0, dark_between: bool = True,
                        min_overlap: float = 0.3) -> list[tuple[Run, Run]]:
    """Pairs of runs on parallel lines with opposite outward normals, longest first.

    With ``dark_between`` the dark part lies between the two lines (a shank, a bar), i.e.
    each normal points away from the other line. The two runs must face each other over at
    least ``min_overlap`` of the shorter one's length.
    """
    ex = {id(r) for r in exclude}
    cand = [r for r in runs if id(r) not in ex]
    pairs: list[tuple[float, Run, Run]] = []
    for i in range(len(cand)):
        for j in range(i + 1, len(cand)):
            a, b = cand[i], cand[j]
            if a.line.normal @ b.line.normal > -math.cos(math.radians(tol_deg)):
                continue
            sep = float((b.line.point - a.line.point) @ a.line.normal)
            if dark_between and sep >= -1.0:
                continue
            d = a.line.direction
            ia = sorted([float(a.start_xy @ d), float(a.end_xy @ d)])
            ib = sorted([float(b.start_xy @ d), float(b.end_xy @ d)])
            overlap = min(ia[1], ib[1]) - max(ia[0], ib[0])
            if overlap < min_overlap * min(ia[1] - ia[0], ib[1] - ib[0]):
                continue  # side by side, not facing each other: two different parts
            pairs.append((a.length_px + b.length_px, a, b))
    pairs.sort(key=lambda t: -t[0])
    return [(a, b) for _, a, b in pairs]
