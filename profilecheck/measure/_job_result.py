"""Result records and input handling shared by the tool and centre-height measurements.

Private to :mod:`profilecheck.measure.tool` and :mod:`profilecheck.measure.height`.
"""

from __future__ import annotations

import hashlib
import json
import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import ImageError
from ..quantity import Measured
from ..verdict import DECISION_RULE, Check, overall

__all__ = ["JobResult", "load_input", "calibration_hash", "undistort", "edge_points",
           "MAX_BLUR_PX"]

#: Edge blur (sigma, px) beyond which a tool or height image is refused: corners and short
#: edges lose their shape (common practice, no source).
MAX_BLUR_PX = 4.0


@dataclass(frozen=True)
class JobResult:
    """Fields common to every measurement result (docs/contracts.md, 'measure').

    Attributes
    ----------
    kind : str
        'tool', 'height' or 'squareness'.
    image : str
        The image path, or '<array>' for an array passed in.
    calibration : dict
        The calibration used (``Calibration.to_dict()``).
    spec : dict or None
        The thread specification checked against (``ThreadSpec.to_dict()``), if any.
    measurements : dict of str -> Measured
        Report keys of ``../shared/design.md`` (lengths mm, angles deg, k = 2).
    checks : tuple of Check
        One row per limit checked (``profilecheck.verdict.check_limits``).
    verdict : str
        ``overall(checks)``: 'pass', 'fail', 'undecided' or 'none'.
    warnings : tuple of str
        Things the user should know (image quality, assumptions).
    overlays : tuple
        Drawing primitives (``profilecheck.overlays``) in image px.
    notes : tuple of str
        Method notes carried into the report.
    advice : tuple of str
        What to do about a failed check (grind, stone, reset).
    details : dict
        Geometry in px for drawing and scripts (apex, axis, ...); JSON-safe values only.
    """

    kind: str
    image: str
    calibration: dict
    spec: dict | None
    measurements: dict[str, Measured]
    checks: tuple[Check, ...] = ()
    verdict: str = "none"
    warnings: tuple[str, ...] = ()
    overlays: tuple = ()
    notes: tuple[str, ...] = ()
    advice: tuple[str, ...] = ()
    details: dict = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The JSON report of ``../shared/design.md``: ``kind``, ``image``, ``calibration``,
        ``spec``, ``measurements`` (each ``{value, u, unit, ...}``), ``verdict``
        (``overall``, ``checks``, ``rule``), ``warnings``, plus ``notes``, ``advice`` and
        ``details``."""
        return dict(report_core(self, self.kind), advice=list(self.advice), details=self.details)


def make_result(cls, *, checks, **kw):
    """Build a result with its overall verdict from ``checks``."""
    checks = tuple(checks)
    return cls(checks=checks, verdict=overall(checks), **kw)


def load_input(image: Any) -> tuple[np.ndarray, str]:
    """Return a float image in [0, 1] and a label for the report.

    ``image`` is a path (loaded with :func:`profilecheck.imaging.load_image`) or a 2-D array:
    floats in [0, 1] are used as they are; uint8 / uint16 are scaled by 255 / 65535
    (docs/conventions.md).
    """
    if isinstance(image, (str, Path)):
        from ..imaging import load_image

        return load_image(image), str(image)
    if not isinstance(image, np.ndarray):
        raise TypeError(f"image must be a path or a 2-D numpy array, got {type(image).__name__}")
    if image.ndim != 2:
        raise ValueError(f"image must be a 2-D grey array, got shape {image.shape}")
    if image.dtype == np.uint8:
        return image.astype(np.float64) / 255.0, "<array>"
    if image.dtype == np.uint16:
        return image.astype(np.float64) / 65535.0, "<array>"
    if not np.issubdtype(image.dtype, np.floating):
        raise TypeError(f"image must be float in [0, 1], uint8 or uint16, got {image.dtype}")
    img = np.asarray(image, np.float64)
    if not np.all(np.isfinite(img)):
        raise ImageError("image contains non-finite pixel values")
    if img.min() < -1e-6 or img.max() > 1 + 1e-6:
        raise ValueError("image: float arrays must hold values in [0, 1]")
    return img, "<array>"


def check_roi(roi: Any) -> tuple[int, int, int, int] | None:
    """Validate ``roi`` = (x0, y0, x1, y1) px, or None."""
    if roi is None:
        return None
    try:
        vals = tuple(int(v) for v in roi)
    except (TypeError, ValueError):
        raise TypeError("roi must be (x0, y0, x1, y1) in whole pixels") from None
    if len(vals) != 4 or vals[2] <= vals[0] or vals[3] <= vals[1]:
        raise ValueError(f"roi must be (x0, y0, x1, y1) with x1 > x0 and y1 > y0, got {roi!r}")
    return vals


def calibration_hash(calibration) -> str:
    """Short SHA-256 of the calibration's JSON (ties saved axis lines to their calibration)."""
    text = json.dumps(calibration.to_dict(), sort_keys=True, allow_nan=False)
    return hashlib.sha256(text.encode()).hexdigest()[:16]


