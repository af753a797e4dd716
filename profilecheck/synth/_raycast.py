"""Pinhole (entocentric) views of a helical thread by casting each line of sight.

A line of sight misses the thread when every point on it lies outside the material,
r > R(x - a phi) (thread frame of ``_helix``). For one image column the dark run is
bracketed around the parallel-projection outline and its end found where the ray's
largest margin max_t [R - r] changes sign (regula falsi with bisection safeguard). The hit test samples the margin g(t) = R(x - a phi) - r along the chord of the
ray inside the crest cylinder and refines the best sample by golden-section search, so
grazing contacts (the silhouette itself) are found.
"""

from __future__ import annotations

import math

import numpy as np

from ._camera import Camera
from ._profiles import AxialProfile

__all__ = ["ray_margin", "ray_hits", "pinhole_limb_px"]

_GOLD = (math.sqrt(5.0) - 1.0) / 2.0


def _margin(prof, a, o, d, t, x0, axis_y):
    p = o[..., None, :] + t[..., :, None] * d[..., None, :]
    x = p[..., 0] - x0
    y = p[..., 1] - axis_y
    z = p[..., 2]
    r = np.hypot(y, z)
    phi = np.arctan2(z, y)
    return prof.radius(x - a * phi) - r


def ray_margin(prof: AxialProfile, a: float, origin: np.ndarray, direction: np.ndarray, *,
               x0_mm: float = 0.0, axis_y_mm: float = 0.0, n_samples: int = 96) -> np.ndarray:
    """Largest margin max_t [R(x - a phi) - r] along each ray, mm (>= 0: the ray meets the
    thread). Rays (world origin (N, 3), unit direction (N, 3)); the thread axis is the world
    line y = ``axis_y_mm``, z = 0 with profile coordinate u = x - ``x0_mm``. Continuous in
    the ray: a ray passing outside the crest cylinder gets the margin at its closest
    approach to the axis."""
    o = np.asarray(origin, dtype=float)
    d = np.asarray(direction, dtype=float)
    r_max = float(prof.info["major_d_mm"]) / 2 * (1 + 1e-9)
    dy, dz = d[:, 1], d[:, 2]
    qa = dy * dy + dz * dz
    if np.any(qa <= 0):
        raise ValueError("direction must not run parallel to the thread axis")
    # restart each ray at its closest approach to the axis (in the y-z projection): the
    # chord through the crest cylinder then follows without cancellation even when the
    # projection centre is far away
    tc = -((o[:, 1] - axis_y_mm) * dy + o[:, 2] * dz) / qa
    o = o + tc[:, None] * d
    oy, oz = o[:, 1] - axis_y_mm, o[:, 2]
    qc = oy * oy + oz * oz - r_max * r_max
    out = _margin(prof, a, o, d, np.zeros((len(o), 1)), x0_mm, axis_y_mm)[:, 0]
    live = qc < 0
    if not np.any(live):
        return out
    half = np.sqrt(np.where(live, -qc / qa, 0.0))
    t0, t1 = -half, half
    idx = np.nonzero(live)[0]
    s = np.linspace(0.0, 1.0, n_samples)
    tt = t0[idx, None] + (t1[idx] - t0[idx])[:, None] * s[None, :]
    g = _margin(prof, a, o[idx], d[idx], tt, x0_mm, axis_y_mm)
    best = np.argmax(g, axis=1)
    gmax = g[np.arange(len(idx)), best]
    # golden-section refinement on the bracket around the best sample
    step = (t1[idx] - t0[idx]) / (n_samples - 1)
    lo = t0[idx] + (best - 1) * step
    hi = t0[idx] + (best + 1) * step
    oi, di = o[idx], d[idx]
    for _ in range(30):  # bracket x 0.618^30 ~ 1e-6 of a sample step
        m1 = hi - _GOLD * (hi - lo)
        m2 = lo + _GOLD * (hi - lo)
        g1 = _margin(prof, a, oi, di, m1[:, None], x0_mm, axis_y_mm)[:, 0]
        g2 = _margin(prof, a, oi, di, m2[:, None], x0_mm, axis_y_mm)[:, 0]
        gmax = np.maximum(gmax, np.maximum(g1, g2))
        left = g1 > g2
        hi = np.where(left, m2, hi)
        lo = np.where(left, lo, m1)
    out[idx] = gmax
    return out


