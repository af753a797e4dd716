"""ISO metric trapezoidal threads (ISO 2901 profile, ISO 2904 basic dimensions), 30 deg.

Design profile (standards-notes §8 [P 21]): H1 = 0.5P; crest clearance ac; h3 = H4 =
0.5P + ac; d2 = D2 = d - 0.5P; D1 = d - P; d3 = d - 2 h3; D4 = d + 2 ac; basic flat
0.366P. ac = 0.15 mm (P 1.5), 0.25 (P 2-5), 0.5 (P 6-12), 1.0 (P 14-44) [M, break points
confirmed]. ISO 2903 tolerance classes (7e, 7H, ...) are not implemented: basic
dimensions only, whatever class is written.
"""

from __future__ import annotations

import math
import re

from ..errors import SpecError
from ..units import round_half_up
from ._build import assemble
from .designation import Designation, format_designation
from .spec import BASIC_ONLY, BasicProfile, ThreadSpec, ToolTip

__all__ = ["trapezoidal_spec", "crest_clearance_mm"]


def crest_clearance_mm(pitch_mm: float) -> float:
    """Crest clearance ac of ISO 2904 for a pitch (standards-notes §8)."""
    if not pitch_mm > 0:
        raise ValueError("pitch_mm must be > 0")
    if pitch_mm <= 1.5:
        return 0.15
    if pitch_mm <= 5:
        return 0.25
    if pitch_mm <= 12:
        return 0.5
    return 1.0


def trapezoidal_spec(d: Designation, original: str) -> ThreadSpec:
    """ThreadSpec of ``Tr d x P[-class]`` (basic dimensions only)."""
    P = float(d.pitch)
    D = float(d.diameter)
    if P >= D / 2:
        raise SpecError(f"{original!r}: the pitch is too coarse for the diameter; e.g. Tr20x4-7e")
    cls = d.thread_class
    if cls and not re.fullmatch(r"\d+[a-zA-Z](?:\d+[a-zA-Z])?", cls):
        raise SpecError(f"{original!r}: unknown trapezoidal class {cls!r}; e.g. Tr20x4-7e "
                        "or Tr20x4-7H")
    external = (not cls[-1].isupper()) if cls else (d.internal is not True)
    if cls and d.internal is not None and d.internal == external:
        raise SpecError(f"{original!r}: class {cls} contradicts -INT/-EXT")
    ac = crest_clearance_mm(P)
    q = lambda x: float(round_half_up(x, 3))  # noqa: E731  (ISO 2904: 3 decimals)
    h3 = 0.5 * P + ac
    d2, d3, D1, D4 = q(D - 0.5 * P), q(D - 2 * h3), q(D - P), q(D + 2 * ac)
    flat_root = 0.366 * P - 2 * ac * math.tan(math.radians(15))
    profile = BasicProfile(
        P / (2 * math.tan(math.radians(15))), h3, crest_flat_mm=0.366 * P,
        root_flat_mm=flat_root, source="ISO 2901 design profile (h3 = 0.5P + ac)")
    tip = ToolTip("flat", flat_min_mm=flat_root, flat_max_mm=flat_root,
                  source="root flat 0.366P - 2 ac tan15 (derived, standards-notes §10 [D]); "
                         "ISO 2901 allows root radius up to ac",
                  note="tool ground to the design root flat")
    note = BASIC_ONLY + (f" (ISO 2903 class {cls} not implemented)" if cls else "")
    return assemble(
        designation=format_designation(d), form="ISO trapezoidal", series="Tr",
        thread_class=cls, external=external, left_hand=d.left_hand, starts=d.starts,
        included_angle_deg=30.0, pitch_mm=P, major_mm=D if external else D4, pd_mm=d2,
        minor_mm=d3 if external else D1, limits={}, limits_note=note, profile=profile,
        tool_ext=tip, tool_int=tip, radial_depth_mm=h3, wire_major_mm=D,
        notes=("radial depth: h3 = 0.5P + ac (standards-notes §10)",),
        sources=("ISO 2901 / ISO 2904 as given in standards-notes §8",))
