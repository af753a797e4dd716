"""Robust line and circle fits to subpixel edge points, with parameter covariances.

Lines: weighted total least squares (orthogonal regression) by the eigen-decomposition of the
weighted scatter matrix, made robust by iterative trimming at 3 robust standard deviations
(median absolute deviation x 1.4826). Circles: the algebraic fit of Kasa (linear least
squares in (a, b, c) of x^2 + y^2 + a x + b y + c = 0) as a start, then the geometric fit
(Gauss-Newton on the orthogonal distances, Chernov 2010, "Circular and linear regression",
ch. 4), trimmed the same way.

Covariances (k = 1) come from the residual scatter: cov = s^2 (J^T W J)^-1 with
s^2 = sum(w r^2) / (n - p) on normalised weights, or, when per-point standard deviations
``sigma_px`` are given, from those, inflated by sqrt(chi^2 / dof) when the scatter is larger
than they claim (never deflated).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["LineFit", "CircleFit", "Regression", "fit_line", "fit_circle", "regress_line"]

_MAD_TO_SIGMA = 1.4826  # 1 / Phi^-1(3/4): MAD -> standard deviation for Gaussian data
_TRIM_K = 3.0
_MAX_TRIM_ROUNDS = 10
# trimming never rejects a point closer than 3 x this to the fit (exact, rendered data)
_SCALE_FLOOR_PX = 1e-6


def _check_points(xy, name: str = "xy", min_n: int = 2) -> np.ndarray:
    arr = np.asarray(xy, dtype=np.float64)
    if arr.ndim != 2 or arr.shape[1] != 2:
        raise ValueError(f"{name} must have shape (N, 2), got {arr.shape}")
    if arr.shape[0] < min_n:
        raise ValueError(f"{name} needs at least {min_n} points, got {arr.shape[0]}")
    if not np.all(np.isfinite(arr)):
        raise ValueError(f"{name} contains non-finite values")
    return arr


def _weights(n: int, weights, sigma_px) -> tuple[np.ndarray, bool]:
    if weights is not None and sigma_px is not None:
        raise ValueError("give weights or sigma_px, not both")
    if sigma_px is not None:
        s = np.broadcast_to(np.asarray(sigma_px, dtype=np.float64), (n,))
        if not np.all(np.isfinite(s)) or np.any(s <= 0):
            raise ValueError("sigma_px must be finite and > 0")
        return 1.0 / s ** 2, True
    if weights is None:
        return np.ones(n), False
    w = np.asarray(weights, dtype=np.float64)
    if w.shape != (n,):
        raise ValueError(f"weights must have shape ({n},), got {w.shape}")
    if not np.all(np.isfinite(w)) or np.any(w < 0) or not np.any(w > 0):
        raise ValueError("weights must be finite, >= 0 and not all zero")
    return w, False


@dataclass(frozen=True, eq=False)
class LineFit:
    """A fitted straight line in image pixels.

    Attributes
    ----------
    point : ndarray (2,)
        Weighted centroid of the inliers (x, y) px; the line passes through it.
    direction : ndarray (2,)
        Unit direction, oriented from the first inlier toward the last (input order).
    normal : ndarray (2,)
        Unit normal, ``direction`` turned by +90 deg in the image frame: (-dy, dx).
    angle_rad : float
        Angle of ``direction`` from +x, positive toward +y (clockwise on screen), in (-pi, pi].
    cov : ndarray (2, 2)
        Covariance (k = 1) of (angle_rad, offset_px); the offset is the displacement along
        ``normal`` at ``point``, so the two are uncorrelated by construction.
    rms_px : float
        RMS orthogonal residual of the inliers.
    n : int
        Number of inliers.
    inliers : ndarray of bool (N,)
        Which input points were kept.
    t_range : tuple of float
        Extent of the inliers along ``direction`` from ``point`` (min, max), px.
    """

    point: np.ndarray
    direction: np.ndarray
    normal: np.ndarray
    angle_rad: float
    cov: np.ndarray
    rms_px: float
    n: int
    inliers: np.ndarray
    t_range: tuple[float, float] = (0.0, 0.0)

    @property
    def std_angle_rad(self) -> float:
        """Standard uncertainty (k = 1) of the direction angle, rad."""
        return float(np.sqrt(self.cov[0, 0]))

    @property
    def std_offset_px(self) -> float:
        """Standard uncertainty (k = 1) of the line position at ``point``, px."""
        return float(np.sqrt(self.cov[1, 1]))

    def distance(self, points) -> np.ndarray:
        """Signed orthogonal distance (px) of ``points`` (N, 2) from the line, + along ``normal``."""
        p = np.asarray(points, dtype=np.float64)
        return (p - self.point) @ self.normal

    def std_position_at(self, points) -> np.ndarray:
        """Standard uncertainty (px) of the line's normal position at the foot of each point.

        var = var(offset) + t^2 var(angle), t = distance along the line from ``point``.
        """
        p = np.atleast_2d(np.asarray(points, dtype=np.float64))
        t = (p - self.point) @ self.direction
        return np.sqrt(self.cov[1, 1] + t ** 2 * self.cov[0, 0])

    def project(self, points) -> np.ndarray:
        """Feet of the perpendiculars from ``points`` (N, 2) onto the line."""
        p = np.atleast_2d(np.asarray(points, dtype=np.float64))
        t = (p - self.point) @ self.direction
        return self.point + t[:, None] * self.direction


def _tls(xy: np.ndarray, w: np.ndarray):
    sw = w.sum()
    c = (w[:, None] * xy).sum(axis=0) / sw
    d = xy - c
    scatter = (w[:, None] * d).T @ d
    evals, evecs = np.linalg.eigh(scatter)
    direction = evecs[:, 1]
    normal = np.array([-direction[1], direction[0]])
    return c, direction, normal, evals


def fit_line(xy, *, weights=None, sigma_px=None, robust: bool = True) -> LineFit:
    """Fit a straight line to points by (weighted, trimmed) total least squares.

    Parameters
    ----------
    xy : array_like (N, 2)
        Points (x, y) px, N >= 2 (>= 3 for a covariance).
    weights : array_like (N,), optional
        Relative weights (>= 0). The covariance then comes from the residual scatter.
    sigma_px : array_like (N,) or float, optional
        Per-point standard deviations along the normal (e.g. ``EdgeSet.std_px``); weights are
        1 / sigma^2 and the covariance rests on them, inflated if the scatter is larger.
    robust : bool, optional
        Reject points beyond 3 robust standard deviations and refit (iterated), default True.

    Returns
    -------
    LineFit

    Raises
    ------
    ValueError
        Bad shape, non-finite points, bad weights, or all points coincident.

    Notes
    -----
    TLS minimises the sum of squared orthogonal distances: the line direction is the major
    eigenvector of the weighted scatter matrix (Golub & Van Loan, Matrix Computations, 12.3).
    Covariance, for residual variance s^2 and spread of the points along the line:
    var(angle) = s^2 / sum(w t^2), var(offset) = s^2 / sum(w) (weights normalised to the
    noise), the standard straight-line result (vision-notes section 2: angle std
    sigma sqrt(12 / (L (L^2 - 1))) for L unit-spaced points).

    Examples
    --------
    >>> x = np.arange(10.0)
    >>> f = fit_line(np.c_[x, 2.0 + 0.5 * x])
    >>> round(float(np.tan(f.angle_rad)), 12)
    0.5
    """
    pts = _check_points(xy)
    n_all = pts.shape[0]
    w_all, absolute = _weights(n_all, weights, sigma_px)
    keep = w_all > 0
    for _ in range(_MAX_TRIM_ROUNDS if robust else 1):
        if keep.sum() < 2:
            raise ValueError("xy: fewer than 2 usable points")
        c, direction, normal, evals = _tls(pts[keep], w_all[keep])
        if evals[1] <= 0 or evals[1] <= evals[0] * (1 + 1e-12):
            raise ValueError("xy: points are coincident or give no direction")
        if not robust:
            break
        new_keep = _trimmed((pts - c) @ normal, keep, w_all, absolute, min_keep=2)
        if new_keep is None:
            break
        keep = new_keep
    p, w = pts[keep], w_all[keep]
    idx = np.flatnonzero(keep)
    if ((pts[idx[-1]] - pts[idx[0]]) @ direction) < 0:
        direction = -direction
        normal = -normal
    r = (p - c) @ normal
    t = (p - c) @ direction
    m = p.shape[0]
    dof = max(m - 2, 1)
    if absolute:
        chi2 = float((w * r ** 2).sum())
        s2 = max(1.0, chi2 / dof) if m > 2 else 1.0
        wn = w
    else:
        wn = w / w.mean()
        s2 = float((wn * r ** 2).sum()) / dof if m > 2 else np.inf
    stt = float((wn * t ** 2).sum())
    cov = np.array([[s2 / stt, 0.0], [0.0, s2 / wn.sum()]])
    angle = float(np.arctan2(direction[1], direction[0]))
    return LineFit(point=c, direction=direction, normal=normal, angle_rad=angle, cov=cov,
                   rms_px=float(np.sqrt(np.mean(r ** 2))), n=int(m), inliers=keep,
                   t_range=(float(t.min()), float(t.max())))


@dataclass(frozen=True, eq=False)
class CircleFit:
    """A fitted circle (or arc) in image pixels.

    Attributes
    ----------
    centre : ndarray (2,)
        (x, y) px.
    radius : float
        px, as fitted to the points (no blur correction; see
        :func:`profilecheck.imaging.correct_radius_for_blur`).
    cov : ndarray (3, 3)
        Covariance (k = 1) of (cx, cy, radius).
    rms_px : float
        RMS radial residual of the inliers.
    n : int
        Number of inliers.
    inliers : ndarray of bool (N,)
    span_rad : float
        Angular span of the inliers seen from the centre (2 pi for a full circle); short arcs
        give large covariances.
    """

    centre: np.ndarray
    radius: float
    cov: np.ndarray
    rms_px: float
    n: int
    inliers: np.ndarray
    span_rad: float = float("nan")

    @property
    def rms(self) -> float:
        """Alias of ``rms_px`` (docs/contracts.md names it ``rms``)."""
        return self.rms_px

    @property
    def std_radius_px(self) -> float:
        """Standard uncertainty (k = 1) of the radius, px."""
        return float(np.sqrt(self.cov[2, 2]))

    @property
    def std_centre_px(self) -> np.ndarray:
        """Standard uncertainties (k = 1) of (cx, cy), px."""
        return np.sqrt(np.diag(self.cov)[:2])

    def distance(self, points) -> np.ndarray:
        """Signed radial distance (px) of ``points`` from the circle, + outside."""
        p = np.atleast_2d(np.asarray(points, dtype=np.float64))
        return np.hypot(*(p - self.centre).T) - self.radius


def _kasa(p: np.ndarray, w: np.ndarray):
    # x^2 + y^2 + a x + b y + c = 0 (Kasa 1976), linear weighted LS, centred for conditioning.
    m = (w[:, None] * p).sum(0) / w.sum()
    q = p - m
    A = np.c_[q, np.ones(len(q))]
    z = -(q ** 2).sum(1)
    sw = np.sqrt(w)
    sol, *_ = np.linalg.lstsq(A * sw[:, None], z * sw, rcond=None)
    centre = -0.5 * sol[:2]
    r2 = centre @ centre - sol[2]
    if not np.isfinite(r2) or r2 <= 0:
        raise ValueError("xy: points do not determine a circle")
    return centre + m, float(np.sqrt(r2))


def _geometric(p, w, centre, radius, iters: int = 50):
    th = np.array([centre[0], centre[1], radius], dtype=np.float64)
    sw = np.sqrt(w)
    for _ in range(iters):
        d = p - th[:2]
        rho = np.hypot(d[:, 0], d[:, 1])
        rho = np.where(rho > 0, rho, 1e-12)
        r = rho - th[2]
        J = np.c_[-d / rho[:, None], -np.ones(len(p))]
        step, *_ = np.linalg.lstsq(J * sw[:, None], -r * sw, rcond=None)
        th = th + step
        if np.max(np.abs(step)) < 1e-12 * max(1.0, abs(th[2])):
            break
    d = p - th[:2]
    rho = np.hypot(d[:, 0], d[:, 1])
    r = rho - th[2]
    J = np.c_[-d / rho[:, None], -np.ones(len(p))]
    return th, r, J


def fit_circle(xy, *, weights=None, sigma_px=None, robust: bool = True) -> CircleFit:
    """Fit a circle (full or an arc) to points: algebraic start, geometric refinement.

    Parameters
    ----------
    xy : array_like (N, 2)
        Points (x, y) px, N >= 3 (>= 4 for a covariance).
    weights, sigma_px, robust
        As in :func:`fit_line`.

    Returns
    -------
    CircleFit

    Raises
    ------
    ValueError
        Bad input, or collinear points (no finite circle).

    Notes
    -----
    Kasa's algebraic fit (I. Kasa, IEEE Trans. Instrum. Meas. IM-25(1):8-14, 1976) is biased
    toward small radii on short noisy arcs, so it only seeds the geometric (orthogonal
    distance) fit, which is the maximum-likelihood estimate for Gaussian radial noise
    (Chernov, "Circular and linear regression", CRC 2010). Covariance s^2 (J^T W J)^-1.

    Examples
    --------
    >>> t = np.linspace(0, 2 * np.pi, 50, endpoint=False)
    >>> f = fit_circle(np.c_[3 + 10 * np.cos(t), -2 + 10 * np.sin(t)])
    >>> round(f.radius, 9), np.round(f.centre, 9).tolist()
    (10.0, [3.0, -2.0])
    """
    pts = _check_points(xy, min_n=3)
    w_all, absolute = _weights(pts.shape[0], weights, sigma_px)
    keep = w_all > 0
    _c, _d, _n, ev = _tls(pts[keep], w_all[keep])
    if ev[0] <= 1e-12 * ev[1]:
        raise ValueError("xy: points are collinear and do not determine a circle")
    centre, radius = _kasa(pts[keep], w_all[keep])
    for _ in range(_MAX_TRIM_ROUNDS if robust else 1):
        if keep.sum() < 3:
            raise ValueError("xy: fewer than 3 usable points")
        th, _r, _J = _geometric(pts[keep], w_all[keep], centre, radius)
        centre, radius = th[:2], float(th[2])
        if not np.all(np.isfinite(th)):
            raise ValueError("xy: points do not determine a circle (collinear?)")
        if not robust:
            break
        new_keep = _trimmed(np.hypot(*(pts - centre).T) - radius, keep, w_all, absolute,
                            min_keep=3)
        if new_keep is None:
            break
        keep = new_keep
    p, w = pts[keep], w_all[keep]
    th, r, J = _geometric(p, w, centre, radius)
    m = len(p)
    dof = max(m - 3, 1)
    wn = w if absolute else w / w.mean()
    chi2 = float((wn * r ** 2).sum())
    if absolute:
        s2 = max(1.0, chi2 / dof) if m > 3 else 1.0
    else:
        s2 = chi2 / dof if m > 3 else np.inf
    JTJ = (J * wn[:, None]).T @ J
    try:
        cov = s2 * np.linalg.inv(JTJ)
    except np.linalg.LinAlgError:
        cov = np.full((3, 3), np.inf)
    ang = np.sort(np.arctan2(p[:, 1] - th[1], p[:, 0] - th[0]))
    gaps = np.diff(np.r_[ang, ang[0] + 2 * np.pi])
    span = float(2 * np.pi - gaps.max())
    return CircleFit(centre=th[:2].copy(), radius=float(th[2]), cov=cov,
                     rms_px=float(np.sqrt(np.mean(r ** 2))), n=int(m), inliers=keep,
                     span_rad=span)


@dataclass(frozen=True)
class Regression:
    """Ordinary least-squares straight line y = intercept + slope * x.

    Attributes
    ----------
    slope, intercept : float
    cov : ndarray (2, 2)
        Covariance (k = 1) of (slope, intercept) from the residual scatter.
    residual_std : float
        sqrt(RSS / (n - 2)).
    r_squared : float
    n : int
    """

    slope: float
    intercept: float
    cov: np.ndarray = field(repr=False)
    residual_std: float
    r_squared: float
    n: int

    @property
    def std_slope(self) -> float:
        """Standard uncertainty (k = 1) of the slope."""
        return float(np.sqrt(self.cov[0, 0]))

    @property
    def std_intercept(self) -> float:
        """Standard uncertainty (k = 1) of the intercept."""
        return float(np.sqrt(self.cov[1, 1]))


def regress_line(x, y) -> Regression:
    """Ordinary least-squares line of ``y`` on ``x`` (errors in y only).

    For data indexed by an exact count (crest positions against tooth number: the slope is
    the pitch in px), where total least squares (:func:`fit_line`) would be wrong.

    Parameters
    ----------
    x, y : array_like (N,)
        N >= 3, finite, ``x`` not all equal.

    Returns
    -------
    Regression

    Notes
    -----
    Solved by QR (``numpy.linalg.lstsq``) on the centred design matrix, which reproduces the
    certified values of the NIST StRD linear-regression data sets (e.g. Norris).
    """
    xa = np.asarray(x, dtype=np.float64)
    ya = np.asarray(y, dtype=np.float64)
    if xa.ndim != 1 or ya.shape != xa.shape:
        raise ValueError(f"x and y must be 1-D of the same length, got {xa.shape} and {ya.shape}")
    if xa.size < 3:
        raise ValueError(f"x needs at least 3 values, got {xa.size}")
    if not (np.all(np.isfinite(xa)) and np.all(np.isfinite(ya))):
        raise ValueError("x and y must be finite")
    xm, ym = xa.mean(), ya.mean()
    xc = xa - xm
    if not np.any(xc != 0):
        raise ValueError("x values are all equal: no slope")
    A = np.c_[xc, np.ones_like(xc)]
    (b, a), *_ = np.linalg.lstsq(A, ya - ym, rcond=None)
    r = ya - ym - A @ np.array([b, a])
    n = xa.size
    s2 = float(r @ r) / (n - 2)
    sxx = float(xc @ xc)
    slope = float(b)
    intercept = float(ym + a - slope * xm)
    var_b = s2 / sxx
    var_a = s2 * (1.0 / n + xm ** 2 / sxx)
    cov_ab = -xm * var_b
    syy = float((ya - ym) @ (ya - ym))
    return Regression(slope=slope, intercept=intercept,
                      cov=np.array([[var_b, cov_ab], [cov_ab, var_a]]),
                      residual_std=float(np.sqrt(s2)),
                      r_squared=float(1.0 - (r @ r) / syy) if syy > 0 else float("nan"), n=n)


def _trimmed(r: np.ndarray, keep: np.ndarray, w_all: np.ndarray, absolute: bool, *,
             min_keep: int) -> np.ndarray | None:
    """One trimming step of the robust fits: keep points within ``_TRIM_K`` robust sigmas
    (MAD of the kept residuals, floored at ``_SCALE_FLOOR_PX`` or, with absolute weights,
    at the points' own median sigma) of the median residual. ``None`` when the set is
    unchanged or would fall below ``min_keep`` points."""
    rk = r[keep]
    med = np.median(rk)
    scale = _MAD_TO_SIGMA * np.median(np.abs(rk - med))
    floor = _SCALE_FLOOR_PX
    if absolute:
        floor = max(floor, float(np.median(1.0 / np.sqrt(w_all[keep]))))
    new_keep = (w_all > 0) & (np.abs(r - med) <= _TRIM_K * max(scale, floor))
    if new_keep.sum() < min_keep or np.array_equal(new_keep, keep):
        return None
    return new_keep