def ray_hits(prof: AxialProfile, a: float, origin: np.ndarray, direction: np.ndarray,
             **kw) -> np.ndarray:
    """True where a ray meets the thread (:func:`ray_margin` >= 0)."""
    return ray_margin(prof, a, origin, direction, **kw) >= 0


def pinhole_limb_px(camera: Camera, prof: AxialProfile, lead_mm: float, cols_px: np.ndarray,
                    guess_rows_px: np.ndarray, *, limb: str, right_hand: bool = True,
                    x0_mm: float = 0.0, axis_y_mm: float = 0.0, bracket_px: float = 4.0,
                    iterations: int = 40) -> np.ndarray:
    """Image rows (float px) of one limb's outline at the image columns ``cols_px``.

    ``guess_rows_px``: a first guess per column (the parallel outline); the boundary is
    searched within +-``bracket_px`` of it. ``limb``: 'upper' (image top when the world y
    axis is up) or 'lower'.
    """
    a = (1.0 if right_hand else -1.0) * float(lead_mm) / (2 * math.pi)
    cols = np.asarray(cols_px, dtype=float)
    lo = np.asarray(guess_rows_px, dtype=float) - bracket_px
    hi = np.asarray(guess_rows_px, dtype=float) + bracket_px

    def margin(rows):
        o, d = camera.rays(np.column_stack([cols, rows]))
        return ray_margin(prof, a, o, d, x0_mm=x0_mm, axis_y_mm=axis_y_mm)

    if limb not in ("upper", "lower"):
        raise ValueError(f"limb must be 'upper' or 'lower', got {limb!r}")
    # the margin is continuous along the column and changes sign once in the bracket:
    # bisection down to 0.05 px, then regula falsi (Illinois), then the secant root of the
    # final bracket
    gl, gh = margin(lo), margin(hi)
    ok = (gl >= 0) != (gh >= 0)
    n_bis = max(0, int(math.ceil(math.log2(max(2 * bracket_px, 1e-9) / 0.05))))
    for _ in range(min(n_bis, int(iterations))):
        mid = 0.5 * (lo + hi)
        gm = margin(mid)
        same = (gm >= 0) == (gl >= 0)
        lo, gl = np.where(same, mid, lo), np.where(same, gm, gl)
        hi, gh = np.where(same, hi, mid), np.where(same, gh, gm)
    wl, wh = gl.copy(), gh.copy()  # Illinois weights
    for _ in range(8):
        with np.errstate(divide="ignore", invalid="ignore"):
            mid = hi - wh * (hi - lo) / (wh - wl)
        bad = ~np.isfinite(mid) | (mid <= np.minimum(lo, hi)) | (mid >= np.maximum(lo, hi))
        mid = np.where(bad, 0.5 * (lo + hi), mid)
        gm = margin(mid)
        same = (gm >= 0) == (gl >= 0)
        lo, gl, wl = np.where(same, mid, lo), np.where(same, gm, gl), np.where(same, gm, wl)
        hi, gh, wh = np.where(same, hi, mid), np.where(same, gh, gm), np.where(same, wh, gm)
        # halve the weight of the end that stayed (Illinois), so the secant keeps moving
        wh = np.where(same, wh * 0.5, wh)
        wl = np.where(same, wl, wl * 0.5)
    with np.errstate(divide="ignore", invalid="ignore"):
        rows = lo + (hi - lo) * gl / (gl - gh)
    rows = np.where(np.isfinite(rows), rows, 0.5 * (lo + hi))
    rows[~ok] = np.nan
    return rows
