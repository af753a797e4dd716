"""Small total-least-squares fits used by the thread profile analysis.

Lines are written as ``x = x_ref + k * (y - y_ref)`` in a frame where ``x`` runs along the
thread axis and ``y`` is radial: thread flanks are steep in that frame (half-angles
15-30 degrees from the normal to the axis), so ``x`` as a function of ``y`` never blows up.
The fit itself is orthogonal (TLS, principal axis of the scatter matrix); only the
reported parameters use this form. See docs/conventions.md for the frames.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._thread_stats import median1d

__all__ = ["FlankLine", "fit_flank_line", "fit_level", "fit_circle_lsq"]


@dataclass(frozen=True)
class FlankLine:
    """A straight flank ``x = x_ref + k (y - y_ref)`` (mm, axis frame).

    ``std_x_ref`` is the standard uncertainty of ``x`` at ``y_ref`` from the point scatter,
    ``std_k`` that of the slope; they are uncorrelated because ``y_ref`` is the centroid
    height of the points used. ``rms`` is the orthogonal RMS residual (mm), ``n`` the number
    of points, ``y_span`` the radial extent of the points.
    """

    x_ref: float
    y_ref: float
    k: float
    std_x_ref: float
    std_k: float
    rms: float
    n: int
    y_span: float

    def x_at(self, y: float | np.ndarray) -> float | np.ndarray:
        """Axial position of the line at radial height ``y``."""
        if isinstance(y, float):  # scalar fast path, the same IEEE operations
            return self.x_ref + self.k * (y - self.y_ref)
        return self.x_ref + self.k * (np.asarray(y) - self.y_ref)

    def std_x_at(self, y: float) -> float:
        """Standard uncertainty of :meth:`x_at` at ``y`` (offset and slope terms)."""
        return math.hypot(self.std_x_ref, (y - self.y_ref) * self.std_k)


def fit_flank_line(xy: np.ndarray, *, robust: bool = True) -> FlankLine:
    """Orthogonal line fit to flank points, reported as ``x(y)``.

    Parameters
    ----------
    xy : ndarray, shape (N, 2)
        Points (x, y) in mm, N >= 3.
    robust : bool
        Drop points further than 3.5 robust sigma from a first fit and refit once.

    Returns
    -------
    FlankLine

    Notes
    -----
    TLS through the centroid along the principal eigenvector of the scatter matrix.
    Uncertainty for i.i.d. orthogonal scatter sigma: offset sigma/sqrt(N) along the normal,
    angle sigma/sqrt(sum t_i^2) (t along the line), the usual straight-line results
    (e.g. ``../shared/vision-notes.md`` section 2: angle sigma*sqrt(12/(L(L^2-1)))).
    """
    xy = np.asarray(xy, dtype=float)
    if xy.ndim != 2 or xy.shape[1] != 2:
        raise ValueError(f"xy must have shape (N, 2), got {xy.shape}")
    if len(xy) < 3:
        raise ValueError(f"xy needs at least 3 points, got {len(xy)}")
    pts = xy
    for _ in range(2 if robust else 1):
        c = pts.mean(axis=0)
        d = pts - c
        w, v = np.linalg.eigh(d.T @ d)
        direction = v[:, 1]
        normal = v[:, 0]
        resid = d @ normal
        if not robust or len(pts) < 8:
            break
        s = 1.4826 * median1d(np.abs(resid - median1d(resid))) + 1e-12
        keep = np.abs(resid) <= 3.5 * s
        if keep.all() or keep.sum() < 3:
            break
        pts = pts[keep]
    n = len(pts)
    t = d @ direction
    dof = max(n - 2, 1)
    sigma = math.sqrt(float(resid @ resid) / dof)
    std_angle = sigma / math.sqrt(max(float(t @ t), 1e-30))
    std_off = sigma / math.sqrt(n)
    dx, dy = float(direction[0]), float(direction[1])
    if abs(dy) < 1e-9:
        raise ValueError("flank points are parallel to the axis")
    k = dx / dy
    # x offset at fixed y from an orthogonal offset: divide by |n_x| = |dy|.
    std_x = std_off / abs(dy)
    # k = tan(beta) with beta the angle from the y axis: dk = sec^2(beta) dbeta.
    std_k = std_angle * (1.0 + k * k)
    return FlankLine(float(c[0]), float(c[1]), float(k), float(std_x), float(std_k),
                     float(math.sqrt(float(resid @ resid) / n)), int(n),
                     float(np.ptp(pts[:, 1])))


def fit_level(y: np.ndarray) -> tuple[float, float, float]:
    """Mean height of flat points: ``(level, std_level, rms)``; robust to a few outliers."""
    y = np.asarray(y, dtype=float)
    if y.size < 2:
        raise ValueError("fit_level needs at least 2 points")
    med = median1d(y)
    s = 1.4826 * median1d(np.abs(y - med)) + 1e-12
    keep = np.abs(y - med) <= 3.5 * s
    if keep.sum() >= 2:
        y = y[keep]
    rms = float(np.std(y, ddof=1))
    return float(np.mean(y)), rms / math.sqrt(y.size), rms


def fit_circle_lsq(xy: np.ndarray) -> tuple[np.ndarray, float, float, float]:
    """Geometric circle fit: ``(centre (2,), radius, std_radius, rms)``.

    Algebraic (Kasa) start refined by Gauss-Newton on the orthogonal distances.
    """
    xy = np.asarray(xy, dtype=float)
    if len(xy) < 4:
        raise ValueError("fit_circle_lsq needs at least 4 points")
    c0 = xy.mean(axis=0)
    d = xy - c0
    a = np.column_stack([2 * d, np.ones(len(d))])
    b = (d ** 2).sum(axis=1)
    sol, *_ = np.linalg.lstsq(a, b, rcond=None)
    centre = c0 + sol[:2]
    r = math.sqrt(max(sol[2] + sol[0] ** 2 + sol[1] ** 2, 1e-30))
    for _ in range(10):
        dv = xy - centre
        dist = np.hypot(dv[:, 0], dv[:, 1])
        res = dist - r
        j = np.column_stack([-dv[:, 0] / dist, -dv[:, 1] / dist, -np.ones(len(dv))])
        step, *_ = np.linalg.lstsq(j, -res, rcond=None)
        centre = centre + step[:2]
        r += step[2]
        if np.abs(step).max() < 1e-12:
            break
    dv = xy - centre
    dist = np.hypot(dv[:, 0], dv[:, 1])
    res = dist - r
    j = np.column_stack([-dv[:, 0] / dist, -dv[:, 1] / dist, -np.ones(len(dv))])
    dof = max(len(xy) - 3, 1)
    s2 = float(res @ res) / dof
    try:
        cov = np.linalg.inv(j.T @ j) * s2
        std_r = math.sqrt(max(cov[2, 2], 0.0))
    except np.linalg.LinAlgError:
        std_r = float("inf")
    return centre, float(r), std_r, float(math.sqrt(float(res @ res) / len(xy)))
