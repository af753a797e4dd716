"""Lens-model helpers: undistorting edge points, lines of sight, cylinder perspective.

All image points are (N, 2) arrays of (x, y) = (col, row) px, integer coordinates at pixel
centres (see docs/conventions.md). The lens is the pinhole + radial/tangential model of
OpenCV held in :class:`profilecheck.calibration.Lens`.
"""

from __future__ import annotations

import math

import numpy as np

from .model import Lens

__all__ = [
    "camera_matrix",
    "undistort_points",
    "distort_points",
    "ray_directions",
    "ray_tilt_rad",
    "cylinder_apparent_diameter_mm",
    "cylinder_axial_diameter_mm",
    "UNDISTORT_CRITERIA",
]

#: Termination criteria for the iterative point undistortion. OpenCV's default iteration
#: count leaves errors that grow with the distortion (vision-notes section 3 quotes 0.049 px;
#: benchmarks/lens.py finds 1.9 px in the corners of a 1280 x 720 frame at f = 1000 px,
#: k1 = -0.35, and 2e-5 px at f = 5000 px, k1 = -0.75); 100 iterations to 1e-12 reach
#: 1e-12 px in both.
UNDISTORT_CRITERIA = (3, 100, 1e-12)  # cv2.TERM_CRITERIA_COUNT | cv2.TERM_CRITERIA_EPS


def camera_matrix(lens: Lens) -> np.ndarray:
    """The 3 x 3 intrinsic matrix K of ``lens`` (float64)."""
    _check_lens(lens)
    return np.array([[lens.fx_px, 0.0, lens.cx_px],
                     [0.0, lens.fy_px, lens.cy_px],
                     [0.0, 0.0, 1.0]], dtype=np.float64)


def _check_lens(lens: Lens) -> None:
    if not isinstance(lens, Lens):
        raise TypeError(f"lens must be a profilecheck.calibration.Lens, got {type(lens).__name__}")


def _as_points(xy: np.ndarray, name: str = "xy") -> np.ndarray:
    pts = np.asarray(xy, dtype=np.float64)
    if pts.ndim != 2 or pts.shape[1] != 2:
        raise ValueError(f"{name} must have shape (N, 2) of (x, y) px, got {pts.shape}")
    if not np.all(np.isfinite(pts)):
        raise ValueError(f"{name} must be finite")
    return pts


def undistort_points(xy: np.ndarray, lens: Lens) -> np.ndarray:
    """Remove lens distortion from image points.

    Parameters
    ----------
    xy : (N, 2) array_like
        Observed (distorted) points, (x, y) px.
    lens : Lens
        Intrinsics and distortion coefficients (OpenCV order k1, k2, p1, p2, k3).

    Returns
    -------
    (N, 2) ndarray
        The points an ideal pinhole camera with the same K would have seen, (x, y) px.

    Notes
    -----
    ``cv2.undistortPoints`` with ``P = K`` and explicit termination criteria
    (:data:`UNDISTORT_CRITERIA`); points are corrected, never images, so no resampling blur
    enters the edge positions (../shared/vision-notes.md section 6 rule 4). The pixel-centre
    convention is the same on input and output, so no half-pixel shift is applied.
    """
    import cv2

    pts = _as_points(xy)
    if len(pts) == 0:
        return pts.copy()
    k = camera_matrix(lens)
    d = np.asarray(lens.dist, dtype=np.float64)
    if not np.any(d):
        return pts.copy()
    out = cv2.undistortPoints(pts.reshape(-1, 1, 2), k, d, R=None, P=k,
                              criteria=UNDISTORT_CRITERIA)
    return out.reshape(-1, 2).astype(np.float64)


