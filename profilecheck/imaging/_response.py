"""Estimate a camera's gamma (power-law response) from the edges of a backlit image.

A linear camera records a blurred edge as a symmetric step: the edge-spread function of a
symmetric PSF is point-symmetric about the edge. A power-law encoding code = lin ** (1 / gamma)
bends it asymmetrically. So the gamma that makes the blurred-step model of
:mod:`._stepfit` fit best, after linearising with it, estimates the camera's decoding
exponent. The cost is the residual sum of squares in the recorded (encoded) domain, to first
order: linear-domain residuals are weighted by 1 / (d lin / d code)^2 =
1 / (gamma code^(gamma - 1))^2, so images with different gammas compare fairly.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["GammaEstimate", "estimate_gamma"]

_GAMMA_LO, _GAMMA_HI = 0.4, 3.5


@dataclass(frozen=True)
class GammaEstimate:
    """Result of :func:`estimate_gamma`.

    Attributes
    ----------
    gamma : float
        Decoding exponent: linear = code ** gamma (pass it to ``find_edges(gamma=...)``).
    std : float
        Standard uncertainty (k = 1) from the curvature of the cost (Delta chi^2 = 1).
    n_profiles : int
        Edge profiles the estimate rests on.
    """

    gamma: float
    std: float
    n_profiles: int


def estimate_gamma(img, *, roi=None, max_profiles: int = 400) -> GammaEstimate:
    """Estimate the camera's gamma from the shape of the silhouette's blurred edges.

    Parameters
    ----------
    img : ndarray (rows, cols)
        Grey image in [0, 1] as recorded (not linearised), with a backlit silhouette.
    roi : (x_min, y_min, x_max, y_max), optional
        As in :func:`find_edges`.
    max_profiles : int
        Use at most this many edge profiles, spread along the contours.

    Returns
    -------
    GammaEstimate

    Raises
    ------
    MeasurementError
        No usable edges (no silhouette, or too few clean straight-edge profiles).

    Notes
    -----
    Needs edges blurred over more than about one pixel (sigma_b >= 0.7 px): a sharper edge
    has too few samples on its ramp to show the asymmetry. Gamma and a black-level offset are
    partly interchangeable; the estimate assumes code 0 means no light. Prefer a camera set
    to a linear response; use this to check it, or when it cannot be set.
    """
    import cv2
    from scipy.optimize import minimize_scalar

    from ..errors import MeasurementError
    from ._contours import iso_contours
    from ._seeds import seeds_from_contours
    from ._stepfit import fit_steps
    from .edges import _SEED_LEVEL, _check_roi, _fit_group, _gather, _window_mask
    from .silhouette import flatten_backlight

    a = np.asarray(img)
    if a.ndim != 2 or not np.issubdtype(a.dtype, np.floating):
        raise ValueError("img must be a 2-D float image in [0, 1]")
    if not isinstance(max_profiles, (int, np.integer)) or max_profiles < 20:
        raise ValueError(f"max_profiles must be an int >= 20, got {max_profiles!r}")
    x0r, y0r, x1r, y1r = _check_roi(roi, a.shape)
    a = a[y0r:y1r, x0r:x1r].astype(np.float64, copy=False)
    censored = (a >= 1.0 - 1e-9) | (a <= 1e-9)
    sil = flatten_backlight(a)
    if sil.contrast < 0.05:
        raise MeasurementError("no silhouette to estimate the camera response from")
    fs = cv2.GaussianBlur(sil.flat, (0, 0), 1.0, borderType=cv2.BORDER_REPLICATE)
    seeds = seeds_from_contours(iso_contours(fs, _SEED_LEVEL))
    usable = np.flatnonzero(~seeds.corner)
    if len(usable) < 20:
        raise MeasurementError("too few edge points to estimate the camera response")
    idx = usable[np.linspace(0, len(usable) - 1, min(max_profiles, len(usable))).astype(int)]
    # blur and windows from a first fit on the recorded data
    res0, _s, _d, enough, hw, _t = _fit_group(a, fs, a, seeds, idx,
                                              1.0, hw=np.full(len(idx), 12))
    sb = res0.s * seeds.n_axis[idx]
    good = res0.converged & enough & np.isfinite(sb)
    if good.sum() < 20:
        raise MeasurementError("too few clean edge profiles to estimate the camera response")
    sigma_b = float(np.median(sb[good]))
    idx = idx[good]
    se = math.sqrt(sigma_b ** 2 + 1 / 12)
    n_a, n_o = seeds.n_axis[idx], seeds.n_other[idx]
    hw = np.clip(np.ceil(5 * se / n_a), 7, 30).astype(int)
    HW = int(hw.max())
    vals, fvals, inb, rr, cc, start = _gather(a, fs, seeds, idx, HW)
    m, direction = _window_mask(fvals, inb, hw, np.ceil(2.5 * se / n_a).astype(int), HW)
    m &= ~censored[rr, cc]
    x_seed = seeds.pos[idx] - start
    t = n_o / n_a
    code = np.clip(vals, 0.02, 1.0)

    def cost(gamma: float) -> float:
        y = np.power(np.clip(vals, 0.0, None), gamma)
        w = m / (gamma * np.power(code, gamma - 1.0))
        r = fit_steps(y, w, direction, t, x_seed, np.full(len(idx), sigma_b) / n_a)
        return float(np.sum(r.rss))

    grid = np.exp(np.linspace(math.log(_GAMMA_LO), math.log(_GAMMA_HI), 9))
    costs = np.array([cost(g) for g in grid])
    k = int(np.argmin(costs))
    lo, hi = grid[max(k - 1, 0)], grid[min(k + 1, len(grid) - 1)]
    opt = minimize_scalar(lambda g: cost(g), bounds=(lo, hi), method="bounded",
                          options={"xatol": 1e-3})
    g0 = float(opt.x)
    c0 = float(opt.fun)
    n_dof = float(m.sum() - 4 * len(idx))
    s2 = c0 / max(n_dof, 1.0)
    h = 0.02 * g0
    curv = (cost(g0 + h) - 2 * c0 + cost(g0 - h)) / h ** 2
    std = math.sqrt(2 * s2 / curv) if curv > 0 else float("inf")
    if not (_GAMMA_LO < g0 < _GAMMA_HI):
        raise MeasurementError("the camera response could not be estimated (edges too sharp "
                               "or too noisy)")
    return GammaEstimate(gamma=g0, std=std, n_profiles=int(len(idx)))
