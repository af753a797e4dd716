"""Geometry on fitted lines: intersections, angles, distances, and the blur correction of radii.

All in image pixels, (x, y) = (col, row), angles in radians, positive from +x toward +y
(clockwise on screen), docs/conventions.md. Uncertainties are standard (k = 1) and are
propagated to first order from each fit's covariance (GUM, JCGM 100:2008, 5.1.2), the fits
taken as independent (true when they rest on disjoint edge points).
"""

from __future__ import annotations

import math

import numpy as np

from .fit import LineFit

__all__ = ["intersect_lines", "angle_between", "point_line_distance", "sigma_e_px",
           "correct_radius_for_blur"]


def _check_line(line, name: str) -> None:
    if not isinstance(line, LineFit):
        raise TypeError(f"{name} must be a LineFit, got {type(line).__name__}")


def _perturbed(line: LineFit, d_angle: float, d_offset: float):
    c, s = math.cos(d_angle), math.sin(d_angle)
    d = line.direction
    direction = np.array([c * d[0] - s * d[1], s * d[0] + c * d[1]])
    point = line.point + d_offset * line.normal
    return point, direction


def _intersect(p1, d1, p2, d2) -> np.ndarray:
    # p1 + t d1 = p2 + u d2, solved for t by Cramer's rule (2 x 2; callers reject parallels)
    rx, ry = float(p2[0] - p1[0]), float(p2[1] - p1[1])
    det = float(d2[0] * d1[1] - d1[0] * d2[1])
    t = (d2[0] * ry - d2[1] * rx) / det
    return np.array([p1[0] + t * d1[0], p1[1] + t * d1[1]])


def intersect_lines(a: LineFit, b: LineFit) -> tuple[np.ndarray, np.ndarray]:
    """Intersection of two fitted lines, with its covariance.

    Parameters
    ----------
    a, b : LineFit

    Returns
    -------
    point : ndarray (2,)
        (x, y) px.
    cov : ndarray (2, 2)
        Covariance (k = 1) of the point, px^2, propagated from the (angle, offset) covariances
        of both lines through the numerical Jacobian (central differences).

    Raises
    ------
    TypeError
        If ``a`` or ``b`` is not a LineFit.
    ValueError
        If the lines are parallel (angle between them below 1e-9 rad).

    Notes
    -----
    Use this, never a contour apex, to locate a tool point or a thread flank crossing: the
    50 % contour of a blurred corner recedes into the dark part by 1.29 sigma for a 60 deg
    point (vision-notes section 1.2); the intersection of flank lines fitted away from the
    corner does not.
    """
    _check_line(a, "a")
    _check_line(b, "b")
    cross = a.direction[0] * b.direction[1] - a.direction[1] * b.direction[0]
    if abs(cross) < 1e-9:
        raise ValueError("a and b are parallel: no intersection")
    p0 = _intersect(a.point, a.direction, b.point, b.direction)
    J = np.zeros((2, 4))
    steps = [1e-7, 1e-6, 1e-7, 1e-6]
    for k in range(4):
        h = steps[k]
        pts = []
        for sgn in (1.0, -1.0):
            da = [0.0, 0.0, 0.0, 0.0]
            da[k] = sgn * h
            pa, ua = _perturbed(a, da[0], da[1])
            pb, ub = _perturbed(b, da[2], da[3])
            pts.append(_intersect(pa, ua, pb, ub))
        J[:, k] = (pts[0] - pts[1]) / (2 * h)
    C = np.zeros((4, 4))
    C[:2, :2] = a.cov
    C[2:, 2:] = b.cov
    return p0, J @ C @ J.T


def angle_between(a: LineFit, b: LineFit) -> tuple[float, float]:
    """Signed angle from the direction of ``a`` to the direction of ``b``.

    Parameters
    ----------
    a, b : LineFit

    Returns
    -------
    angle_rad : float
        In (-pi, pi], positive from a toward b in the image frame (+x toward +y). Since line
        directions follow point order (see :class:`LineFit`), reverse one fit's points or take
        ``pi - |angle|`` for the included angle between two flanks as needed.
    std_rad : float
        Standard uncertainty (k = 1): sqrt(var_a + var_b).
    """
    _check_line(a, "a")
    _check_line(b, "b")
    ang = b.angle_rad - a.angle_rad
    ang = (ang + math.pi) % (2 * math.pi) - math.pi
    if ang <= -math.pi:
        ang += 2 * math.pi
    return float(ang), float(math.sqrt(a.cov[0, 0] + b.cov[0, 0]))