def distort_points(xy: np.ndarray, lens: Lens) -> np.ndarray:
    """Apply the lens distortion to ideal pinhole image points (inverse of
    :func:`undistort_points`), with ``cv2.projectPoints`` on the normalised rays."""
    import cv2

    pts = _as_points(xy)
    if len(pts) == 0:
        return pts.copy()
    k = camera_matrix(lens)
    rays = np.column_stack([(pts[:, 0] - lens.cx_px) / lens.fx_px,
                            (pts[:, 1] - lens.cy_px) / lens.fy_px,
                            np.ones(len(pts))])
    out, _ = cv2.projectPoints(rays.reshape(-1, 1, 3), np.zeros(3), np.zeros(3), k,
                               np.asarray(lens.dist, dtype=np.float64))
    return out.reshape(-1, 2).astype(np.float64)


def ray_directions(xy: np.ndarray, lens: Lens, *, distorted: bool = True) -> np.ndarray:
    """Unit line-of-sight vectors (camera frame: x right, y down, z forward) through image points.

    ``distorted=True`` means ``xy`` are raw image points (they are undistorted first).
    """
    pts = undistort_points(xy, lens) if distorted else _as_points(xy)
    v = np.column_stack([(pts[:, 0] - lens.cx_px) / lens.fx_px,
                         (pts[:, 1] - lens.cy_px) / lens.fy_px,
                         np.ones(len(pts))])
    return v / np.linalg.norm(v, axis=1, keepdims=True)


def ray_tilt_rad(xy: np.ndarray, lens: Lens, *, distorted: bool = True) -> np.ndarray:
    """Tilt of the line of sight from the optical axis, per image point, in radians.

    Returns an (N, 2) array ``(tilt_x, tilt_y)`` with ``tilt_x = atan((x - cx) / fx)`` (toward
    +x, image right) and ``tilt_y = atan((y - cy) / fy)`` (toward +y, image down), computed
    on undistorted points. For a thread whose axis runs along image x, ``tilt_x`` is the
    inclination gamma of the line of sight toward the axis used by the helix formulas
    (../shared/vision-notes.md section 5: gamma = atan(z_offset / Z)).
    """
    pts = undistort_points(xy, lens) if distorted else _as_points(xy)
    return np.column_stack([np.arctan((pts[:, 0] - lens.cx_px) / lens.fx_px),
                            np.arctan((pts[:, 1] - lens.cy_px) / lens.fy_px)])


def _check_cyl(d_mm: float, z_mm: float, dname: str) -> tuple[float, float]:
    d, z = float(d_mm), float(z_mm)
    if not math.isfinite(d) or d <= 0:
        raise ValueError(f"{dname} must be a positive finite length in mm, got {d_mm!r}")
    if not math.isfinite(z) or z <= 0:
        raise ValueError(f"working_distance_mm must be a positive finite length, got {z_mm!r}")
    return d, z


def cylinder_apparent_diameter_mm(diameter_mm: float, working_distance_mm: float) -> float:
    """Width a cylinder of ``diameter_mm`` appears to have, referred to its axial plane at
    distance Z from the projection centre (axis square to the optical axis and crossing it).

    Notes
    -----
    The tangent rays from the projection centre touch the cylinder at half-angle
    asin(r / Z); they cross the axial plane at r / sqrt(1 - (r/Z)^2), so the apparent
    diameter is D / sqrt(1 - (D / 2Z)^2) (../shared/vision-notes.md section 0 and 4).
    """
    d, z = _check_cyl(diameter_mm, working_distance_mm, "diameter_mm")
    if d >= 2.0 * z:
        raise ValueError("diameter_mm must be smaller than twice working_distance_mm")
    return d / math.sqrt(1.0 - (d / (2.0 * z)) ** 2)


def cylinder_axial_diameter_mm(apparent_mm: float, working_distance_mm: float) -> float:
    """True diameter from the apparent width of a cylinder in its axial plane: the exact
    inverse of :func:`cylinder_apparent_diameter_mm`, D = A / sqrt(1 + (A / 2Z)^2)."""
    a, z = _check_cyl(apparent_mm, working_distance_mm, "apparent_mm")
    return a / math.sqrt(1.0 + (a / (2.0 * z)) ** 2)
