"""Exact outlines (world mm, +y up) of threading tools, lathe centres, bars and tools seen
from the side, for renders with :func:`profilecheck.synth.render`.

Shared by the tool and height samples, their tests and their benchmarks: each function
returns the closed outline and the truth it was built from, by plane geometry only.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["tool_top_view", "centre_side_view", "bar_side_view", "tool_side_view",
           "work_edge"]


def _rot(points: np.ndarray, deg: float) -> np.ndarray:
    a = math.radians(deg)
    m = np.array([[math.cos(a), -math.sin(a)], [math.sin(a), math.cos(a)]])
    return points @ m.T


def tool_top_view(*, half_left_deg: float = 30.0, half_right_deg: float = 30.0,
                  tip_flat_mm: float = 0.0, tip_radius_mm: float = 0.0,
                  shank_width_mm: float = 2.0, shank_length_mm: float = 8.0,
                  direction_deg: float = 90.0, apex_mm=(0.0, 0.0),
                  mirror: bool = False) -> tuple[np.ndarray, dict]:
    """A ground threading tool seen square onto its top face.

    The tool's axis points along ``direction_deg`` (world angle from +x, counter-clockwise;
    90 = point up). With the point up, the left flank makes ``half_left_deg`` with the axis
    and the right flank ``half_right_deg``; the tip carries a flat ``tip_flat_mm`` long
    (square to the axis) or a nose radius ``tip_radius_mm`` tangent to both flanks (not
    both). ``apex_mm`` is the virtual sharp (the flanks' intersection). ``mirror`` reflects
    the outline left-right before it is turned (a left-hand tool of the same grind).

    Returns the outline (N, 2) mm and the truth: included_angle, half_left, half_right,
    bisector_tilt (deg, + when the point leans right with the point up; as seen after
    mirroring), tip_flat or tip_radius (mm).
    """
    if tip_flat_mm > 0 and tip_radius_mm > 0:
        raise ValueError("give tip_flat_mm or tip_radius_mm, not both")
    bl, br = math.radians(half_left_deg), math.radians(half_right_deg)
    dl = np.array([-math.sin(bl), -math.cos(bl)])
    dr = np.array([math.sin(br), -math.cos(br)])
    half_w = shank_width_mm / 2
    cl = dl * (half_w / math.sin(bl))
    cr = dr * (half_w / math.sin(br))
    bottom = -(max(-cl[1], -cr[1]) + shank_length_mm)
    pts = [np.array([[-half_w, bottom], [half_w, bottom]]), cr[None, :]]
    beta = 0.5 * (bl + br)
    if tip_radius_mm > 0:
        r = tip_radius_mm
        into = (dl + dr) / np.hypot(*(dl + dr))
        c = into * (r / math.sin(beta))
        tl, tr = dl * (r / math.tan(beta)), dr * (r / math.tan(beta))
        a_r = math.degrees(math.atan2(*(tr - c)[::-1]))
        a_l = math.degrees(math.atan2(*(tl - c)[::-1]))
        if a_l < a_r:
            a_l += 360.0
        from ..synth import arc_points

        pts.append(arc_points(c, r, a_r, a_l, max_error_mm=1e-6))
    elif tip_flat_mm > 0:
        d = tip_flat_mm / (math.tan(bl) + math.tan(br))
        pts.append(np.array([[d * math.tan(br), -d], [-d * math.tan(bl), -d]]))
    else:
        pts.append(np.zeros((1, 2)))
    pts.append(cl[None, :])
    poly = np.concatenate(pts)
    hl, hr = half_left_deg, half_right_deg
    if mirror:
        poly = poly[::-1] * np.array([-1.0, 1.0])
        hl, hr = hr, hl
    poly = _rot(poly, direction_deg - 90.0) + np.asarray(apex_mm, float)
    truth = {"included_angle": hl + hr, "half_left": hl, "half_right": hr,
             "bisector_tilt": (hl - hr) / 2}
    if tip_radius_mm > 0:
        truth["tip_radius"] = tip_radius_mm
    else:
        truth["tip_flat"] = tip_flat_mm
    return poly, truth


def centre_side_view(*, apex_mm=(0.0, 0.0), included_deg: float = 60.0,
                     diameter_mm: float = 6.0, length_mm: float = 30.0,
                     pointing_deg: float = 0.0) -> tuple[np.ndarray, dict]:
    """A lathe centre seen from the side: a cone of ``included_deg`` on a round body.

    The apex is at ``apex_mm``, the point faces ``pointing_deg`` (0 = +x). Truth: the axis
    (a point and a unit direction, world mm).
    """
    h = math.radians(included_deg / 2)
    R = diameter_mm / 2
    back = R / math.tan(h)
    poly = np.array([[0.0, 0.0], [-back, R], [-length_mm, R], [-length_mm, -R], [-back, -R]])
    poly = _rot(poly, pointing_deg) + np.asarray(apex_mm, float)
    a = math.radians(pointing_deg)
    return poly, {"axis_point": list(map(float, apex_mm)), "axis_direction": [math.cos(a), math.sin(a)]}


def bar_side_view(*, axis_y_mm: float = 0.0, diameter_mm: float = 6.0, x0_mm: float = -30.0,
                  x1_mm: float = 0.0, axis_deg: float = 0.0) -> tuple[np.ndarray, dict]:
    """A turned bar seen from the side: its silhouette between x0 and x1 (end face at x1)."""
    R = diameter_mm / 2
    poly = np.array([[x0_mm, -R], [x1_mm, -R], [x1_mm, R], [x0_mm, R]])
    poly = _rot(poly, axis_deg) + np.array([0.0, axis_y_mm])
    a = math.radians(axis_deg)
    return poly, {"axis_point": [0.0, axis_y_mm], "axis_direction": [math.cos(a), math.sin(a)]}


def tool_side_view(*, tip_mm=(1.0, 0.0), top_slope_deg: float = 0.0,
                   front_clearance_deg: float = 10.0, thickness_mm: float = 3.0,
                   length_mm: float = 30.0, facing: int = -1) -> tuple[np.ndarray, dict]:
    """A tool seen from the side with its top (rake) face edge-on.

    The cutting tip is at ``tip_mm``; the top edge runs back from it (away from the work,
    toward +x when ``facing`` = -1, i.e. the tip faces -x) rising toward the tip by
    ``top_slope_deg``; the front face drops from the tip with ``front_clearance_deg`` of
    clearance. Truth: tip (mm) and top slope (deg, + when the top edge rises toward the tip).
    """
    s = math.radians(top_slope_deg)
    c = math.radians(front_clearance_deg)
    back = -facing
    top_end = np.array([back * length_mm * math.cos(s), -length_mm * math.sin(s)])
    front_end = np.array([back * thickness_mm * math.tan(c), -thickness_mm])
    poly = np.array([[0.0, 0.0], front_end,
                     [top_end[0], front_end[1] + top_end[1]], top_end])
    if back < 0:
        poly = poly[::-1]
    poly = poly + np.asarray(tip_mm, float)
    return poly, {"tip_mm": list(map(float, tip_mm)), "top_slope": float(top_slope_deg)}


def work_edge(*, y_mm: float = 1.0, x0_mm: float = -30.0, x1_mm: float = 30.0,
              depth_mm: float = 20.0, axis_deg: float = 0.0) -> np.ndarray:
    """A straight edge of the work (top view): the work fills the band above ``y_mm``."""
    poly = np.array([[x0_mm, y_mm], [x1_mm, y_mm], [x1_mm, y_mm + depth_mm], [x0_mm, y_mm + depth_mm]])
    return _rot(poly, axis_deg)
