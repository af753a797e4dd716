"""A spindle-axis line saved from one image, for later centre-height checks with no
reference in view (``profilecheck height --save-axis`` / ``--reference line --axis``).

File format (small JSON object, our own): ``format`` = 'profilecheck-axis-line', ``version``,
``point_px`` [x, y], ``direction`` [dx, dy] (unit, image px), ``std_offset_px`` and
``std_angle_rad`` (k = 1, of the line's position square to itself at ``point_px`` and of its
direction), ``image_size`` [w, h], ``calibration_hash`` (see
:func:`profilecheck.measure._job_result.calibration_hash`), ``reference`` ('point' or
'bar') and ``source_image``. The camera must not move between saving and using the line.
"""

from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import MeasurementError

__all__ = ["AxisLine", "save_axis", "load_axis", "FORMAT"]

FORMAT = "profilecheck-axis-line"
VERSION = 1


@dataclass(frozen=True)
class AxisLine:
    """The spindle axis as a line in image px (see module docstring for the fields)."""

    point_px: tuple[float, float]
    direction: tuple[float, float]
    std_offset_px: float
    std_angle_rad: float
    image_size: tuple[int, int]
    calibration_hash: str = ""
    reference: str = ""
    source_image: str = ""

    def __post_init__(self) -> None:
        d = np.asarray(self.direction, float)
        n = float(np.hypot(*d))
        if not (len(d) == 2 and math.isfinite(n) and n > 0):
            raise ValueError(f"direction must be a non-zero 2-vector, got {self.direction!r}")
        if d[0] < 0:  # one orientation only: the axis runs toward +x
            d = -d
        object.__setattr__(self, "direction", (float(d[0] / n), float(d[1] / n)))
        object.__setattr__(self, "point_px", (float(self.point_px[0]), float(self.point_px[1])))

    @property
    def up(self) -> np.ndarray:
        """Unit normal of the axis pointing toward the image top ('above centre')."""
        d = np.asarray(self.direction)
        n = np.array([-d[1], d[0]])
        return n if n[1] < 0 else -n

    def to_dict(self) -> dict[str, Any]:
        return {"format": FORMAT, "version": VERSION, "point_px": list(self.point_px),
                "direction": list(self.direction), "std_offset_px": float(self.std_offset_px),
                "std_angle_rad": float(self.std_angle_rad), "image_size": list(self.image_size),
                "calibration_hash": self.calibration_hash, "reference": self.reference,
                "source_image": self.source_image}

    @classmethod
    def from_dict(cls, d: Any, *, source: str = "axis file") -> "AxisLine":
        if not isinstance(d, dict) or d.get("format") != FORMAT:
            raise MeasurementError(f"{source}: not a saved axis line (make one with "
                                   "'profilecheck height IMAGE --save-axis FILE')")
        try:
            size = d["image_size"]
            return cls(point_px=tuple(float(v) for v in d["point_px"]),
                       direction=tuple(float(v) for v in d["direction"]),
                       std_offset_px=float(d["std_offset_px"]),
                       std_angle_rad=float(d["std_angle_rad"]),
                       image_size=(int(size[0]), int(size[1])),
                       calibration_hash=str(d.get("calibration_hash", "")),
                       reference=str(d.get("reference", "")),
                       source_image=str(d.get("source_image", "")))
        except (KeyError, TypeError, ValueError, IndexError):
            raise MeasurementError(f"{source}: saved axis line is damaged or incomplete") from None


def save_axis(axis: AxisLine, path: str | os.PathLike[str]) -> None:
    """Write ``axis`` to ``path`` as JSON (atomic)."""
    from ..calibration.model import atomic_write_text

    atomic_write_text(path, json.dumps(axis.to_dict(), indent=2, sort_keys=True) + "\n")


def load_axis(path: str | os.PathLike[str]) -> AxisLine:
    """Read a saved axis line; :class:`MeasurementError` with a plain reason on failure."""
    p = Path(path)
    try:
        d = json.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise MeasurementError(f"{p}: axis file not found") from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError):
        raise MeasurementError(f"{p}: cannot read the axis file (not JSON)") from None
    return AxisLine.from_dict(d, source=str(p))
