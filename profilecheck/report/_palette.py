"""The report palette: semantic overlay styles -> colour, line pattern, marker shape, word.

Colours are taken from the colour-universal-design set of Okabe and Ito (2008), chosen so
that the common colour-vision deficiencies still tell them apart; every style also differs
in line pattern, and the verdict styles carry a word, so colour is never the only cue.

References
----------
M. Okabe and K. Ito, "Color Universal Design (CUD): how to make figures and presentations
that are friendly to colorblind people", J*Fly, 2008 (the 8-colour set used here).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Pen", "PENS", "pen_for", "VERDICT_WORDS"]


@dataclass(frozen=True)
class Pen:
    """How one semantic style is drawn.

    ``rgb`` colour (0-255), ``halo_rgb`` the contrasting outline drawn underneath so the
    stroke reads on both the bright field and the dark silhouette, ``dash`` the on/off
    pattern in units of the line width (empty = solid), ``width`` relative line width,
    ``marker`` shape for :class:`~profilecheck.overlays.Marker` ('plus', 'x', 'diamond',
    'circle', 'dot'), ``word`` the text a verdict style adds to its labels.
    """

    name: str
    rgb: tuple[int, int, int]
    halo_rgb: tuple[int, int, int]
    dash: tuple[float, ...] = ()
    width: float = 1.0
    marker: str = "plus"
    word: str = ""


# Okabe-Ito colours (RGB): blue (0,114,178), orange (230,159,0), vermillion (213,94,0),
# bluish green (0,158,115), sky blue (86,180,233), reddish purple (204,121,167),
# yellow (240,228,66), black.
_BLACK = (0, 0, 0)
_WHITE = (255, 255, 255)

PENS: dict[str, Pen] = {
    "fit": Pen("fit", (0, 114, 178), _WHITE, (), 1.0, "plus"),
    "axis": Pen("axis", (204, 121, 167), _BLACK, (8.0, 3.0, 1.5, 3.0), 1.0, "plus"),
    "edge": Pen("edge", (86, 180, 233), _BLACK, (), 1.0, "dot"),
    "envelope_max": Pen("envelope_max", (230, 159, 0), _BLACK, (6.0, 3.0), 1.0, "diamond"),
    "envelope_min": Pen("envelope_min", (240, 228, 66), _BLACK, (1.5, 2.5), 1.0, "diamond"),
    "pass": Pen("pass", (0, 158, 115), _WHITE, (), 1.5, "circle", "PASS"),
    "fail": Pen("fail", (213, 94, 0), _WHITE, (3.0, 2.0), 2.0, "x", "FAIL"),
    "undecided": Pen("undecided", (240, 228, 66), _BLACK, (1.5, 2.0), 1.5, "diamond",
                     "UNDECIDED"),
    "info": Pen("info", _WHITE, _BLACK, (), 1.0, "plus"),
}

#: Words each verdict style adds to its labels (colour is never the only cue).
VERDICT_WORDS = {k: p.word for k, p in PENS.items() if p.word}


def pen_for(style: str) -> Pen:
    """Pen for a semantic ``style`` name; unknown names draw as 'info' (never raise: an
    overlay from a newer module must not stop a report)."""
    return PENS.get(style, PENS["info"])
