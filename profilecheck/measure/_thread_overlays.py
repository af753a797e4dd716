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
    profiles: dict[tuple[str, int], np.ndarray | None] = {}  # spec polylines, per call
    for name, limb in limbs.items():
        top = name == "top"
        crest = np.mean([c.level for c in limb.crests]) if limb.crests else None
        root = np.mean([r.level for r in limb.roots]) if limb.roots else None
        if crest is None or root is None:
            continue
        # every segment end of this edge (flanks, then crests, then roots), mapped at once
        ends: list[list[float]] = []
        for f in limb.flanks:
            ends += [[f.line.x_at(root), root], [f.line.x_at(crest), crest]]
        left = {f.index: f.line for f in limb.flanks if f.side == "left"}
        right = {f.index: f.line for f in limb.flanks if f.side == "right"}
        for c in limb.crests:
            if math.isfinite(c.width) and c.index in left and c.index in right:
                ends += [[left[c.index].x_at(c.level), c.level],
                         [right[c.index].x_at(c.level), c.level]]
        for r in limb.roots:
            if math.isfinite(r.width) and r.index in right and r.index + 1 in left:
                ends += [[right[r.index].x_at(r.level), r.level],
                         [left[r.index + 1].x_at(r.level), r.level]]
        if ends:
            p = limb_to_image(np.array(ends, float), frame, scale, top)[:, :2].tolist()
            out.extend(Segment(tuple(p[i]), tuple(p[i + 1]), "fit")
                       for i in range(0, len(p), 2))
        if spec is not None and limb.crests:
            out.extend(_envelope(limb, frame, scale, spec, top, both, profiles))
    h, w = shape[:2]
    words = {"pass": "PASS", "fail": "FAIL", "undecided": "UNDECIDED", "none": "measured"}
    style = verdict if verdict in ("pass", "fail", "undecided") else "info"
    title = (spec.designation + ": " if spec is not None else "") + words.get(verdict, verdict)
    out.append(Label((10.0, 10.0), title, style))
    out.append(scale_bar_for(scale, w))
    return tuple(out)


def _envelope(limb: tp.LimbProfile, frame: AxisFrame, scale: float, spec: Any, top: bool,
              both: bool, profiles: dict | None = None) -> list[Any]:
    """Max- and min-material axial profiles laid over the edge, aligned on the pitch line
    (axially on the first crest centre, radially on the axis or, with one edge, on the
    measured pitch line). ``profiles`` caches the spec's polylines by (material, pitches)
    between the two edges of one call (None: no cache)."""
    out = []
    profiles = {} if profiles is None else profiles
    x0 = float(min(c.x for c in limb.crests))
    n = max(1, int(round((max(c.x for c in limb.crests) - x0) / spec.pitch_mm)))
    for material, style in (("max", "envelope_max"), ("min", "envelope_min")):
        if (material, n) not in profiles:
            try:
                profiles[material, n] = np.asarray(spec.axial_profile(material, n_pitch=n),
                                                   float)
            except Exception:  # a spec without a drawable profile must not stop the report
                profiles[material, n] = None
        prof = profiles[material, n]
        if prof is None:
            continue
        y = prof[:, 1] if both else prof[:, 1] - 0.5 * spec.pitch_diameter_mm + limb.pitch_line_y
        pts = np.asarray(limb_to_image(np.column_stack([prof[:, 0] + x0, y]), frame, scale,
                                       top), float)
        # tolist() gives the same Python floats as float() per element, in one pass; zip
        # pairs them into the point tuples without a list per point
        out.append(Polyline(tuple(zip(pts[:, 0].tolist(), pts[:, 1].tolist())), style))
    return out
