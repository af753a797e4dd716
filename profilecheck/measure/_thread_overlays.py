"""Overlays of a thread measurement (Qt-free data, image px; profilecheck.overlays)."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..overlays import InfiniteLine, Label, Polyline, Segment, scale_bar_for
from . import _thread_profile as tp
from ._thread_axis import AxisFrame

__all__ = ["build_overlays", "limb_to_image"]


def limb_to_image(xy_mm: np.ndarray, frame: AxisFrame, scale: float, top: bool,
                  r_off: float = 0.0) -> np.ndarray:
    """Limb-frame mm points (x, y) -> image px (inverse of the limb mapping of thread.py)."""
    xy_mm = np.atleast_2d(np.asarray(xy_mm, float))
    r = (xy_mm[:, 1] + r_off) if top else -(xy_mm[:, 1] + r_off)
    return frame.to_image(np.column_stack([xy_mm[:, 0], r]) / scale)


def _pt(a: np.ndarray) -> tuple[float, float]:
    return (float(a[0]), float(a[1]))


def build_overlays(limbs: dict[str, tp.LimbProfile], frame: AxisFrame, scale: float, spec: Any,
                   both: bool, verdict: str, shape) -> tuple:
    """Fitted flanks and flats, the axis, the spec's max/min-material envelope, labels and a
    scale bar."""
    out: list[Any] = []
    if both:
        out.append(InfiniteLine(_pt(frame.o), _pt(np.asarray(frame.u)), "axis"))
    for name, limb in limbs.items():
        top = name == "top"
        crest = np.mean([c.level for c in limb.crests]) if limb.crests else None
        root = np.mean([r.level for r in limb.roots]) if limb.roots else None
        if crest is None or root is None:
            continue
        for f in limb.flanks:
            ends = np.array([[f.line.x_at(root), root], [f.line.x_at(crest), crest]])
            p = limb_to_image(ends, frame, scale, top)
            out.append(Segment(_pt(p[0]), _pt(p[1]), "fit"))
        left = {f.index: f.line for f in limb.flanks if f.side == "left"}
        right = {f.index: f.line for f in limb.flanks if f.side == "right"}
        for c in limb.crests:
            if math.isfinite(c.width) and c.index in left and c.index in right:
                ends = np.array([[left[c.index].x_at(c.level), c.level],
                                 [right[c.index].x_at(c.level), c.level]])
                p = limb_to_image(ends, frame, scale, top)
                out.append(Segment(_pt(p[0]), _pt(p[1]), "fit"))
        for r in limb.roots:
            if math.isfinite(r.width) and r.index in right and r.index + 1 in left:
                ends = np.array([[right[r.index].x_at(r.level), r.level],
                                 [left[r.index + 1].x_at(r.level), r.level]])
                p = limb_to_image(ends, frame, scale, top)
                out.append(Segment(_pt(p[0]), _pt(p[1]), "fit"))
        if spec is not None and limb.crests:
            out.extend(_envelope(limb, frame, scale, spec, top, both))
    h, w = shape[:2]
    words = {"pass": "PASS", "fail": "FAIL", "undecided": "UNDECIDED", "none": "measured"}
    style = verdict if verdict in ("pass", "fail", "undecided") else "info"
    title = (spec.designation + ": " if spec is not None else "") + words.get(verdict, verdict)
    out.append(Label((10.0, 10.0), title, style))
    out.append(scale_bar_for(scale, w))
    return tuple(out)


def _envelope(limb: tp.LimbProfile, frame: AxisFrame, scale: float, spec: Any, top: bool,
              both: bool) -> list[Any]:
    """Max- and min-material axial profiles laid over the edge, aligned on the pitch line
    (axially on the first crest centre, radially on the axis or, with one edge, on the
    measured pitch line)."""
    out = []
    x0 = float(min(c.x for c in limb.crests))
    n = max(1, int(round((max(c.x for c in limb.crests) - x0) / spec.pitch_mm)))
    for material, style in (("max", "envelope_max"), ("min", "envelope_min")):
        try:
            prof = np.asarray(spec.axial_profile(material, n_pitch=n), float)
        except Exception:  # a spec without a drawable profile must not stop the report
            continue
        y = prof[:, 1] if both else prof[:, 1] - 0.5 * spec.pitch_diameter_mm + limb.pitch_line_y
        pts = limb_to_image(np.column_stack([prof[:, 0] + x0, y]), frame, scale, top)
        # tolist() gives the same Python floats as float() per element, in one pass
        out.append(Polyline(tuple(map(tuple, np.asarray(pts, float)[:, :2].tolist())), style))
    return out
