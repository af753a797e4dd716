"""The helix (lead-angle) effect on a backlit thread silhouette, and its correction.

A thread seen square to its axis does not show its axial section: the outline is the
envelope of the helicoidal flanks, and each flank stands proud of the axial section
(``../shared/standards-notes.md`` section 9 and headline 4; ``../shared/vision-notes.md``
section 5). This module gives the exact contour-generator shift of a straight flank and the
closed-form approximations used to check it.

Geometry (derived here, parallel projection onto the measurement plane through the axis):
world frame X along the axis (image right), Y up in the image, Z toward the camera. A point
of a straight flank of the axial section, ``x_f(rho) = x0 +/- tan(theta) rho``, on the
helicoid at turn angle phi lies at ``(x_f(rho) + a phi, rho cos phi, rho sin phi)``,
``a = h L / (2 pi)`` (h = +1 right hand, -1 left hand). A line of sight inclined toward the
axis by gamma (``tan gamma = t``; for a lens, the ray through the flank) moves it in the
measurement plane by ``t Z``. At image height ``Y = rho cos phi`` the outline is the extreme
of ``x_f(Y sec phi) + a phi + s t Y tan phi`` over phi (s = +1 on the image-top edge, -1 on
the image-bottom edge, where Z = -rho sin phi). To second order the flank moves outward
from its tooth by

    shift = Y (tan psi_Y + s t / h)^2 / (2 tan theta),   tan psi_Y = |a| / Y,

which gives the published forms: untilted ``a^2 / (2 rho tan theta)`` (standards-notes 9),
an apparent half-angle ``tan theta' = tan theta + (tan^2 psi - tan^2 gamma)/(2 tan theta)``
and a pitch-diameter error ``(d2/2)(tan psi -/+ tan gamma)^2 / tan^2 theta``
(vision-notes 5). :func:`flank_shift_mm` solves the extremum exactly (Newton), the closed
forms are kept for documentation and tests.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["lead_angle_rad", "flank_shift_mm", "flank_contact_radius_mm",
           "flank_shift_approx_mm", "profile_shift_mm",
           "apparent_half_angle_rad", "pitch_diameter_error_mm"]


def lead_angle_rad(lead_mm: float, diameter_mm: float) -> float:
    """Lead angle at ``diameter_mm``: ``tan psi = L / (pi d)`` (standards-notes section 9).

    Examples
    --------
    >>> round(math.degrees(lead_angle_rad(1.0, 5.350)), 3)   # M6x1 at basic PD
    3.405
    """
    if not (lead_mm > 0 and diameter_mm > 0):
        raise ValueError(f"lead_mm and diameter_mm must be positive, got {lead_mm}, {diameter_mm}")
    return math.atan(lead_mm / (math.pi * diameter_mm))


def _check(half_angle_rad: float, lead_mm: float) -> None:
    if not (0 < half_angle_rad < math.pi / 2):
        raise ValueError(f"half_angle_rad must be in (0, pi/2), got {half_angle_rad!r}")
    if not (lead_mm >= 0 and math.isfinite(lead_mm)):
        raise ValueError(f"lead_mm must be >= 0, got {lead_mm!r}")


def flank_shift_mm(radius_mm: np.ndarray | float, lead_mm: float, half_angle_rad: float, *,
                   side: str = "left", tan_gamma: np.ndarray | float = 0.0,
                   right_hand: bool = True, top_edge: bool = True) -> np.ndarray:
    """Exact outward axial shift of a straight helicoidal flank's silhouette (mm).

    Parameters
    ----------
    radius_mm : array_like
        Image height of the outline point above the axis (> 0), mm.
    lead_mm : float
        Lead L = starts x pitch, mm.
    half_angle_rad : float
        Flank angle from the normal to the axis (axial section), rad.
    side : {'left', 'right'}
        Flank whose outward normal points to -X ('left') or +X ('right').
    tan_gamma : array_like
        Tangent of the line-of-sight inclination toward +X at the flank (0 telecentric;
        ``(x - x_principal) / f`` for a lens).
    right_hand : bool
        Hand of the thread.
    top_edge : bool
        True for the silhouette edge at the image top, False for the bottom edge.

    Returns
    -------
    ndarray
        Shift (mm) of the outline away from its tooth, >= 0; the axial section lies this far
        inside the seen outline.

    Notes
    -----
    Minimises ``g(phi) = T Y (sec phi - 1) + b phi + c Y tan phi`` with ``T = tan theta``,
    ``b = +/-a``, ``c = +/-s t`` (signs flipped for the right flank), by Newton iteration on
    ``g'(phi) = T Y sec(phi) tan(phi) + b + c Y sec^2(phi) = 0`` from the second-order root;
    the shift is ``-g(phi*)``.
    """
    phi, g = _contact(radius_mm, lead_mm, half_angle_rad, side, tan_gamma, right_hand, top_edge)
    return np.maximum(-g, 0.0)


def flank_contact_radius_mm(radius_mm: np.ndarray | float, lead_mm: float,
                            half_angle_rad: float, *, side: str = "left",
                            tan_gamma: np.ndarray | float = 0.0, right_hand: bool = True,
                            top_edge: bool = True) -> np.ndarray:
    """Radius (mm) on the helicoidal flank where the outline point's line of sight grazes
    it: ``Y sec(phi*)`` with ``phi*`` the contour-generator angle of
    :func:`flank_shift_mm` (same parameters). Where it lies above the crest (or below the
    root) the outline there is drawn by the crest (root) edge, not by the flank.

    Examples
    --------
    M6x1 seen square on, at the pitch radius: phi* ~ L / (2 pi Y tan theta) = 0.103 rad,
    so the flank is grazed 0.5 % farther out:

    >>> round(float(flank_contact_radius_mm(2.675, 1.0, math.radians(30))), 3)
    2.689
    """
    phi, _ = _contact(radius_mm, lead_mm, half_angle_rad, side, tan_gamma, right_hand, top_edge)
    return np.asarray(radius_mm, dtype=float) / np.cos(phi)


def _contact(radius_mm, lead_mm, half_angle_rad, side, tan_gamma, right_hand, top_edge):
    """Contour-generator angle phi* and g(phi*) (see :func:`flank_shift_mm` Notes)."""
    _check(half_angle_rad, lead_mm)
    if side not in ("left", "right"):
        raise ValueError(f"side must be 'left' or 'right', got {side!r}")
    y = np.asarray(radius_mm, dtype=float)
    if np.any(~(y > 0)):
        raise ValueError("radius_mm must be > 0")
    t = np.broadcast_to(np.asarray(tan_gamma, dtype=float), y.shape)
    a = (1.0 if right_hand else -1.0) * lead_mm / (2 * math.pi)
    c = (1.0 if top_edge else -1.0) * t
    if side == "right":
        a, c = -a, -c
    tt = math.tan(half_angle_rad)
    phi = -(a + c * y) / (tt * y)
    for _ in range(8):
        sec = 1.0 / np.cos(phi)
        tn = np.tan(phi)
        f = tt * y * sec * tn + a + c * y * sec ** 2
        df = tt * y * (sec * tn ** 2 + sec ** 3) + 2 * c * y * sec ** 2 * tn
        step = f / df
        phi = phi - step
        if np.all(np.abs(step) < 1e-14):
            break
    g = tt * y * (1.0 / np.cos(phi) - 1.0) + a * phi + c * y * np.tan(phi)
    return phi, g


def flank_shift_approx_mm(radius_mm: float, lead_mm: float, half_angle_rad: float, *,
                          tan_gamma: float = 0.0, sign: float = 1.0) -> float:
    """Second-order shift ``Y (tan psi_Y + sign tan gamma)^2 / (2 tan theta)`` (module Notes).

    ``sign`` is +1 where the inclination adds to the helix on that flank, -1 where it takes
    away (:func:`flank_shift_mm` works the sign out from side, hand and edge).
    """
    _check(half_angle_rad, lead_mm)
    tpsi = lead_mm / (2 * math.pi * radius_mm)
    return radius_mm * (tpsi + sign * tan_gamma) ** 2 / (2 * math.tan(half_angle_rad))


def apparent_half_angle_rad(half_angle_rad: float, lead_angle: float,
                            gamma: float = 0.0) -> float:
    """Apparent flank half-angle of the silhouette (vision-notes section 5, parallel view):
    ``tan theta' = tan theta + (tan^2 psi - tan^2 gamma) / (2 tan theta)`` (angles in rad;
    the in-plane calibration removes the ``cos gamma`` foreshortening of a tilted sensor)."""
    t = math.tan(half_angle_rad)
    return math.atan(t + (math.tan(lead_angle) ** 2 - math.tan(gamma) ** 2) / (2 * t))


def pitch_diameter_error_mm(d2_mm: float, lead_angle: float, half_angle_rad: float,
                            tan_gamma: float = 0.0) -> float:
    """Pitch-diameter excess of the raw outline, ``(d2/2)(tan psi + tan gamma)^2 / tan^2 theta``
    (standards-notes section 9 for gamma = 0; vision-notes section 5 with gamma signed as in
    :func:`flank_shift_approx_mm`). M6x1: +28 um; M10x1.5: +38 um."""
    return 0.5 * d2_mm * (math.tan(lead_angle) + tan_gamma) ** 2 / math.tan(half_angle_rad) ** 2


def profile_shift_mm(radius_mm: np.ndarray | float, slope: np.ndarray | float, lead_mm: float, *,
                     tan_gamma: np.ndarray | float = 0.0, right_hand: bool = True,
                     top_edge: bool = True) -> np.ndarray:
    """First-order axial correction of any outline point with local profile slope
    ``slope = d(radius)/dx`` (crest and root arcs as well as flanks).

    Returns ``dx`` to *add* to the seen axial position to reach the axial section:
    ``dx = a_eff^2 slope / (2 Y)`` with ``a_eff = h L / (2 pi) + s t Y`` (module Notes;
    for a straight flank ``slope = +/-1/tan(theta)`` this is the second-order flank shift).
    Near an arc apex the slope, and so the correction, goes to zero.
    """
    y = np.asarray(radius_mm, dtype=float)
    if np.any(~(y > 0)):
        raise ValueError("radius_mm must be > 0")
    if not (lead_mm >= 0 and math.isfinite(lead_mm)):
        raise ValueError(f"lead_mm must be >= 0, got {lead_mm!r}")
    a = (1.0 if right_hand else -1.0) * lead_mm / (2 * math.pi)
    a_eff = a + (1.0 if top_edge else -1.0) * np.asarray(tan_gamma, dtype=float) * y
    return a_eff ** 2 * np.asarray(slope, dtype=float) / (2 * y)
