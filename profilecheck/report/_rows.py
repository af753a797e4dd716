"""Readings of a result dict as flat rows: the one place the report writers read it.

A result dict is the ``to_dict()`` JSON of a measurement (``../shared/design.md``):
``measurements`` {key: {value, u, unit, ...}} and ``verdict`` {overall, checks: [{name,
value, u, min, max, unit, result, source}]}. Each measurement becomes one row; a check with
the same name (and the same value) adds its limits and result to that row; any other check
becomes a row of its own. Malformed entries are skipped, never raised on: a report of a
half-filled dict still prints what it has.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from ._fmt import num

__all__ = ["Reading", "readings", "KEY_ORDER", "quantity_title"]

#: Display order of known keys (design.md); other keys follow alphabetically.
KEY_ORDER = ("pitch", "flank_left", "flank_right", "included_angle", "half_left", "half_right",
             "bisector_tilt", "crest_flat", "root_flat", "tip_flat", "tip_radius", "depth",
             "major_diameter", "pitch_diameter", "minor_diameter", "over_wire",
             "height_offset", "diameter", "scale_error", "scale_now")

_TITLES = {"pitch": "pitch", "flank_left": "flank angle, left", "flank_right":
           "flank angle, right", "included_angle": "included angle", "half_left":
           "half angle, left", "half_right": "half angle, right", "bisector_tilt":
           "bisector tilt", "crest_flat": "crest flat", "root_flat": "root flat",
           "tip_flat": "tip flat", "tip_radius": "tip radius", "depth": "thread depth",
           "major_diameter": "major diameter", "pitch_diameter": "pitch diameter",
           "minor_diameter": "minor diameter", "height_offset": "height (tool - axis)",
           "over_wire": "over wires", "scale_error": "scale error",
           "scale_now": "scale now"}


def quantity_title(key: str) -> str:
    """Words for a report key ('pitch_diameter' -> 'pitch diameter')."""
    return _TITLES.get(key, str(key).replace("_", " "))


@dataclass(frozen=True)
class Reading:
    """One quantity of a result: value, expanded uncertainty (k = 2), limits, verdict."""

    quantity: str
    value: float
    u: float
    unit: str
    min: float | None = None
    max: float | None = None
    result: str = ""
    source: str = ""
    n_points: int | None = None
    note: str = ""


def _order(key: str) -> tuple[int, str]:
    return (KEY_ORDER.index(key), key) if key in KEY_ORDER else (len(KEY_ORDER), key)


def readings(result: dict[str, Any]) -> list[Reading]:
    """Flat rows of a result dict, in display order (see module docstring)."""
    if not isinstance(result, dict):
        raise TypeError(f"result_dict must be a dict, got {type(result).__name__}")
    meas = result.get("measurements") or {}
    checks_raw = (result.get("verdict") or {}).get("checks") if isinstance(
        result.get("verdict"), dict) else None
    checks: dict[str, list[dict[str, Any]]] = {}
    for c in checks_raw or []:
        if isinstance(c, dict) and isinstance(c.get("name"), str) and num(c.get("value")) is not None:
            checks.setdefault(c["name"], []).append(c)
    rows: list[Reading] = []
    if isinstance(meas, dict):
        for key in sorted(meas, key=_order):
            m = meas[key]
            if not isinstance(m, dict) or num(m.get("value")) is None:
                continue
            v = num(m.get("value"))
            u = num(m.get("u")) or 0.0
            unit = str(m.get("unit", "mm"))
            n = m.get("n_points")
            row = Reading(key, v, u, unit, n_points=int(n) if num(n) is not None else None,
                          note=str(m.get("note", "") or ""))
            for c in list(checks.get(key, [])):
                cv = num(c.get("value"))
                if cv is not None and abs(cv - v) <= 1e-9 * max(1.0, abs(v)):
                    row = Reading(key, v, u, unit, num(c.get("min")), num(c.get("max")),
                                  str(c.get("result", "")), str(c.get("source", "") or ""),
                                  row.n_points, row.note)
                    checks[key].remove(c)
                    break
            rows.append(row)
    for name in sorted(checks, key=_order):
        for c in checks[name]:
            rows.append(Reading(name, num(c.get("value")), num(c.get("u")) or 0.0,
                                str(c.get("unit", "mm")), num(c.get("min")), num(c.get("max")),
                                str(c.get("result", "")), str(c.get("source", "") or "")))
    return rows
