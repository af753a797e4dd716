"""The frozen result of :func:`profilecheck.measure.measure_thread` and its JSON."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..quantity import Measured
from ..verdict import Check

__all__ = ["ThreadResult"]


@dataclass(frozen=True)
class ThreadResult:
    """A thread measurement (docs/contracts.md, 'measure').

    Attributes
    ----------
    measurements : dict of str to Measured
        ``pitch``, ``flank_left``, ``flank_right``, ``included_angle``, ``crest_flat`` and
        ``root_flat`` (or ``crest_radius`` / ``root_radius`` where the spec's form is
        radiused or the outline shows an arc: the form is decided from the data),
        ``depth``; with both edges in view also ``major_diameter``, ``minor_diameter``,
        ``pitch_diameter`` and ``over_wire`` (virtual reading over best-size wires).
        Lengths mm, angles deg, ``u`` expanded (k = 2). Axial-section values: the helix
        correction is already applied (see ``helix``).
    checks : tuple of Check
        One per limit of the spec (ISO 14253-1 rule, :mod:`profilecheck.verdict`).
    verdict : str
        'pass', 'fail', 'undecided', or 'none' without a spec or checkable limits.
    warnings : tuple of str
        Plain-language warnings (image quality, damaged teeth, assumptions).
    overlays : tuple
        :mod:`profilecheck.overlays` primitives in image px.
    notes : tuple of str
        Assumptions and corrections applied.
    per_tooth : dict
        Per-edge arrays: tooth numbers, pitch, flank angles, flats.
    helix : dict
        The helix (lead-angle) correction: model, lead, diameter, sizes.
    infeed : dict or None
        Remaining radial infeed and compound travel to the middle of the PD tolerance.
    image, calibration, spec : str or None, dict, dict or None
        What was measured and with what.
    """

    measurements: dict[str, Measured]
    checks: tuple[Check, ...]
    verdict: str
    warnings: tuple[str, ...]
    overlays: tuple[Any, ...]
    notes: tuple[str, ...]
    per_tooth: dict[str, Any] = field(default_factory=dict)
    helix: dict[str, Any] = field(default_factory=dict)
    infeed: dict[str, Any] | None = None
    image: str | None = None
    calibration: dict[str, Any] = field(default_factory=dict)
    spec: dict[str, Any] | None = None
    both_edges: bool = False
    axis: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The JSON of design.md: ``kind``, ``image``, ``calibration``, ``spec``,
        ``measurements``, ``verdict`` {``overall``, ``checks``, ``rule``}, ``warnings``, plus
        ``per_tooth``, ``helix``, ``infeed``, ``axis``, ``edges_in_view``, ``notes``."""
        from ._job_result import report_core

        return {
            **report_core(self, "thread"),
            "per_tooth": self.per_tooth,
            "helix": self.helix,
            "infeed": self.infeed,
            "axis": self.axis,
            "edges_in_view": 2 if self.both_edges else 1,
        }
