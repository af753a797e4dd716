"""Thread axis in the image and the split of the silhouette into its two edges.

The axis frame (docs/conventions.md): unit vector ``u`` along the axis in image px (chosen
with the image angle in (-90, 90] deg, i.e. pointing to image right), ``n_up`` the image-up
side of ``u`` (``(u_y, -u_x)`` in image coordinates, y down). A point ``p`` px has axial
coordinate ``s = (p - o) . u`` and radial ``r = (p - o) . n_up``. The *top* edge is the one
whose outward normals point along ``+n_up``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import MeasurementError

__all__ = ["AxisFrame", "initial_axis", "split_edges"]


@dataclass(frozen=True)
class AxisFrame:
    """Origin ``o`` (px), axis direction ``u`` (unit, px), and ``n_up``."""

    o: tuple[float, float]
    u: tuple[float, float]

    @property
    def n_up(self) -> tuple[float, float]:
        return (self.u[1], -self.u[0])

    @property
    def angle_deg(self) -> float:
        """Image angle of the axis (0 along +x, positive toward +y: clockwise on screen)."""
        return math.degrees(math.atan2(self.u[1], self.u[0]))

    def to_axis(self, xy: np.ndarray) -> np.ndarray:
        """Image px (N, 2) -> (s, r) px in the axis frame."""
        d = np.asarray(xy, float) - np.asarray(self.o)
        return np.column_stack([d @ np.asarray(self.u), d @ np.asarray(self.n_up)])

    def to_image(self, sr: np.ndarray) -> np.ndarray:
        """(s, r) px in the axis frame -> image px."""
        sr = np.asarray(sr, float)
        return (np.asarray(self.o) + sr[:, :1] * np.asarray(self.u)
                + sr[:, 1:2] * np.asarray(self.n_up))

    def rotated(self, d_rad: float, new_o: tuple[float, float] | None = None) -> "AxisFrame":
        """Turn ``u`` by ``d_rad`` toward ``n_up`` (counter-clockwise on screen)."""
        u = np.asarray(self.u)
        nu = np.asarray(self.n_up)
        v = math.cos(d_rad) * u + math.sin(d_rad) * nu
        v = v / np.linalg.norm(v)
        return AxisFrame(self.o if new_o is None else new_o, (float(v[0]), float(v[1])))


def _principal(xy: np.ndarray) -> tuple[np.ndarray, np.ndarray, float, float]:
    c = xy.mean(axis=0)
    d = xy - c
    w, v = np.linalg.eigh(d.T @ d / len(d))
    return c, v[:, 1], float(max(w[1], 0.0)), float(max(w[0], 0.0))


def initial_axis(xy: np.ndarray, contour: np.ndarray | None = None) -> AxisFrame:
    """First estimate of the axis: principal direction of the longest elongated contour.

    One edge of a thread is a long thin band of points whose principal direction is the
    axis (teeth only add a band across it); when the part runs off both ends of the
    picture each edge is its own contour. A whole part in view is one closed contour whose
    principal direction is its length. Partial teeth at the ends tilt the estimate by a
    fraction of a degree, which the caller removes from the fitted crest and root levels.
    """
    xy = np.asarray(xy, float)
    if contour is None:
        contour = np.zeros(len(xy), dtype=int)
    best = None
    for cid in np.unique(contour):
        p = xy[contour == cid]
        if len(p) < 20:
            continue
        c, u, l1, l2 = _principal(p)
        if l1 < 9.0 * max(l2, 1e-12):  # elongation sqrt(l1/l2) < 3
            continue
        extent = float(np.ptp(p @ u))
        if best is None or extent > best[0]:
            best = (extent, u)
    c, u, _, _ = _principal(xy)
    if best is not None:
        u = best[1]
    if u[0] < 0 or (abs(u[0]) < 1e-12 and u[1] < 0):
        u = -u
    return AxisFrame((float(c[0]), float(c[1])), (float(u[0]), float(u[1])))


def split_edges(sr: np.ndarray, normal_sr: np.ndarray, contour: np.ndarray,
                *, min_fraction: float = 0.25) -> tuple[np.ndarray | None, np.ndarray | None]:
    """Masks of the top and bottom thread edges (or None where an edge is not in view).

    A point belongs to the top edge when its outward normal points up (``n . n_up > 0.1``;
    flank normals of a 29-deg Acme still have 0.25), to the bottom edge when it points
    down. Only contours spanning at least 30 % of the longest contour's axial length are
    kept (dust and specks drop out). An edge with fewer than ``min_fraction`` of the other
    edge's points, or spanning less than half the other's length, counts as not in view.
    """
    s = sr[:, 0]
    nr = normal_sr[:, 1]
    ids = np.unique(contour)
    span = {i: float(np.ptp(s[contour == i])) if np.any(contour == i) else 0.0 for i in ids}
    longest = max(span.values()) if span else 0.0
    if longest <= 0:
        raise MeasurementError("no outline of a part found in the image")
    keep = np.isin(contour, [i for i in ids if span[i] >= 0.3 * longest])
    top = keep & (nr > 0.1)
    bot = keep & (nr < -0.1)
    # An edge is the side of the axis it lies on; drop stray points on the wrong side.
    if top.any() and bot.any():
        mid = 0.5 * (np.median(sr[top, 1]) + np.median(sr[bot, 1]))
        top &= sr[:, 1] > mid
        bot &= sr[:, 1] < mid
    nt, nb = int(top.sum()), int(bot.sum())
    lt = float(np.ptp(s[top])) if nt else 0.0
    lb = float(np.ptp(s[bot])) if nb else 0.0
    top_ok = nt > 0 and nt >= min_fraction * nb and lt >= 0.5 * lb
    bot_ok = nb > 0 and nb >= min_fraction * nt and lb >= 0.5 * lt
    return (top if top_ok else None), (bot if bot_ok else None)
