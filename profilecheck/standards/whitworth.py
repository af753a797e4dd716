"""Whitworth form threads (BS 84, 55 deg, radiused crest and root): BSW, BSF, and the
constant-pitch Model Engineer (ME: 26, 32, 40 tpi) and brass (BSB, 26 tpi) series.

Basic profile (standards-notes §5 [P 17][D]): H = 0.960491P; H/6 cut off crest and root
and replaced by arcs of r = 0.137329P tangent to the flanks; depth h = 2H/3 = 0.640327P;
E = D - 0.640327P; core = D - 1.280654P. BS 84 tolerance classes are not implemented:
basic dimensions only.
"""

from __future__ import annotations

import math
from dataclasses import replace
from decimal import Decimal

from ..errors import SpecError
from ..units import MM_PER_IN
from ._build import assemble
from .designation import Designation, format_designation
from .spec import BASIC_ONLY, BasicProfile, ThreadSpec, ToolTip

__all__ = ["whitworth_spec", "BSW_TPI", "BSF_TPI", "CONSTANT_PITCH_TPI"]

#: BSW threads per inch per size (standards-notes §5 [P 17]).
BSW_TPI = {Decimal(k): Decimal(v) for k, v in {
    "0.125": "40", "0.1875": "24", "0.25": "20", "0.3125": "18", "0.375": "16",
    "0.4375": "14", "0.5": "12", "0.5625": "12", "0.625": "11", "0.75": "10", "0.875": "9",
    "1": "8", "1.125": "7", "1.25": "7", "1.5": "6", "1.75": "5", "2": "4.5"}.items()}
#: BSF threads per inch per size (standards-notes §5, from memory [M]).
BSF_TPI = {Decimal(k): Decimal(v) for k, v in {
    "0.25": "26", "0.3125": "22", "0.375": "20", "0.4375": "18", "0.5": "16",
    "0.5625": "16", "0.625": "14", "0.75": "12", "0.875": "11", "1": "10"}.items()}
#: Constant-pitch series of the Whitworth form (standards-notes §5 [P 17][P 19]).
CONSTANT_PITCH_TPI = {"ME": (Decimal(26), Decimal(32), Decimal(40)), "BSB": (Decimal(26),)}

_H = 1 / (2 * math.tan(math.radians(27.5)))     # 0.960491 P
_R = 0.137329                                   # crest/root radius / P (BS 84)


def whitworth_spec(d: Designation, original: str) -> ThreadSpec:
    """ThreadSpec of a Whitworth-form designation (basic dimensions only)."""
    if d.thread_class:
        raise SpecError(f"{original!r}: BS 84 classes are not available here; write the "
                        "thread without a class, e.g. 1/4 BSW or 3/16-40 ME")
    series = d.series
    tpi = d.tpi
    if series in ("BSW", "BSF"):
        table = BSW_TPI if series == "BSW" else BSF_TPI
        want = table.get(d.diameter.normalize()) or table.get(d.diameter)
        if want is None:
            raise SpecError(f"{original!r}: no {series} size {d.size} in on record; "
                            "e.g. 1/4 BSW, 1/4 BSF, or 3/16-40 ME for a constant pitch")
        if tpi is not None and tpi != want:
            raise SpecError(f"{original!r}: {d.size} {series} has {want} tpi, not {tpi}; "
                            f"e.g. {d.size} {series}")
        tpi = want
    else:
        allowed = CONSTANT_PITCH_TPI[series]
        if tpi is None or tpi not in allowed:
            raise SpecError(f"{original!r}: {series} threads are "
                            f"{', '.join(str(a) for a in allowed)} tpi; e.g. 3/16-40 ME")
    P = MM_PER_IN / float(tpi)
    D = float(d.diameter) * MM_PER_IN
    depth = 2 * _H / 3 * P
    E = D - depth
    core = D - 2 * depth
    if core <= 0:
        raise SpecError(f"{original!r}: {tpi} tpi is too coarse for {d.size} in; e.g. 3/16-40 ME")
    r = _R * P
    external = d.internal is not True
    profile = BasicProfile(_H * P, depth, crest_radius_mm=r, root_radius_mm=r,
                           source="BS 84 basic form: H/6 rounded off, r = 0.137329P")
    tip = ToolTip("radius", radius_min_mm=r, radius_max_mm=r,
                  source="BS 84 root radius 0.137329P (standards-notes §5 [P 17])",
                  note="tool ground to the basic radius; BS 84 tolerances not implemented")
    return assemble(
        designation=format_designation(replace(d, tpi=d.tpi)), form="Whitworth",
        series=series, thread_class="", external=external, left_hand=d.left_hand,
        starts=d.starts, included_angle_deg=55.0, pitch_mm=P, major_mm=D, pd_mm=E,
        minor_mm=core, limits={}, limits_note=BASIC_ONLY + " (BS 84 classes not implemented)",
        profile=profile, tool_ext=tip, tool_int=tip, tpi=float(tpi), radial_depth_mm=depth,
        crest_radius_ext_mm=r,
        shape={"basic": {"crest_radius_mm": r, "root_radius_mm": r}},
        notes=("radial depth: basic depth 0.640327P (standards-notes §10)",),
        sources=("BS 84 basic Whitworth form as given in standards-notes §5",))
