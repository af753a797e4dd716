"""Lines of sight of an ordinary (entocentric) lens: outline points referred to the axial
section of a thread.

A pinhole camera sees each outline point along its own ray from the projection centre. A
point found in the measurement plane (the plane z = 0 through the part's axis, square to
the optical axis; undistorted image px times the calibrated scale) is where that ray
crosses the plane, not where it grazes the part. This module moves every outline point to
where its ray grazes a surface of revolution about the axis, and gives the ray's remaining
inclination toward the axis for the helix correction (:mod:`.helix`).

Geometry (derived here; frames of docs/conventions.md and :mod:`.helix`). Axis frame in mm:
x along the axis, y radial in the measurement plane (+ toward the image-top edge), z toward
the camera. The projection centre is ``C = (x_c, y_c, Z)``: the foot of the principal
point in the axis frame and the working distance Z. The ray through the plane point
``(X, Y, 0)`` is ``P(t) = C + t (X - x_c, Y - y_c, -Z)`` (t = 1 on the plane). Seen along
the axis, it passes closest to the axis at

    t* = (Z^2 - y_c (Y - y_c)) / ((Y - y_c)^2 + Z^2),

where a cylinder of radius ``rho = |(y, z)(t*)|`` would be tangent to it; the tangent point
lies ``z* = Z (1 - t*)`` toward the camera, so its axial position is
``x* = x_c + t* (X - x_c)``: the axial magnification 1/t* (1 + (Y/Z)^2 for y_c = 0)
is the depth effect ``dM/M = -dZ/Z`` (vision-notes section 0, Sutton et al. 2008) and
``rho`` reproduces the cylinder formula ``D / sqrt(1 - (D/2Z)^2)`` of vision-notes section 4
(y_c = 0: rho = Y / sqrt(1 + (Y/Z)^2)). Turned about the axis by the angle
``beta = atan(z* / |y*|)`` of that point, the ray has no radial inclination left and
leans toward +x by

    tan gamma' = (X - x_c) / sqrt((Y - y_c)^2 + Z^2),

which is the line of sight of the parallel-view helix model at that flank (vision-notes
section 5). The turned section is the helicoid's section at turn angle beta, whose flanks
stand ``a beta`` along the axis from those of the axial section (``a = h L / 2 pi``,
:mod:`.helix` Notes; sign s = +1 on the image-top edge, -1 on the bottom edge), so the
point is referred to the axial section at ``x* - s a beta``.

Turning the ray into its own radial plane is exact, so with the parallel-view solution
of :func:`profilecheck.measure.helix.flank_shift_mm` the result is exact for straight
flanks: :func:`section_flank_x_mm` finds the same graze by a direct search along the
perspective ray (tests/test_lens_thread_sight.py compares both, and both against a ray-cast
render). Not modelled: a part axis out of the measurement plane or not square to the
optical axis (the lens model holds the camera square to the plane).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["SightModel", "refer_to_axial_section", "section_flank_x_mm"]


@dataclass(frozen=True)
class SightModel:
    """Projection centre in the axis frame: ``x_c_mm``, ``y_c_mm`` (foot of the principal
    point in the measurement plane) and ``z_mm`` (working distance Z, > 0)."""

    x_c_mm: float
    y_c_mm: float
    z_mm: float

    def __post_init__(self) -> None:
        for name in ("x_c_mm", "y_c_mm", "z_mm"):
            v = getattr(self, name)
            if not isinstance(v, (int, float)) or not math.isfinite(v):
                raise ValueError(f"{name} must be a finite number, got {v!r}")
        if self.z_mm <= 0:
            raise ValueError(f"z_mm must be > 0, got {self.z_mm!r}")


def refer_to_axial_section(sr_mm: np.ndarray, sight: SightModel, *, lead_mm: float = 0.0,
                           right_hand: bool = True) -> tuple[np.ndarray, np.ndarray]:
    """Move outline points from the measurement plane to the axial section of the part.

    Parameters
    ----------
    sr_mm : (N, 2) array_like
        Points (x along the axis, y radial signed: + image-top edge, - bottom edge), mm,
        where each point's ray crosses the measurement plane.
    sight : SightModel
        Projection centre in the same frame.
    lead_mm : float
        Lead of the thread (0 for a plain surface of revolution: no phase term).
    right_hand : bool
        Hand of the thread (sign of the phase term).

    Returns
    -------
    sr_axial : (N, 2) ndarray
        ``(x*, +/- rho)`` mm: axial position referred to the axial section, radius of the
        ray's closest approach with the sign of the edge.
    tan_gamma : (N,) ndarray
        Inclination of each ray toward +x once turned into its own radial plane
        (module Notes), for :func:`profilecheck.measure.helix.flank_shift_mm`.

    Examples
    --------
    A 6 mm cylinder under the projection centre at Z = 50 mm shows its rim at
    3 / sqrt(1 - (3/50)^2) mm; the rim is referred back to 3 mm:

    >>> import numpy as np
    >>> y = 3.0 / np.sqrt(1 - (3.0 / 50) ** 2)
    >>> p, t = refer_to_axial_section(np.array([[0.0, y], [0.0, -y]]), SightModel(0, 0, 50))
    >>> np.round(p[:, 1], 9).tolist()
    [3.0, -3.0]
    """
    p = np.asarray(sr_mm, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2:
        raise ValueError(f"sr_mm must have shape (N, 2), got {p.shape}")
    if not (math.isfinite(lead_mm) and lead_mm >= 0):
        raise ValueError(f"lead_mm must be >= 0, got {lead_mm!r}")
    xc, yc, z = sight.x_c_mm, sight.y_c_mm, sight.z_mm
    dx = p[:, 0] - xc
    dy = p[:, 1] - yc
    q = dy * dy + z * z
    t = (z * z - yc * dy) / q                      # closest approach to the axis (module Notes)
    y_s = yc + t * dy
    z_s = z * (1.0 - t)
    rho = np.hypot(y_s, z_s)
    s = np.where(p[:, 1] >= 0, 1.0, -1.0)
    beta = np.arctan2(z_s, np.abs(y_s))            # turn of the grazing point toward the camera
    a = (1.0 if right_hand else -1.0) * lead_mm / (2.0 * math.pi)
    x_s = xc + t * dx - s * a * beta
    tan_gamma = dx / np.sqrt(q)
    return np.column_stack([x_s, s * rho]), tan_gamma


_GOLD = (math.sqrt(5.0) - 1.0) / 2.0


def section_flank_x_mm(plane_sr_mm: np.ndarray, sight: SightModel, lead_mm: float,
                       half_angle_rad: float, *, side: str, rho_mm: np.ndarray,
                       right_hand: bool = True, iterations: int = 48) -> np.ndarray:
    """Axial position, at radius ``rho_mm``, of the axial-section flank line whose helicoid
    each ray grazes (exact for straight flanks; perspective and helix together).

    Parameters
    ----------
    plane_sr_mm : (N, 2) array_like
        Where each outline ray crosses the measurement plane (x, signed y), mm.
    sight : SightModel
    lead_mm, half_angle_rad : float
        Lead L and flank angle theta from the normal to the axis (axial section).
    side : {'left', 'right'}
        Flank whose outward normal points to -x ('left') or +x ('right').
    rho_mm : (N,) array_like
        Radius (> 0) at which to read the section flank line.
    right_hand : bool

    Returns
    -------
    (N,) ndarray
        x (mm) of the axial-section flank line at ``rho_mm``.

    Notes
    -----
    The left flank of the axial section is ``x = x0 + rho tan(theta)`` with material on
    +x; on the helicoid the section at turn angle phi stands ``a phi`` further (module
    Notes). A ray outside the material that grazes it therefore gives
    ``x0 = max_t [x(t) - tan(theta) rho(t) - a phi(t)]`` (for the right flank
    ``x0' = min_t [x(t) + tan(theta) rho(t) - a phi(t)]``), with phi measured from the
    edge's own axial section (phi = 0 at the image-top edge, pi at the bottom edge). The
    function of t is concave (convex) near the grazing point, so a golden-section search
    on ``t* +/- 0.9 rho / Z`` around the closest approach finds it; as Z grows this is
    :func:`profilecheck.measure.helix.flank_shift_mm` with ``tan gamma = (X - x_c)/Z``.
    """
    if side not in ("left", "right"):
        raise ValueError(f"side must be 'left' or 'right', got {side!r}")
    if not (0 < half_angle_rad < math.pi / 2):
        raise ValueError(f"half_angle_rad must be in (0, pi/2), got {half_angle_rad!r}")
    p = np.asarray(plane_sr_mm, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2:
        raise ValueError(f"plane_sr_mm must have shape (N, 2), got {p.shape}")
    xc, yc, z = sight.x_c_mm, sight.y_c_mm, sight.z_mm
    dx, dy = p[:, 0] - xc, p[:, 1] - yc
    top = p[:, 1] >= 0
    a = (1.0 if right_hand else -1.0) * lead_mm / (2.0 * math.pi)
    tt = math.tan(half_angle_rad)
    sgn = 1.0 if side == "left" else -1.0  # maximise h (left) or -h (right)

    def h(t):
        x = xc + t * dx
        y = yc + t * dy
        zz = z * (1.0 - t)
        rho = np.hypot(y, zz)
        phi = np.where(top, np.arctan2(zz, y), np.arctan2(-zz, -y))
        return sgn * (x - sgn * tt * rho - a * phi)

    q = dy * dy + z * z
    t0 = (z * z - yc * dy) / q
    half = 0.9 * np.abs(p[:, 1]) / z
    lo, hi = t0 - half, t0 + half
    for _ in range(int(iterations)):  # bracket x 0.618^48 ~ 1e-10
        m1 = hi - _GOLD * (hi - lo)
        m2 = lo + _GOLD * (hi - lo)
        left = h(m1) > h(m2)  # the maximum lies in [lo, m2]
        hi = np.where(left, m2, hi)
        lo = np.where(left, lo, m1)
    x0 = sgn * h(0.5 * (lo + hi))
    return x0 + sgn * tt * np.asarray(rho_mm, dtype=float)
