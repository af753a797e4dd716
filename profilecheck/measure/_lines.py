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

from ._thread_stats import median1d, segment_median, sorted_segments

__all__ = ["FlankLine", "fit_flank_line", "fit_flank_lines", "fit_level", "fit_circle_lsq"]


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
    TLS through the centroid along the principal eigenvector of the scatter matrix (closed
    form for the 2x2, :func:`fit_flank_lines`). Uncertainty for i.i.d. orthogonal scatter
    sigma: offset sigma/sqrt(N) along the normal, angle sigma/sqrt(sum t_i^2) (t along the
    line), the usual straight-line results
    (e.g. ``../shared/vision-notes.md`` section 2: angle sigma*sqrt(12/(L(L^2-1)))).
    """
    xy = np.asarray(xy, dtype=float)
    if xy.ndim != 2 or xy.shape[1] != 2:
        raise ValueError(f"xy must have shape (N, 2), got {xy.shape}")
    if len(xy) < 3:
        raise ValueError(f"xy needs at least 3 points, got {len(xy)}")
    one = np.zeros(len(xy), dtype=np.intp)
    return fit_flank_lines(xy[:, 0], xy[:, 1], one, 1, robust=robust)[0]


def fit_flank_lines(x: np.ndarray, y: np.ndarray, seg: np.ndarray, n_seg: int, *,
                    robust: bool = True) -> list[FlankLine]:
    """:func:`fit_flank_line` on many point sets at once.

    Parameters
    ----------
    x, y : ndarray, shape (N,)
        Points of all sets, mm.
    seg : ndarray of int, shape (N,)
        Set of each point, ``0 .. n_seg - 1``, every set with at least 3 points.
    n_seg : int
        Number of sets.
    robust : bool
        As :func:`fit_flank_line` (the same trimming, set by set).

    Returns
    -------
    list of FlankLine
        One per set, in set order: the fits :func:`fit_flank_line` gives each set alone
        (to rounding: sums are taken set by set in point order).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    seg = np.asarray(seg, dtype=np.intp)
    active = np.ones(x.size, dtype=bool)      # points in each set's current fit
    running = np.ones(n_seg, dtype=bool)      # sets still refining (the rest are final)
    shape = (n_seg,)
    cx, cy, ux, uy, rr, tt = (np.zeros(shape) for _ in range(6))
    n_final = np.zeros(shape, dtype=np.intp)
    for _ in range(2 if robust else 1):
        if not running.any():
            break
        idx = np.flatnonzero(active & running[seg])
        ss = seg[idx]
        xs, ys = x[idx], y[idx]
        n = np.bincount(ss, minlength=n_seg)
        run = np.flatnonzero(running)
        nr = n[run]
        cx[run] = np.bincount(ss, xs, n_seg)[run] / nr
        cy[run] = np.bincount(ss, ys, n_seg)[run] / nr
        dx, dy = xs - cx[ss], ys - cy[ss]
        # principal direction (cos phi, sin phi) of each 2x2 scatter matrix [[sxx, sxy],
        # [sxy, syy]]: phi = atan2(2 sxy, sxx - syy) / 2, the rotation that diagonalises a
        # symmetric 2x2 matrix (the 2-by-2 symmetric Schur decomposition of the Jacobi
        # method, G. H. Golub and C. F. Van Loan, Matrix Computations); it gives the vector
        # np.linalg.eigh gives, to rounding and up to a sign that no result depends on
        phi = 0.5 * np.arctan2(2.0 * np.bincount(ss, dx * dy, n_seg),
                               np.bincount(ss, dx * dx, n_seg) - np.bincount(ss, dy * dy, n_seg))
        ux[run], uy[run] = np.cos(phi[run]), np.sin(phi[run])
        resid = dy * ux[ss] - dx * uy[ss]  # along the normal (-uy, ux)
        t = dx * ux[ss] + dy * uy[ss]
        rr[run] = np.bincount(ss, resid * resid, n_seg)[run]
        tt[run] = np.bincount(ss, t * t, n_seg)[run]
        n_final[run] = nr
        if not robust:
            break
        # robust trim, set by set: 3.5 robust sigma (MAD) from the fit; as fit_flank_line
        med = segment_median(*sorted_segments(resid, ss, n_seg))[ss]
        mad = segment_median(*sorted_segments(np.abs(resid - med), ss, n_seg))
        sd = 1.4826 * mad[ss] + 1e-12
        keep = np.abs(resid) <= 3.5 * sd
        nk = np.bincount(ss, keep, n_seg).astype(np.intp)
        trims = running & (n >= 8) & (nk < n) & (nk >= 3)
        active[idx[~keep & trims[ss]]] = False
        # the count (and below the radial extent) is of the points after the last trim,
        # also when the trim comes after the last fit (as fit_flank_line has always done)
        n_final[trims] = nk[trims]
        running = trims
    # radial extent of each set's final points
    idx = np.flatnonzero(active)
    ss = seg[idx]
    y_hi = np.full(shape, -np.inf)
    y_lo = np.full(shape, np.inf)
    np.maximum.at(y_hi, ss, y[idx])
    np.minimum.at(y_lo, ss, y[idx])
    nf = np.maximum(n_final, 1)
    sigma = np.sqrt(rr / np.maximum(nf - 2, 1))
    std_angle = sigma / np.sqrt(np.maximum(tt, 1e-30))
    if np.any(np.abs(uy) < 1e-9):
        raise ValueError("flank points are parallel to the axis")
    k = ux / uy
    std_x = sigma / np.sqrt(nf) / np.abs(uy)
    std_k = std_angle * (1.0 + k * k)
    rms = np.sqrt(rr / nf)
    return [FlankLine(*v) for v in zip(cx.tolist(), cy.tolist(), k.tolist(), std_x.tolist(),
                                       std_k.tolist(), rms.tolist(), n_final.tolist(),
                                       (y_hi - y_lo).tolist())]


def fit_level(y: np.ndarray) -> tuple[float, float, float]:
    """Mean height of flat points: ``(level, std_level, rms)``; robust to a few outliers."""
    y = np.asarray(y, dtype=float)
    if y.size < 2:
        raise ValueError("fit_level needs at least 2 points")
    med = median1d(y)
    s = 1.4826 * median1d(np.abs(y - med)) + 1e-12
    keep = np.abs(y - med) <= 3.5 * s
    if np.count_nonzero(keep) >= 2:
        y = y[keep]
    # mean and sample std (ddof 1) with the same floating-point steps as np.mean / np.std
    n = y.size
    mean = float(np.add.reduce(y)) / n
    d = y - mean
    rms = math.sqrt(float(np.add.reduce(d * d)) / (n - 1))
    return mean, rms / math.sqrt(n), rms


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
