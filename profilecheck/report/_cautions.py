"""Safety cautions and the acceptance note printed on every job sheet.

Plain shop cautions in our own words; they defer to the machine maker's instructions, the
thread standards, local regulations and licensed practice.
"""

from __future__ import annotations

__all__ = ["CAUTIONS", "ACCEPTANCE_NOTE", "cautions_for"]

CAUTIONS = (
    "Stop the spindle and switch off or isolate the lathe before placing the camera, the "
    "part or any gauge; never hold anything near a turning chuck, faceplate or work.",
    "Keep the machine's guards in place and wear eye protection at the lathe and at the "
    "grinder; remove the chuck key every time.",
    "Grinding a tool: wheel guards fitted, the tool rest set close to the wheel and "
    "re-set as the wheel wears (follow the grinder maker's instructions and local rules), "
    "stand aside while the wheel runs up, and never grind on the side of a wheel not made "
    "for it.",
    "Burrs and swarf cut: use a brush, not fingers, and deburr before gauging.",
)

ACCEPTANCE_NOTE = (
    "This sheet reports a camera measurement with its expanded uncertainty (k = 2). "
    "Acceptance of a part is governed by the applicable thread standard (e.g. ISO 965-1, "
    "ASME B1.1 and B1.2), the drawing, any agreement with the customer and local practice; "
    "where fit matters, confirm with thread gauges or wires traceable to national standards."
)


def cautions_for(kind: str) -> tuple[str, ...]:
    """Cautions for a measurement kind ('thread', 'tool', 'height', 'check', ...).

    Every kind gets the lathe cautions; the grinder caution is listed first for 'tool'."""
    if kind == "tool":
        return (CAUTIONS[2], CAUTIONS[0], CAUTIONS[1], CAUTIONS[3])
    return CAUTIONS