def point_line_distance(point, line: LineFit, *, cov_point=None) -> tuple[float, float]:
    """Signed distance (px) from ``point`` to ``line`` (+ along ``line.normal``) and its std.

    Parameters
    ----------
    point : array_like (2,)
    line : LineFit
    cov_point : array_like (2, 2), optional
        Covariance of ``point`` (e.g. from :func:`intersect_lines`), taken as independent of
        the line.
    """
    _check_line(line, "line")
    p = np.asarray(point, dtype=np.float64)
    if p.shape != (2,):
        raise ValueError(f"point must have shape (2,), got {p.shape}")
    d = float((p - line.point) @ line.normal)
    var = float(line.std_position_at(p[None])[0] ** 2)
    if cov_point is not None:
        cp = np.asarray(cov_point, dtype=np.float64)
        if cp.shape != (2, 2):
            raise ValueError(f"cov_point must have shape (2, 2), got {cp.shape}")
        var += float(line.normal @ cp @ line.normal)
    return d, math.sqrt(var)


def sigma_e_px(blur_px: float) -> float:
    """Effective edge spread of a pixel-integrated Gaussian blur, px.

    sigma_e^2 = sigma_b^2 + 1/12: the variance of a unit box pixel is 1/12, added to the
    Gaussian's (vision-notes sections 0 and 2).
    """
    if not (blur_px >= 0) or not math.isfinite(blur_px):
        raise ValueError(f"blur_px must be finite and >= 0, got {blur_px!r}")
    return math.sqrt(blur_px ** 2 + 1.0 / 12.0)


def correct_radius_for_blur(radius_px: float, blur_px: float) -> float:
    """Correct a radius fitted to blurred edge points for the shift of curved edges.

    Parameters
    ----------
    radius_px : float
        Radius fitted to edge points (e.g. :func:`fit_circle` on ``EdgeSet.xy``), px, > 0.
    blur_px : float
        Gaussian blur sigma_b of the image, px (``EdgeSet.blur_px``).

    Returns
    -------
    float
        R_true, solving R_true = R_fit + sigma_e^2 / (2 R_true), sigma_e^2 = sigma_b^2 + 1/12.

    Notes
    -----
    Under Gaussian blur both the 50 % iso-contour and the gradient maximum of a curved edge
    move toward the centre of curvature by sigma_e^2 / (2 R) once R >= 3 sigma (Verbeek &
    van Vliet, IEEE TPAMI 16(7):726-733, 1994; Mendonca et al., ECCV 2004; vision-notes
    section 1.2). The shift is toward the centre whichever side is dark, so a fitted radius
    reads small for a convex dark arc (a pin, a tool nose) and for a concave one (a thread
    root seen from the bright gap) alike: the same correction applies to both. The
    first-order formula is not valid for R < 3 sigma_e; this function raises there.
    Profile fits along pixel rows or columns (as :func:`find_edges` makes) add a smaller,
    orientation-dependent term of the same order, so expect the corrected radius to be good
    to a fraction of sigma_e^2 / (2 R), not exact.
    """
    if not (radius_px > 0) or not math.isfinite(radius_px):
        raise ValueError(f"radius_px must be finite and > 0, got {radius_px!r}")
    s2 = sigma_e_px(blur_px) ** 2
    if radius_px < 3.0 * math.sqrt(s2):
        raise ValueError(f"radius_px={radius_px:.3g} is below 3 sigma_e ({3 * math.sqrt(s2):.3g} px):"
                         " the curvature correction is not valid there")
    # positive root of R^2 - R_fit R - s2/2 = 0
    return 0.5 * (radius_px + math.sqrt(radius_px ** 2 + 2.0 * s2))
