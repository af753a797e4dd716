"""Two long parallel edges of a dark bar (pin gauge, gauge block edge-on) in an edge set.

Shared by the pin and block calibrations and by :func:`measure_pin`. Points are (x, y) px
(docs/conventions.md); edge normals point from the dark part into the bright field.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import CalibrationError

__all__ = ["BarEdges", "find_bar_edges", "dominant_normal", "split_clusters",
           "MAX_NONPARALLEL_DEG", "EDGE_LOCATION_BOUND_PX"]

#: Two edges further from parallel than this are refused (deg): a pin or block lying flat
#: on the backlight has parallel sides; more means it is not square to the view, rocked on
#: dirt, or is not a gauge (common practice, no source).
MAX_NONPARALLEL_DEG = 0.5

#: Half-width (px) of the rectangular bound on the residual systematic error of one fitted
#: edge line (detector phase bias, renderer/sensor pixel model): the best published subpixel
#: edge accuracies are 0.01-0.05 px (../shared/vision-notes.md section 0); 0.02 px is ours
#: for LS step fits on linear data. Added as a type B term (GUM 4.3.7) to every width and
#: line position.
EDGE_LOCATION_BOUND_PX = 0.02

#: Edge points whose normal is further than this from the bar's normal are left out (end
#: faces, chamfers, dust) (ours, no source).
_NORMAL_TOL_DEG = 10.0

#: Room (px) an edge needs from the image border for its profile to be fitted: the edge
#: fit's window is at least +/-7 px (profilecheck.imaging.find_edges), plus 3 px for the
#: blur's tail at 1-1.5 px blur (ours, no source). Used in messages only.
EDGE_CLEAR_OF_BORDER_PX = 10

#: Fewest points and shortest run (px) accepted for each edge line (ours, no source).
MIN_EDGE_POINTS = 60
MIN_EDGE_LENGTH_PX = 60.0


@dataclass(frozen=True)
class BarEdges:
    """The two side lines of a dark bar and the width between them.

    ``line_low`` has its outward normal along ``-u`` and ``line_high`` along ``+u``, where
    ``u`` (unit, (x, y)) is the bar's width direction. ``width_px`` is the mean perpendicular
    distance between the lines over their inlier points; ``std_width_px`` its standard
    uncertainty (k = 1) from both lines' offset and angle covariances; ``nonparallel_deg`` the
    angle between the lines; ``rms_px`` the larger RMS residual of the two fits.
    """

    line_low: Any
    line_high: Any
    u: np.ndarray
    width_px: float
    std_width_px: float
    nonparallel_deg: float
    std_nonparallel_deg: float
    n_points: int
    rms_px: float
    length_px: float
    blur_px: float


def dominant_normal(normal: np.ndarray) -> np.ndarray:
    """Unit vector (x, y) of the most common normal axis (sign-free), from a 1-deg
    histogram of the normal angles modulo 180 deg, refined by the doubled-angle mean of the
    points within 5 deg of the peak."""
    ang = np.mod(np.arctan2(normal[:, 1], normal[:, 0]), math.pi)
    hist, _ = np.histogram(ang, bins=180, range=(0.0, math.pi))
    smooth = hist + 0.5 * (np.roll(hist, 1) + np.roll(hist, -1))
    peak = (np.argmax(smooth) + 0.5) * math.pi / 180.0
    diff = np.angle(np.exp(2j * (ang - peak))) / 2.0
    near = np.abs(diff) < math.radians(5.0)
    refined = peak + float(np.angle(np.mean(np.exp(2j * diff[near])))) / 2.0
    return np.array([math.cos(refined), math.sin(refined)])


def split_clusters(p: np.ndarray, gap: float) -> list[np.ndarray]:
    """Index arrays of runs of ``p`` (1-D positions) separated by more than ``gap``."""
    if len(p) == 0:
        return []
    order = np.argsort(p)
    breaks = np.nonzero(np.diff(p[order]) > gap)[0] + 1
    return [np.sort(idx) for idx in np.split(order, breaks)]


def _line_length(line: Any, xy: np.ndarray) -> float:
    t = (xy - np.asarray(line.point)) @ np.asarray(line.direction)
    return float(t.max() - t.min()) if len(t) else 0.0


def fit_edge_line(xy: np.ndarray, std: np.ndarray, what: str):
    """Robust weighted line fit through one edge (imaging.fit_line)."""
    from ..imaging import fit_line

    sigma = np.maximum(np.asarray(std, dtype=np.float64), 1e-4)
    try:
        return fit_line(xy, sigma_px=sigma, robust=True)
    except ValueError:
        raise CalibrationError(f"no {what} found: an edge gives no straight line") from None


def pair_width(a: Any, xa: np.ndarray, b: Any, xb: np.ndarray) -> tuple[float, float, float, float]:
    """Mean perpendicular distance between two near-parallel fitted lines.

    Returns (width_px, std_width_px, angle_between_deg, std_angle_deg). The width is the
    mean of |distance of b's inliers from a| and |distance of a's inliers from b|; its
    standard uncertainty combines both offset variances and the angle variances times the
    lever arm between the two point centroids along the line (GUM 5.1.2).
    """
    ia = np.asarray(a.inliers, dtype=bool)
    ib = np.asarray(b.inliers, dtype=bool)
    pa, pb = xa[ia], xb[ib]
    w1 = abs(float(np.mean(a.distance(pb))))
    w2 = abs(float(np.mean(b.distance(pa))))
    width = 0.5 * (w1 + w2)
    da, db = np.asarray(a.direction, float), np.asarray(b.direction, float)
    cross = da[0] * db[1] - da[1] * db[0]
    dot = float(da @ db)
    ang = math.atan2(abs(cross), abs(dot))
    lever = abs(float((pb.mean(axis=0) - pa.mean(axis=0)) @ da))
    std_w = math.sqrt(float(a.std_offset_px) ** 2 + float(b.std_offset_px) ** 2
                      + 0.25 * lever ** 2 * (float(a.std_angle_rad) ** 2 + float(b.std_angle_rad) ** 2)
                      + 2.0 * (EDGE_LOCATION_BOUND_PX / math.sqrt(3.0)) ** 2)
    std_ang = math.hypot(float(a.std_angle_rad), float(b.std_angle_rad))
    return width, std_w, math.degrees(ang), math.degrees(std_ang)


def find_bar_edges(xy: np.ndarray, normal: np.ndarray, std: np.ndarray, *, blur_px: float,
                   what: str = "pin") -> BarEdges:
    """Find the two long parallel sides of a dark bar among edge points.

    Parameters
    ----------
    xy, normal : (N, 2) arrays
        Edge points (x, y) px and outward unit normals (dark -> bright).
    std : (N,) array
        1-sigma position uncertainty of each point along its normal (px).
    blur_px : float
        Fitted edge blur, carried into the result.
    what : str
        'pin' or 'block', for messages.

    Raises
    ------
    CalibrationError
        No two long opposite edges, a bright gap instead of a dark bar, or edges further
        than :data:`MAX_NONPARALLEL_DEG` from parallel.
    """
    xy = np.asarray(xy, dtype=np.float64)
    normal = np.asarray(normal, dtype=np.float64)
    std = np.asarray(std, dtype=np.float64)
    hint = (f"no {what} found: need a dark {what} with two long straight sides across the view "
            f"on a bright backlight")
    if len(xy) < 2 * MIN_EDGE_POINTS:
        raise CalibrationError(f"{hint} (only {len(xy)} edge points)")
    u = dominant_normal(normal)
    cos_tol = math.cos(math.radians(_NORMAL_TOL_DEG))
    proj = normal @ u
    groups = []
    for sign in (-1.0, 1.0):
        sel = np.nonzero(sign * proj > cos_tol)[0]
        p = xy[sel] @ u
        runs = [sel[r] for r in split_clusters(p, gap=max(3.0, 3.0 * blur_px if math.isfinite(blur_px) else 3.0))]
        runs = [r for r in runs if len(r) >= MIN_EDGE_POINTS]
        if not runs:
            raise CalibrationError(f"{hint} (one side has no straight edge: keep both sides "
                                   f"at least {EDGE_CLEAR_OF_BORDER_PX} px inside the picture's "
                                   f"border)")
        groups.append(max(runs, key=len))
    low, high = groups
    if float(np.median(xy[low] @ u)) >= float(np.median(xy[high] @ u)):
        raise CalibrationError(f"{hint} (the straight edges enclose a bright gap, not a dark {what})")
    la = fit_edge_line(xy[low], std[low], what)
    lb = fit_edge_line(xy[high], std[high], what)
    length = min(_line_length(la, xy[low][np.asarray(la.inliers, bool)]),
                 _line_length(lb, xy[high][np.asarray(lb.inliers, bool)]))
    if length < MIN_EDGE_LENGTH_PX:
        raise CalibrationError(f"{hint} (straight sides only {length:.0f} px long)")
    width, std_w, ang_deg, std_ang_deg = pair_width(la, xy[low], lb, xy[high])
    if ang_deg > MAX_NONPARALLEL_DEG:
        raise CalibrationError(
            f"the two sides of the {what} are {ang_deg:.2f} deg out of parallel (more than "
            f"{MAX_NONPARALLEL_DEG} deg): lay the {what} flat on the backlight, square to the "
            f"camera, and clean it and the glass")
    n = int(np.count_nonzero(la.inliers) + np.count_nonzero(lb.inliers))
    return BarEdges(line_low=la, line_high=lb, u=u, width_px=width, std_width_px=std_w,
                    nonparallel_deg=ang_deg, std_nonparallel_deg=std_ang_deg, n_points=n,
                    rms_px=max(float(la.rms_px), float(lb.rms_px)), length_px=length,
                    blur_px=float(blur_px))
