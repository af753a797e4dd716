"""Rows of the readings panel, made from a report dictionary (no Qt).

Each measured value is shown with its expanded uncertainty (k = 2) in millimetres and in
inches side by side, the limits that apply to it, and the verdict in words and a symbol as
well as a colour, so the panel reads the same to a colour-blind user and on a monochrome
print. Inch values are display only: 1 in = 25.4 mm exactly (docs/conventions.md).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

__all__ = ["VERDICT_LOOK", "VerdictLook", "ReadingRow", "reading_rows", "overall_look",
           "mm_text", "inch_text", "MM_PER_INCH", "ACCEPTANCE_NOTE", "NAMES"]

#: Exact by definition of the international inch (1959).
MM_PER_INCH = 25.4

ACCEPTANCE_NOTE = ("Verdicts follow the stated decision rule; the thread standards, your "
                   "drawing and local practice govern acceptance of the work.")


@dataclass(frozen=True)
class VerdictLook:
    """How a verdict is shown: a word, a symbol and a colour (hex sRGB)."""
    word: str
    symbol: str
    colour: str
    text_colour: str


#: Our palette: blue / orange / grey are distinguishable with the common colour-vision
#: deficiencies (blue-orange is the pair kept apart by deuteranopia and protanopia); the
#: word and the symbol carry the meaning on their own.
VERDICT_LOOK = {
    "pass": VerdictLook("PASS", "\u2714", "#2a6fdb", "#ffffff"),        # heavy check mark
    "fail": VerdictLook("FAIL", "\u2716", "#e8871e", "#000000"),        # heavy multiplication x
    "undecided": VerdictLook("UNDECIDED", "?", "#8a8a8a", "#000000"),
    "none": VerdictLook("NO LIMITS", "\u2013", "#d0d0d0", "#000000"),   # en dash
}

#: Display names of the report keys (design.md).
NAMES = {
    "pitch": "Pitch", "flank_left": "Flank, left", "flank_right": "Flank, right",
    "included_angle": "Included angle", "crest_flat": "Crest flat", "root_flat": "Root flat",
    "depth": "Thread depth", "major_diameter": "Major diameter",
    "minor_diameter": "Minor diameter", "pitch_diameter": "Pitch diameter",
    "half_left": "Half-angle, left", "half_right": "Half-angle, right",
    "tip_flat": "Tip flat", "tip_radius": "Tip radius", "bisector_tilt": "Bisector tilt",
    "height_offset": "Height (tool - centre)", "mm_per_px": "Scale",
    "infeed_to_go": "Infeed still to go",
}


@dataclass(frozen=True)
class ReadingRow:
    """One line of the readings panel (all strings, ready to show)."""
    key: str
    name: str
    value_mm: str
    value_in: str
    limits: str
    verdict: str           # 'pass' | 'fail' | 'undecided' | 'none'
    verdict_text: str      # symbol + word, e.g. '\u2714 PASS'


def _num(v: Any) -> float | None:
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return None
    f = float(v)
    return f if math.isfinite(f) else None


def _decimals(u: float | None, least: int, most: int) -> int:
    """Decimals that show U to two significant digits, within [least, most]
    (common practice for quoting an uncertainty, JCGM 100:2008 7.2.6)."""
    if u is None or not u > 0 or not math.isfinite(u):
        return least
    return max(least, min(most, 1 - math.floor(math.log10(u))))


def mm_text(value: float, u: float | None, unit: str = "mm") -> str:
    """'12.3456 \u00b1 0.0040 mm' (lengths, at least 4 decimals, more when U needs them to
    show two digits), '29.95 \u00b1 0.12\u00b0' (angles, at least 2)."""
    if unit == "deg":
        d = _decimals(u, 2, 4)
        s = f"{value:.{d}f}"
        return f"{s} \u00b1 {u:.{d}f}\u00b0" if u is not None else f"{s}\u00b0"
    if unit == "mm/px":  # a scale: its uncertainty reads best relative, in parts per million
        if u is None or not value > 0:
            return f"{value:.7f} mm/px"
        return f"{value:.7f} mm/px \u00b1 {u / value * 1e6:.0f} ppm"
    if unit != "mm":
        return f"{value:.4g} \u00b1 {u:.2g} {unit}" if u is not None else f"{value:.4g} {unit}"
    d = _decimals(u, 4, 6)
    return f"{value:.{d}f} \u00b1 {u:.{d}f} mm" if u is not None else f"{value:.4f} mm"


def inch_text(value_mm: float, u_mm: float | None, unit: str = "mm") -> str:
    """The same length in inches (5 decimals, i.e. to 0.01 thou); angles repeat in degrees
    and minutes of arc."""
    if unit == "deg":
        sign = "-" if value_mm < 0 else ""
        a = abs(value_mm)
        d = int(a)
        m = (a - d) * 60.0
        if m >= 59.95:
            d, m = d + 1, 0.0
        txt = f"{sign}{d}\u00b0 {m:04.1f}'"
        return txt + (f" \u00b1 {u_mm * 60.0:.1f}'" if u_mm is not None else "")
    if unit == "mm/px":
        return f"{value_mm / MM_PER_INCH:.8f} in/px"
    if unit != "mm":
        return ""
    v = value_mm / MM_PER_INCH
    if u_mm is None:
        return f"{v:.5f} in"
    ui = u_mm / MM_PER_INCH
    d = _decimals(ui, 5, 7)
    return f"{v:.{d}f} \u00b1 {ui:.{d}f} in"


def _limits_text(lo: float | None, hi: float | None, unit: str) -> str:
    if lo is None and hi is None:
        return ""
    if unit == "deg":
        f = lambda x: f"{x:.2f}\u00b0"  # noqa: E731
    else:
        f = lambda x: f"{x:.4f}"  # noqa: E731
    if lo is not None and hi is not None:
        txt = f"{f(lo)} \u2026 {f(hi)}"
    elif lo is not None:
        txt = f"\u2265 {f(lo)}"
    else:
        txt = f"\u2264 {f(hi)}"
    if unit == "mm":
        ilo = "" if lo is None else f"{lo / MM_PER_INCH:.5f}"
        ihi = "" if hi is None else f"{hi / MM_PER_INCH:.5f}"
        txt += f" mm\n{ilo} \u2026 {ihi} in" if lo is not None and hi is not None else " mm"
    return txt


def reading_rows(report: dict | None) -> list[ReadingRow]:
    """Rows for every measurement in ``report`` (design.md JSON), in report order, with the
    check of the same name when there is one. Checks without a measurement of that name get
    their own row."""
    if not report:
        return []
    meas = report.get("measurements") or {}
    verdict = report.get("verdict") if isinstance(report.get("verdict"), dict) else {}
    checks = {str(c.get("name")): c for c in (verdict.get("checks") or []) if isinstance(c, dict)}
    rows: list[ReadingRow] = []
    seen: set[str] = set()
    for key, m in meas.items():
        if not isinstance(m, dict):
            continue
        v, u = _num(m.get("value")), _num(m.get("u"))
        if v is None:
            continue
        unit = str(m.get("unit", "mm"))
        rows.append(_row(key, v, u, unit, checks.get(key)))
        seen.add(key)
    for name, c in checks.items():
        if name in seen:
            continue
        v = _num(c.get("value"))
        if v is None:
            continue
        rows.append(_row(name, v, _num(c.get("u")), str(c.get("unit", "mm")), c))
    if report.get("kind") == "calibration":
        v, u = _num(report.get("mm_per_px")), _num(report.get("u_mm_per_px"))
        if v is not None:
            rows.append(_row("mm_per_px", v, u, "mm/px", None))
    return rows


def _row(key: str, v: float, u: float | None, unit: str, check: dict | None) -> ReadingRow:
    result = "none"
    limits = ""
    if check is not None:
        result = str(check.get("result", "none"))
        if result not in VERDICT_LOOK:
            result = "undecided"
        limits = _limits_text(_num(check.get("min")), _num(check.get("max")), unit)
    look = VERDICT_LOOK[result]
    return ReadingRow(key, NAMES.get(key, key.replace("_", " ").capitalize()),
                      mm_text(v, u, unit), inch_text(v, u, unit), limits, result,
                      f"{look.symbol} {look.word}" if result != "none" else "")


def overall_look(report: dict | None) -> tuple[str, VerdictLook]:
    """The overall verdict key and its look ('none' when no limits applied)."""
    if not report or not isinstance(report.get("verdict"), dict):
        return "none", VERDICT_LOOK["none"]
    v = str(report["verdict"].get("overall", "none"))
    if v not in VERDICT_LOOK:
        v = "undecided"
    return v, VERDICT_LOOK[v]
