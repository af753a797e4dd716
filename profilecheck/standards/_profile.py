"""Axial-section polyline of a symmetric thread form (straight flanks, flat or round ends).

Geometry (derived, standards-notes §1/§5 for the basic shapes): with half-angle theta, pitch
P and pitch radius r2 (where ridge and groove are each P/2 wide), the sharp ridge of an
external thread is r = r2 + (P/4 - u) / tan(theta), u the axial distance from the ridge
centre. A crest radius rho tangent to both flanks has its centre rho / sin(theta) inside
the sharp apex and meets the flanks at u = rho cos(theta). The result is clipped to the
minor and major radii of the material condition. An internal thread is the mirror
(ridge pointing inward, its crest at the minor diameter).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["axial_polyline", "radius_at"]


def radius_at(u_mm: np.ndarray, *, pitch_mm: float, half_angle_deg: float,
              pitch_diameter_mm: float, major_diameter_mm: float, minor_diameter_mm: float,
              crest_radius_mm: float = 0.0, root_radius_mm: float = 0.0,
              external: bool = True) -> np.ndarray:
    """Radius of the thread surface at axial positions measured from a crest centre."""
    P = float(pitch_mm)
    t = math.tan(math.radians(half_angle_deg))
    s = math.sin(math.radians(half_angle_deg))
    c = math.cos(math.radians(half_angle_deg))
    sign = 1.0 if external else -1.0
    r2 = 0.5 * pitch_diameter_mm
    u = np.abs(np.mod(np.asarray(u_mm, dtype=float) + 0.5 * P, P) - 0.5 * P)  # 0..P/2
    r = r2 + sign * (0.25 * P - u) / t
    if crest_radius_mm > 0:
        rho = crest_radius_mm
        apex = r2 + sign * 0.25 * P / t
        centre = apex - sign * rho / s
        m = u <= rho * c
        r = np.where(m, centre + sign * np.sqrt(np.clip(rho * rho - u * u, 0, None)), r)
    if root_radius_mm > 0:
        rho = root_radius_mm
        v = 0.5 * P - u
        apex = r2 - sign * 0.25 * P / t
        centre = apex + sign * rho / s
        m = v <= rho * c
        r = np.where(m, centre - sign * np.sqrt(np.clip(rho * rho - v * v, 0, None)), r)
    return np.clip(r, 0.5 * minor_diameter_mm, 0.5 * major_diameter_mm)


def axial_polyline(*, pitch_mm: float, half_angle_deg: float, pitch_diameter_mm: float,
                   major_diameter_mm: float, minor_diameter_mm: float,
                   crest_radius_mm: float = 0.0, root_radius_mm: float = 0.0,
                   external: bool = True, n_pitch: int = 3,
                   points_per_pitch: int = 240) -> np.ndarray:
    """(N, 2) polyline (x mm along the axis, r mm) over `n_pitch` pitches from a crest centre.

    Uniform samples plus the exact corner points (flank meets crest / root clip line,
    tangent points of radii), so flats and flank lines are exact.
    """
    P = float(pitch_mm)
    t = math.tan(math.radians(half_angle_deg))
    c = math.cos(math.radians(half_angle_deg))
    sign = 1.0 if external else -1.0
    r2 = 0.5 * pitch_diameter_mm
    # Corner positions within one pitch (u from crest centre, 0..P/2).
    crest_r = 0.5 * (major_diameter_mm if external else minor_diameter_mm)
    root_r = 0.5 * (minor_diameter_mm if external else major_diameter_mm)
    u_crest = 0.25 * P - sign * (crest_r - r2) * t   # flank meets the crest clip
    u_root = 0.25 * P + sign * (r2 - root_r) * t     # flank meets the root clip
    cand = [0.0, u_crest, u_root, crest_radius_mm * c, 0.5 * P - root_radius_mm * c, 0.5 * P]
    u_keys = np.array([v for v in cand if 0.0 <= v <= 0.5 * P])
    one = np.concatenate([u_keys, P - u_keys])
    base = np.linspace(0.0, P, points_per_pitch + 1)
    xs = [base + k * P for k in range(n_pitch)] + [one + k * P for k in range(n_pitch)]
    x = np.unique(np.round(np.concatenate(xs), 12))
    x = x[(x >= 0) & (x <= n_pitch * P + 1e-12)]
    r = radius_at(x, pitch_mm=P, half_angle_deg=half_angle_deg,
                  pitch_diameter_mm=pitch_diameter_mm, major_diameter_mm=major_diameter_mm,
                  minor_diameter_mm=minor_diameter_mm, crest_radius_mm=crest_radius_mm,
                  root_radius_mm=root_radius_mm, external=external)
    return np.column_stack([x, r])
