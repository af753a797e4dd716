"""Screen colours of the overlay styles (no Qt; hex sRGB and dash patterns).

Chosen to stay apart for the common colour-vision deficiencies (a blue / orange / grey
verdict set, yellow and purple for data, dashed envelopes) and to read on a grey
silhouette picture; every meaning is also carried by a word or a line pattern.
"""

from __future__ import annotations

__all__ = ["OVERLAY_COLOURS", "OVERLAY_DASHED", "OVERLAY_WORDS", "overlay_colour"]

OVERLAY_COLOURS = {
    "fit": "#ffd21f",          # yellow
    "axis": "#00c8c8",         # cyan
    "edge": "#c050ff",         # purple
    "envelope_max": "#56b4e9", # sky blue, dashed
    "envelope_min": "#ff9a3c", # light orange, dashed
    "pass": "#7ab0ff",         # lighter than the panels' pass blue: read on the dark tags
    "fail": "#ffa040",
    "undecided": "#c0c0c0",
    "info": "#ffffff",
}
OVERLAY_DASHED = frozenset({"envelope_max", "envelope_min", "axis"})


def overlay_colour(style: str) -> str:
    """Colour of an overlay style; unknown styles draw like 'info'."""
    return OVERLAY_COLOURS.get(style, OVERLAY_COLOURS["info"])


#: What each style means, for the key under the picture.
OVERLAY_WORDS = {
    "fit": "fitted line / arc",
    "axis": "axis (datum)",
    "edge": "edge points",
    "envelope_max": "max-material limit",
    "envelope_min": "min-material limit",
    "pass": "pass",
    "fail": "fail",
    "undecided": "undecided",
}
