"""Qt-free drawing primitives in image pixel coordinates.

Measurements return a tuple of these; the annotated-PNG writer (``report.annotate``) and the
viewer both draw them, so what the picture shows is what the report says. Coordinates are
(x, y) = (col, row) in image pixels with integer values at pixel centres
(``docs/conventions.md``). Styles are semantic names, not colours: each renderer maps them
to its own palette (``STYLES``).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Union

__all__ = ["Segment", "InfiniteLine", "Polyline", "Arc", "Marker", "Label", "ScaleBar",
           "Overlay", "STYLES", "scale_bar_for"]

#: Semantic styles. 'fit' = a fitted line/arc, 'axis' = a datum, 'envelope_max' /
#: 'envelope_min' = tolerance-envelope profiles, 'edge' = raw edge points, 'pass' / 'fail' /
#: 'undecided' = verdict-coloured annotations, 'info' = neutral text.
STYLES = ("fit", "axis", "edge", "envelope_max", "envelope_min", "pass", "fail", "undecided",
          "info")


@dataclass(frozen=True)
class Segment:
    """A straight segment from ``p0`` to ``p1`` (px)."""
    p0: tuple[float, float]
    p1: tuple[float, float]
    style: str = "fit"


@dataclass(frozen=True)
class InfiniteLine:
    """A line through ``point`` along ``direction`` clipped to the image when drawn."""
    point: tuple[float, float]
    direction: tuple[float, float]
    style: str = "axis"


@dataclass(frozen=True)
class Polyline:
    """Connected points (px); ``closed`` joins last to first."""
    points: tuple[tuple[float, float], ...]
    style: str = "envelope_max"
    closed: bool = False


@dataclass(frozen=True)
class Arc:
    """Circular arc of ``radius`` px about ``centre``, from ``start_deg`` sweeping
    ``span_deg`` (image angles: 0 along +x, positive toward +y, i.e. clockwise on screen)."""
    centre: tuple[float, float]
    radius: float
    start_deg: float = 0.0
    span_deg: float = 360.0
    style: str = "fit"


@dataclass(frozen=True)
class Marker:
    """A point marker (cross) of ``size`` px."""
    point: tuple[float, float]
    size: float = 6.0
    style: str = "fit"


@dataclass(frozen=True)
class Label:
    """Text anchored at ``point`` (px), top-left of the text box."""
    point: tuple[float, float]
    text: str
    style: str = "info"


@dataclass(frozen=True)
class ScaleBar:
    """A scale bar ``length_mm`` long; ``length_px`` is its length in image pixels.
    Drawn in the lower-left corner by each renderer."""
    length_mm: float
    length_px: float
    text: str = ""
    style: str = "info"


Overlay = Union[Segment, InfiniteLine, Polyline, Arc, Marker, Label, ScaleBar]


def scale_bar_for(mm_per_px: float, width_px: int) -> ScaleBar:
    """A :class:`ScaleBar` of a round length (1, 2 or 5 x 10^k mm) near a fifth of the
    image width, labelled in micrometres below 1 mm."""
    import math

    if not (mm_per_px > 0 and math.isfinite(mm_per_px)) or width_px < 1:
        raise ValueError("mm_per_px must be > 0 and width_px >= 1")
    target = 0.2 * width_px * mm_per_px
    k = math.floor(math.log10(target))
    best = max((m * 10.0 ** k for m in (1, 2, 5) if m * 10.0 ** k <= target), default=10.0 ** k)
    text = f"{best * 1000:g} \u00b5m" if best < 1 else f"{best:g} mm"
    return ScaleBar(length_mm=best, length_px=best / mm_per_px, text=text)
