"""Where to look in the next live frame (no Qt).

In the live height job the tool and the lathe centre hardly move between frames, so the
next frame is measured only in a box around the last tool tip and axis point: the library's
edge finding, which costs in proportion to the edge it follows, then runs on a fraction of
the frame. The library still computes the uncertainty of every reading from what it used.
A full frame is measured first, after any failure, and every ``REFRESH_EVERY`` frames.
"""

from __future__ import annotations

import math
from typing import Any

__all__ = ["track_roi", "MIN_MARGIN_PX", "REFRESH_EVERY", "MAX_AREA_FRACTION"]

#: Least margin around the tip and axis point (px): room for the tool's top and front edges
#: and the centre's flanks, and for the set-up to move between frames (common practice,
#: no source: chosen so the tracked result matches the full frame's within its U).
MIN_MARGIN_PX = 160
#: Measure the whole frame every this many live frames (re-acquire after a change of scene).
REFRESH_EVERY = 15
#: A box larger than this fraction of the frame saves too little to be worth it.
MAX_AREA_FRACTION = 0.6


def track_roi(details: dict[str, Any] | None, image_size: tuple[int, int],
              reference: str) -> tuple[int, int, int, int] | None:
    """Region of interest for the next frame, or None for the whole frame.

    Parameters
    ----------
    details : dict or None
        ``HeightResult.details`` of the last frame: ``tip_px`` and ``axis_point_px`` (x, y).
    image_size : (int, int)
        (width, height) px of the frames.
    reference : str
        'point' and 'line' are tracked; 'bar' is not (both bar edges must stay in view,
        and their distance from the axis point is not in the details).

    Returns
    -------
    (x_min, y_min, x_max, y_max) or None
        Pixel bounds with x_min <= col < x_max, y_min <= row < y_max (the ``roi`` of
        :func:`profilecheck.imaging.find_edges`): the box around the tip (and, for 'point',
        the centre's apex) grown by max(160 px, 0.6 x their distance) and clipped to the
        frame.
    """
    w, h = int(image_size[0]), int(image_size[1])
    if w <= 0 or h <= 0:
        raise ValueError(f"image_size must be positive, got {image_size!r}")
    if not details or reference == "bar":
        return None
    pts = []
    for key in ("tip_px",) + (("axis_point_px",) if reference == "point" else ()):
        p = details.get(key)
        if not (isinstance(p, (list, tuple)) and len(p) == 2
                and all(isinstance(v, (int, float)) and math.isfinite(v) for v in p)):
            return None
        pts.append((float(p[0]), float(p[1])))
    span = math.dist(pts[0], pts[1]) if len(pts) == 2 else 0.0
    m = max(MIN_MARGIN_PX, 0.6 * span)
    xs, ys = [p[0] for p in pts], [p[1] for p in pts]
    x0, x1 = max(0, math.floor(min(xs) - m)), min(w, math.ceil(max(xs) + m) + 1)
    y0, y1 = max(0, math.floor(min(ys) - m)), min(h, math.ceil(max(ys) + m) + 1)
    if x1 <= x0 or y1 <= y0 or (x1 - x0) * (y1 - y0) > MAX_AREA_FRACTION * w * h:
        return None
    return (x0, y0, x1, y1)
