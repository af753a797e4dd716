"""Terminal table of a measurement: value +/- U in mm and inch side by side, limits, verdict.

Example (``format_table(result, ascii_only=True)``)::

    profilecheck thread   image stay_pass.png   spec M6x1-6g
    calibration bench_cam.json: pin 6.0000 mm, 10.00000 um/px
    quantity         metric                  inch                        limits (mm)      verdict
    pitch            1.0003 mm +/- 2.1 um    0.039382 in +/- 0.083 thou  0.99 .. 1.01 mm  PASS
    ...
    overall: PASS

Rounding follows GUM 7.2.6 (U to two significant digits, the value to the same place);
see :mod:`profilecheck.report._fmt`.
"""

from __future__ import annotations

from typing import Any

from ._context import calibration_summary, image_name, spec_designation
from ._fmt import fmt_limits, fmt_pair, verdict_word
from ._rows import quantity_title, readings

__all__ = ["format_table"]


def format_table(result_dict: dict[str, Any], units: str = "mm", *,
                 ascii_only: bool = False, rule: bool = True) -> str:
    """Format a measurement result dict as a plain-text table.

    Parameters
    ----------
    result_dict : dict
        The ``to_dict()`` JSON of a measurement (``kind``, ``image``, ``calibration``,
        ``spec``, ``measurements``, ``verdict``, ``warnings``); missing parts are left out.
    units : {'mm', 'in'}
        Which system comes first (and is used for the limits column). Both are always
        shown for lengths: mm with U in µm, inch with U in thou (tenths below 0.1 thou).
    ascii_only : bool
        Write '+/-', 'um', 'deg' instead of '±', 'µm', '°'.
    rule : bool
        End with the decision rule in one line.

    Returns
    -------
    str
        Lines joined with newlines, ending in a newline.

    Raises
    ------
    TypeError
        ``result_dict`` is not a dict.
    ValueError
        ``units`` is not 'mm' or 'in'.
    """
    if not isinstance(result_dict, dict):
        raise TypeError(f"result_dict must be a dict, got {type(result_dict).__name__}")
    if units not in ("mm", "in"):
        raise ValueError(f"units must be 'mm' or 'in', got {units!r}")
    other = "in" if units == "mm" else "mm"
    r = result_dict
    lines: list[str] = []
    head = [f"profilecheck {r.get('kind', 'measurement')}"]
    if image_name(r):
        head.append(f"image {image_name(r)}")
    if spec_designation(r):
        head.append(f"spec {spec_designation(r)}")
    lines.append("   ".join(head))
    cal = calibration_summary(r.get("calibration"))
    cal_bits = [b for b in (cal["gauge"], cal["created"], cal["scale"]) if b]
    if cal["file"] or cal_bits:
        lines.append(f"calibration {cal['file'] or '(in result)'}"
                     + (": " + ", ".join(cal_bits) if cal_bits else ""))

    rows = readings(r)
    header = ("quantity", "metric" if units == "mm" else "inch",
              "inch" if units == "mm" else "metric", "limits", "verdict")
    body: list[tuple[str, ...]] = []
    for row in rows:
        first = fmt_pair(row.value, row.u, row.unit, units, ascii_only=ascii_only)
        second = (fmt_pair(row.value, row.u, row.unit, other, ascii_only=ascii_only)
                  if row.unit == "mm" else "")
        limits = fmt_limits(row.min, row.max, row.unit, units, ascii_only=ascii_only)
        verdict = verdict_word(row.result) if row.result else ("-" if not limits else "")
        body.append((quantity_title(row.quantity), first, second, limits, verdict))
    if body:
        widths = [max(len(h), *(len(b[i]) for b in body)) for i, h in enumerate(header)]
        fmt = "  ".join(f"{{:<{w}}}" for w in widths)
        lines.append(fmt.format(*header).rstrip())
        lines.append("  ".join("-" * w for w in widths))
        for b in body:
            lines.append(fmt.format(*b).rstrip())
    else:
        lines.append("(no readings)")

    verdict = r.get("verdict") if isinstance(r.get("verdict"), dict) else {}
    overall = verdict.get("overall") or ("none" if not any(x.result for x in rows) else "")
    lines.append(f"overall: {verdict_word(overall)}"
                 + (("  (no spec given: measured only)" if not r.get("spec") else
                     "  (no class limits checked: see the warnings)") if overall == "none" else ""))
    warnings = [str(w) for w in (r.get("warnings") or []) if str(w).strip()]
    if warnings:
        lines.append("warnings:")
        lines.extend(f"  - {w}" for w in warnings)
    advice = [str(a) for a in (r.get("advice") or []) if str(a).strip()]
    if advice:
        lines.append("what to do:")
        lines.extend(f"  - {a}" for a in advice)
    from ._context import infeed_rows

    for name, text in infeed_rows(r):
        lines.append(f"{name}: {text}")
    if rule and overall not in ("none", ""):
        from ..verdict import DECISION_RULE

        lines.append(f"decision rule: {DECISION_RULE}")
    text = "\n".join(lines) + "\n"
    if ascii_only:
        from .annotate import ascii_text

        text = ascii_text(text)
    return text
