"""The synthetic camera: world millimetres to image pixels.

Frames (see docs/conventions.md):

* world: millimetres, a right-handed frame whose x-y plane is the *measurement plane*
  (for a turned part, the plane through its axis square to the line of sight); +y points
  *up* on the screen when ``rotation_deg = 0``; +z points from the measurement plane
  toward the lens.
* image: ``img[row, col]``, points as (x, y) = (col, row) px, integer coordinates at pixel
  centres, origin top-left, +y down.
* camera (pinhole mode): the OpenCV frame, x right, y down, z forward along the line of
  sight, so ``K``, ``dist`` and ``working_distance_mm`` fill a
  :class:`profilecheck.calibration.Lens` directly.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Any

import numpy as np

__all__ = ["Camera"]


def _finite(name: str, value: Any) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise TypeError(f"{name} must be a number, got {type(value).__name__}") from None
    if not math.isfinite(v):
        raise ValueError(f"{name} must be finite, got {value!r}")
    return v


@dataclass(frozen=True)
class Camera:
    """A camera that maps world mm to image px.

    Parameters
    ----------
    mm_per_px : float
        Scale in the measurement plane (world z = 0), mm per pixel (> 0).
    image_size : (int, int)
        (width, height) of the image in px.
    rotation_deg : float
        Rotation of the scene about the optical axis: the world x axis appears turned
        *counter-clockwise on the screen* by this angle (world y is up, so this is the
        mathematically positive sense in the world frame).
    centre_mm : (float, float)
        World point (x, y) in the measurement plane that lies on the optical axis and
        images at the principal point.
    k1, k2 : float
        Radial distortion (OpenCV model, ``x_d = x (1 + k1 r^2 + k2 r^4)``) in normalised
        coordinates: divided by the focal length in px in pinhole mode, and by
        :attr:`distortion_norm_px` (default: half the image diagonal) in telecentric mode.
    focal_mm : float or None
        Focal length of the lens (informational: with the working distance it fixes the
        sensor pixel pitch reported by :meth:`to_dict`). ``None`` together with
        ``working_distance_mm = None`` means a telecentric (parallel) view.
    working_distance_mm : float or None
        Pinhole mode: distance Z from the projection centre to the measurement plane.
        The focal length in px is then ``Z / mm_per_px``.
    principal_px : (float, float) or None
        Principal point (x, y) px; default the image centre ``((w - 1)/2, (h - 1)/2)``.
    distortion_norm_px : float or None
        Telecentric mode only: the length in px that normalises the distortion radius.

    Notes
    -----
    Pinhole projection of a world point (x, y, z): camera coordinates
    ``X = R (x - cx, y - cy)`` with the y component negated (image y is down),
    ``Z_c = Z - z``; ``u = u0 + f X / Z_c``. A point in the measurement plane therefore
    images at ``mm_per_px`` per px, and a point nearer the lens (z > 0) images larger by
    ``Z / (Z - z)`` (Sutton et al. 2008: dM/M = -dZ/Z). Telecentric mode drops the
    perspective factor.
    """

    mm_per_px: float
    image_size: tuple[int, int] = (1600, 1200)
    rotation_deg: float = 0.0
    centre_mm: tuple[float, float] = (0.0, 0.0)
    k1: float = 0.0
    k2: float = 0.0
    focal_mm: float | None = None
    working_distance_mm: float | None = None
    principal_px: tuple[float, float] | None = None
    distortion_norm_px: float | None = None

    def __post_init__(self) -> None:
        s = _finite("mm_per_px", self.mm_per_px)
        if s <= 0:
            raise ValueError(f"mm_per_px must be > 0, got {self.mm_per_px!r}")
        size = tuple(self.image_size)
        if len(size) != 2 or not all(isinstance(v, (int, np.integer)) and not isinstance(v, bool)
                                     and int(v) > 0 for v in size):
            raise ValueError(f"image_size must be two positive integers (w, h), got {self.image_size!r}")
        object.__setattr__(self, "image_size", (int(size[0]), int(size[1])))
        object.__setattr__(self, "mm_per_px", s)
        object.__setattr__(self, "rotation_deg", _finite("rotation_deg", self.rotation_deg))
        c = tuple(self.centre_mm)
        if len(c) != 2:
            raise ValueError(f"centre_mm must be (x, y) mm, got {self.centre_mm!r}")
        object.__setattr__(self, "centre_mm", (_finite("centre_mm", c[0]), _finite("centre_mm", c[1])))
        object.__setattr__(self, "k1", _finite("k1", self.k1))
        object.__setattr__(self, "k2", _finite("k2", self.k2))
        if self.focal_mm is not None:
            f = _finite("focal_mm", self.focal_mm)
            if f <= 0:
                raise ValueError(f"focal_mm must be > 0, got {self.focal_mm!r}")
            if self.working_distance_mm is None:
                raise ValueError("working_distance_mm is required with focal_mm (pinhole mode)")
            object.__setattr__(self, "focal_mm", f)
        if self.working_distance_mm is not None:
            z = _finite("working_distance_mm", self.working_distance_mm)
            if z <= 0:
                raise ValueError(f"working_distance_mm must be > 0, got {self.working_distance_mm!r}")
            object.__setattr__(self, "working_distance_mm", z)
        if self.principal_px is not None:
            p = tuple(self.principal_px)
            if len(p) != 2:
                raise ValueError(f"principal_px must be (x, y) px, got {self.principal_px!r}")
            object.__setattr__(self, "principal_px", (_finite("principal_px", p[0]),
                                                      _finite("principal_px", p[1])))
        if self.distortion_norm_px is not None:
            n = _finite("distortion_norm_px", self.distortion_norm_px)
            if n <= 0:
                raise ValueError(f"distortion_norm_px must be > 0, got {self.distortion_norm_px!r}")
            object.__setattr__(self, "distortion_norm_px", n)

    # ----------------------------------------------------------------- properties
    @property
    def pinhole(self) -> bool:
        """True in pinhole (entocentric) mode."""
        return self.working_distance_mm is not None

    @property
    def width(self) -> int:
        return self.image_size[0]

    @property
    def height(self) -> int:
        return self.image_size[1]

    @property
    def principal(self) -> tuple[float, float]:
        """Principal point (x, y) px."""
        if self.principal_px is not None:
            return self.principal_px
        return ((self.width - 1) / 2.0, (self.height - 1) / 2.0)

    @property
    def focal_px(self) -> float:
        """Focal length in px (pinhole mode); ``inf`` when telecentric."""
        if not self.pinhole:
            return math.inf
        return self.working_distance_mm / self.mm_per_px

    @property
    def norm_px(self) -> float:
        """Length in px that normalises the distortion radius."""
        if self.pinhole:
            return self.focal_px
        if self.distortion_norm_px is not None:
            return self.distortion_norm_px
        return 0.5 * math.hypot(self.width, self.height)

    @property
    def has_distortion(self) -> bool:
        return self.k1 != 0.0 or self.k2 != 0.0

    def camera_matrix(self) -> np.ndarray:
        """3 x 3 intrinsic matrix K (pinhole mode; OpenCV convention)."""
        if not self.pinhole:
            raise ValueError("camera_matrix needs pinhole mode (working_distance_mm set)")
        f = self.focal_px
        u0, v0 = self.principal
        return np.array([[f, 0.0, u0], [0.0, f, v0], [0.0, 0.0, 1.0]])

    def dist_coeffs(self) -> np.ndarray:
        """OpenCV distortion vector (k1, k2, p1, p2, k3)."""
        return np.array([self.k1, self.k2, 0.0, 0.0, 0.0])

    def pose(self) -> tuple[np.ndarray, np.ndarray]:
        """World-to-camera rotation matrix R (3 x 3) and translation t (3,) in mm, OpenCV
        convention ``X_cam = R X_world + t`` (pinhole and telecentric alike)."""
        a = math.radians(self.rotation_deg)
        ca, sa = math.cos(a), math.sin(a)
        # rotate in the world plane, then flip y (image y down) and z (camera looks along -z_world)
        rot = np.array([[ca, -sa, 0.0], [sa, ca, 0.0], [0.0, 0.0, 1.0]])
        flip = np.diag([1.0, -1.0, -1.0])
        r = flip @ rot
        cx, cy = self.centre_mm
        z = self.working_distance_mm if self.pinhole else 0.0
        t = -r @ np.array([cx, cy, 0.0]) + np.array([0.0, 0.0, z])
        return r, t

    # ----------------------------------------------------------------- mapping
    def _distort(self, xn: np.ndarray, yn: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        if not self.has_distortion:
            return xn, yn
        r2 = xn * xn + yn * yn
        f = 1.0 + self.k1 * r2 + self.k2 * r2 * r2
        return xn * f, yn * f

    def _undistort(self, xd: np.ndarray, yd: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        if not self.has_distortion:
            return xd, yd
        xn, yn = xd.copy(), yd.copy()
        for _ in range(200):  # fixed-point iteration; converges for moderate distortion
            r2 = xn * xn + yn * yn
            f = 1.0 + self.k1 * r2 + self.k2 * r2 * r2
            nx, ny = xd / f, yd / f
            done = np.max(np.abs(nx - xn), initial=0.0) < 1e-15 and \
                np.max(np.abs(ny - yn), initial=0.0) < 1e-15
            xn, yn = nx, ny
            if done:
                break
        return xn, yn

    def world3_to_px(self, xyz_mm: np.ndarray) -> np.ndarray:
        """Project world points (N, 3) mm to image points (N, 2) (x, y) px."""
        p = np.asarray(xyz_mm, dtype=np.float64)
        if p.ndim != 2 or p.shape[1] != 3:
            raise ValueError(f"xyz_mm must have shape (N, 3), got {p.shape}")
        r, t = self.pose()
        c = p @ r.T + t
        u0, v0 = self.principal
        if self.pinhole:
            if np.any(c[:, 2] <= 0):
                raise ValueError("xyz_mm has points at or behind the projection centre")
            xn = c[:, 0] / c[:, 2]
            yn = c[:, 1] / c[:, 2]
            scale = self.focal_px
        else:
            n = self.norm_px
            xn = c[:, 0] / self.mm_per_px / n
            yn = c[:, 1] / self.mm_per_px / n
            scale = n
        xd, yd = self._distort(xn, yn)
        return np.column_stack([u0 + scale * xd, v0 + scale * yd])

    def world_to_px(self, xy_mm: np.ndarray) -> np.ndarray:
        """Map points (N, 2) of the measurement plane (world z = 0), mm, to (N, 2) px."""
        p = np.asarray(xy_mm, dtype=np.float64)
        if p.ndim != 2 or p.shape[1] != 2:
            raise ValueError(f"xy_mm must have shape (N, 2), got {p.shape}")
        return self.world3_to_px(np.column_stack([p, np.zeros(len(p))]))

    def px_to_world(self, xy_px: np.ndarray) -> np.ndarray:
        """Inverse of :meth:`world_to_px`: image points (N, 2) px to the measurement plane, mm."""
        q = np.asarray(xy_px, dtype=np.float64)
        if q.ndim != 2 or q.shape[1] != 2:
            raise ValueError(f"xy_px must have shape (N, 2), got {q.shape}")
        u0, v0 = self.principal
        n = self.focal_px if self.pinhole else self.norm_px
        xn, yn = self._undistort((q[:, 0] - u0) / n, (q[:, 1] - v0) / n)
        if self.pinhole:
            cam = np.column_stack([xn * self.working_distance_mm, yn * self.working_distance_mm,
                                   np.full(len(q), self.working_distance_mm)])
        else:
            cam = np.column_stack([xn * n * self.mm_per_px, yn * n * self.mm_per_px, np.zeros(len(q))])
        r, t = self.pose()
        w = (cam - t) @ r  # R^T (cam - t)
        return w[:, :2]

    def rays(self, xy_px: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Lines of sight through image points.

        Returns
        -------
        origin : (N, 3) ndarray
            A world point on each ray, mm: the projection centre (pinhole) or the point of
            the ray in the plane world z = 0 (telecentric).
        direction : (N, 3) ndarray
            Unit viewing direction, from the lens into the scene (world frame; -z when
            looking square onto the measurement plane).
        """
        q = np.asarray(xy_px, dtype=np.float64)
        if q.ndim != 2 or q.shape[1] != 2:
            raise ValueError(f"xy_px must have shape (N, 2), got {q.shape}")
        r, t = self.pose()
        if self.pinhole:
            u0, v0 = self.principal
            f = self.focal_px
            xn, yn = self._undistort((q[:, 0] - u0) / f, (q[:, 1] - v0) / f)
            d_world = np.column_stack([xn, yn, np.ones(len(q))]) @ r  # R^T d_cam
            d_world /= np.linalg.norm(d_world, axis=1, keepdims=True)
            centre = -r.T @ t
            return np.tile(centre, (len(q), 1)), d_world
        plane = self.px_to_world(q)
        origin = np.column_stack([plane, np.zeros(len(q))])
        return origin, np.tile(r[2, :], (len(q), 1))

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready description (all lengths mm, angles degrees)."""
        d = asdict(self)
        d["image_size"] = list(self.image_size)
        d["centre_mm"] = list(self.centre_mm)
        d["principal_px"] = list(self.principal)
        d["mode"] = "pinhole" if self.pinhole else "telecentric"
        if self.pinhole:
            d["focal_px"] = self.focal_px
            d["camera_matrix"] = self.camera_matrix().tolist()
            if self.focal_mm is not None:
                d["sensor_pixel_mm"] = self.focal_mm / self.focal_px
        d["dist_coeffs"] = self.dist_coeffs().tolist()
        d["distortion_norm_px"] = self.norm_px
        return d