def undistort(xy: np.ndarray, calibration) -> np.ndarray:
    """Remove lens distortion from edge points when the calibration holds a lens model
    (:func:`profilecheck.calibration.lens.undistort_points`, points stay in px). Without a
    lens: unchanged."""
    lens = getattr(calibration, "lens", None)
    if lens is None or not any(abs(float(v)) > 0 for v in lens.dist):
        return xy
    from ..calibration.lens import undistort_points

    return np.asarray(undistort_points(xy, lens), float)


def edge_points(img: np.ndarray, calibration, roi) -> tuple[Any, np.ndarray, float, tuple[str, ...]]:
    """Find the silhouette's edges: (EdgeSet, undistorted xy, effective blur sigma_e px,
    warnings)."""
    from ..imaging import find_edges
    from ..imaging.geometry import sigma_e_px

    edges = find_edges(img, roi=roi, gamma=calibration.gamma)
    warnings = tuple(getattr(edges, "warnings", ()))
    xy = undistort(np.asarray(edges.xy, float), calibration)
    blur = float(edges.blur_px) if len(edges.xy) else float("nan")
    if not math.isfinite(blur) or blur <= 0:
        blur = 1.0
    if blur > MAX_BLUR_PX:
        from ..errors import QualityError

        raise QualityError(f"the image is out of focus (edge blur {blur:.1f} px, limit "
                           f"{MAX_BLUR_PX:g} px): refocus and take the picture again")
    cal_blur = getattr(calibration, "blur_px", float("nan"))
    if math.isfinite(cal_blur) and cal_blur > 0 and blur > 1.6 * cal_blur:
        warnings += (f"the image is less sharp than the calibration image (edge blur "
                     f"{blur:.1f} px vs {cal_blur:.1f} px): refocus for best results",)
    return edges, xy, sigma_e_px(blur), warnings


def std_points(edges) -> np.ndarray:
    """Per-point 1-sigma positions (px) from the edge set, floored at 0.01 px."""
    s = np.asarray(getattr(edges, "std_px", np.full(len(edges.xy), 0.05)), float)
    return np.where(np.isfinite(s) & (s > 0), np.maximum(s, 0.01), 0.05)


def report_core(result: Any, kind: str) -> dict[str, Any]:
    """The keys every measurement report shares (``../shared/design.md``): ``kind``,
    ``image``, ``calibration``, ``spec``, ``measurements``, ``verdict`` {``overall``,
    ``checks``, ``rule``}, ``warnings``, ``notes``."""
    return {
        "kind": kind,
        "image": result.image,
        "calibration": result.calibration,
        "spec": result.spec,
        "measurements": {k: m.to_dict() for k, m in result.measurements.items()},
        "verdict": {"overall": result.verdict, "checks": [c.to_dict() for c in result.checks],
                    "rule": DECISION_RULE},
        "warnings": list(result.warnings),
        "notes": list(result.notes),
    }
