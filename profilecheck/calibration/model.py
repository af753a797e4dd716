"""The :class:`Calibration` record and its JSON file.

A calibration maps image pixels to millimetres in the measurement plane (the plane through
the part's axis, square to the line of sight). It holds:

* ``mm_per_px`` and its expanded uncertainty ``u_mm_per_px`` (k = 2);
* ``edge_offset_px``: the systematic edge bias *b* of this camera and light, positive when a
  dark silhouette looks *larger* than it is (each edge found ``b`` px out into the bright
  field). Same-polarity distances (pitch, line spacing) are immune; widths and diameters of
  a dark part are corrected by ``- 2 b`` px (``../shared/vision-notes.md`` section 4);
* ``scale_absorbs_offset``: true for a single-pin calibration, whose scale silently includes
  2 b / D; widths far from the pin's size then carry an extra uncertainty;
* optional ``lens`` intrinsics from a grid calibration (focal length px, principal point,
  distortion, working distance); without them the view is assumed telecentric.

Files are written atomically (temporary file in the same folder, then ``os.replace``).
"""

from __future__ import annotations

import json
import math
import os
from dataclasses import dataclass, field, asdict, astuple, replace
from pathlib import Path
from typing import Any

from .. import _files
from ..errors import CalibrationError

__all__ = ["Calibration", "Lens", "save_calibration", "load_calibration", "FORMAT_VERSION"]

FORMAT_VERSION = 1


@dataclass(frozen=True, eq=False)
class Lens:
    """Pinhole intrinsics and radial distortion from a grid calibration (OpenCV model).

    ``fx_px``, ``fy_px`` focal lengths in px; ``cx_px``, ``cy_px`` principal point (px,
    pixel-centre convention); ``dist`` OpenCV distortion coefficients (k1, k2, p1, p2, k3);
    ``working_distance_mm`` Z from the projection centre to the measurement plane;
    ``rms_reprojection_px`` of the grid fit; ``grid_radius_px`` the largest distance of a
    grid corner from the principal point over all views (None when unknown, as in files
    written before it was kept): beyond it the distortion is extrapolated.

    Uncertainties, all EXPANDED (k = 2, docs/conventions.md), NaN when unknown (files
    written before they were kept): ``u_fx_px``, ``u_fy_px`` of the focal lengths and
    ``u_cx_px``, ``u_cy_px`` of the principal point, from the grid fit's covariance
    (``stdDeviationsIntrinsics`` of ``cv2.calibrateCameraExtended``, :mod:`.grid`);
    ``u_working_distance_mm`` of Z as the grid views fix it (spread of the board distances
    and their fitted translation uncertainty, :mod:`.grid`). With ``u_cx_px`` and
    ``u_cy_px`` known, thread measurements propagate them into every value
    (:mod:`profilecheck.measure.thread`); without them a conservative model term is kept.
    """

    fx_px: float
    fy_px: float
    cx_px: float
    cy_px: float
    dist: tuple[float, ...] = (0.0, 0.0, 0.0, 0.0, 0.0)
    working_distance_mm: float = float("nan")
    rms_reprojection_px: float = float("nan")
    u_fx_px: float = float("nan")
    grid_radius_px: float | None = None
    u_fy_px: float = float("nan")
    u_cx_px: float = float("nan")
    u_cy_px: float = float("nan")
    u_working_distance_mm: float = float("nan")

    def _key(self) -> tuple:
        # NaN stands for "unknown": two records both lacking a value are the same record
        return tuple("nan" if isinstance(v, float) and math.isnan(v) else v
                     for v in astuple(self))

    def __eq__(self, other: object) -> bool:
        if other.__class__ is not self.__class__:
            return NotImplemented
        return self._key() == other._key()

    def __hash__(self) -> int:
        return hash(self._key())


@dataclass(frozen=True)
class Calibration:
    """Pixel-to-millimetre calibration of one camera set-up.

    Parameters
    ----------
    mm_per_px : float
        Scale in the measurement plane, mm per pixel (> 0).
    u_mm_per_px : float
        Expanded uncertainty (k = 2) of the scale, mm per pixel.
    image_size : tuple of int
        (width, height) in px of the images this calibration applies to.
    gauge : dict
        What it was made from: ``{'kind': 'pin'|'block'|'lines'|'grid'|..., 'size_mm': ..,
        'u_mm': ..}``.
    created : str
        ISO 8601 time stamp (UTC).
    label : str
        Free camera label.
    edge_offset_px, u_edge_offset_px : float
        Edge bias b (px, + outward from the dark part) and its expanded uncertainty.
    scale_absorbs_offset : bool
        True when the scale came from one width (pin or block) and so includes 2b/D.
    gamma : float
        Display gamma assumed to be encoded in the image (1.0 = linear data). Measurements
        linearise intensities with ``I_lin = I ** gamma``.
    blur_px : float
        Edge blur sigma (px) fitted on the gauge: the focus reference.
    lens : Lens or None
        Grid-calibration intrinsics; ``None`` = telecentric view assumed.
    notes : tuple of str
        Plain-language remarks carried into every report.
    """

    mm_per_px: float
    u_mm_per_px: float
    image_size: tuple[int, int]
    gauge: dict[str, Any] = field(default_factory=dict)
    created: str = ""
    label: str = ""
    edge_offset_px: float = 0.0
    u_edge_offset_px: float = 0.0
    scale_absorbs_offset: bool = False
    gamma: float = 1.0
    blur_px: float = float("nan")
    lens: Lens | None = None
    notes: tuple[str, ...] = ()

    def __post_init__(self) -> None:
        _check_positive("mm_per_px", self.mm_per_px)
        _check_nonneg("u_mm_per_px", self.u_mm_per_px)
        _check_nonneg("u_edge_offset_px", self.u_edge_offset_px)
        if not math.isfinite(self.edge_offset_px):
            raise CalibrationError(f"calibration: edge_offset_px must be finite, got {self.edge_offset_px!r}")
        _check_positive("gamma", self.gamma)
        size = tuple(self.image_size)
        if len(size) != 2 or not all(isinstance(v, (int,)) and not isinstance(v, bool) and v > 0 for v in size):
            raise CalibrationError(f"calibration: image_size must be two positive integers [w, h], got {self.image_size!r}")
        object.__setattr__(self, "image_size", (int(size[0]), int(size[1])))

    @property
    def px_per_mm(self) -> float:
        return 1.0 / self.mm_per_px

    @property
    def telecentric(self) -> bool:
        """True when no lens model is held (parallel projection assumed)."""
        return self.lens is None

    def check_image(self, shape: tuple[int, ...]) -> None:
        """Refuse an image whose size differs from the calibration's.

        ``shape`` is a numpy image shape (rows, cols[, ...]).
        """
        h, w = int(shape[0]), int(shape[1])
        if (w, h) != tuple(self.image_size):
            raise CalibrationError(
                f"image is {w} x {h} px but the calibration was made at "
                f"{self.image_size[0]} x {self.image_size[1]} px: recalibrate at this size")

    def width_correction_px(self) -> float:
        """Correction in px to add to a measured width of a *dark* feature (diameter, tooth
        width, tip flat): ``-2 b``. A single-gauge calibration stores b = 0, its offset
        being absorbed in the scale (``scale_absorbs_offset``)."""
        return -2.0 * self.edge_offset_px

    def to_dict(self) -> dict[str, Any]:
        d = asdict(self)
        d["image_size"] = list(self.image_size)
        d["notes"] = list(self.notes)
        d["format_version"] = FORMAT_VERSION
        if self.lens is not None:
            d["lens"]["dist"] = list(self.lens.dist)
        return _files.json_safe(d)

    @classmethod
    def from_dict(cls, d: dict[str, Any], *, source: str = "calibration") -> "Calibration":
        if not isinstance(d, dict):
            raise CalibrationError(f"{source}: not a calibration (expected a JSON object)")
        missing = [k for k in ("mm_per_px", "u_mm_per_px", "image_size") if k not in d]
        if missing:
            raise CalibrationError(f"{source}: missing key(s) {', '.join(missing)}")
        kw: dict[str, Any] = {}
        for k in ("mm_per_px", "u_mm_per_px", "edge_offset_px", "u_edge_offset_px", "gamma", "blur_px"):
            if k in d:
                kw[k] = _num(d[k], k, source, allow_nan=(k == "blur_px"))
        size = d["image_size"]
        if (not isinstance(size, (list, tuple)) or len(size) != 2
                or not all(isinstance(v, int) and not isinstance(v, bool) for v in size)):
            raise CalibrationError(f"{source}: image_size must be [width, height] in whole pixels, got {size!r}")
        kw["image_size"] = (size[0], size[1])
        gauge = d.get("gauge", {})
        if not isinstance(gauge, dict):
            raise CalibrationError(f"{source}: gauge must be an object")
        kw["gauge"] = gauge
        kw["created"] = str(d.get("created", ""))
        kw["label"] = str(d.get("label", ""))
        kw["scale_absorbs_offset"] = bool(d.get("scale_absorbs_offset", False))
        notes = d.get("notes", [])
        kw["notes"] = tuple(str(n) for n in notes) if isinstance(notes, list) else ()
        lens = d.get("lens")
        if lens is not None:
            if not isinstance(lens, dict):
                raise CalibrationError(f"{source}: lens must be an object")
            try:
                lk = {k: _num(lens[k], f"lens.{k}", source) for k in ("fx_px", "fy_px", "cx_px", "cy_px")}
            except KeyError as e:
                raise CalibrationError(f"{source}: lens is missing {e.args[0]}") from None
            if lens.get("grid_radius_px") is not None:
                lk["grid_radius_px"] = _num(lens["grid_radius_px"], "lens.grid_radius_px", source)
            for k in ("working_distance_mm", "rms_reprojection_px", "u_fx_px", "u_fy_px",
                      "u_cx_px", "u_cy_px", "u_working_distance_mm"):
                if k in lens:
                    lk[k] = _num(lens[k], f"lens.{k}", source, allow_nan=True)
            dist = lens.get("dist", [0, 0, 0, 0, 0])
            if not isinstance(dist, list) or not dist:
                raise CalibrationError(f"{source}: lens.dist must be a list of numbers")
            lk["dist"] = tuple(_num(v, "lens.dist", source) for v in dist)
            if lk["fx_px"] <= 0 or lk["fy_px"] <= 0:
                raise CalibrationError(f"{source}: lens focal lengths must be positive")
            kw["lens"] = Lens(**lk)
        try:
            return cls(**kw)
        except CalibrationError as e:
            raise CalibrationError(f"{source}: {e}".replace("calibration: ", "")) from None


def _num(v: Any, key: str, source: str, allow_nan: bool = False) -> float:
    if v is None and allow_nan:
        return float("nan")
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise CalibrationError(f"{source}: {key} must be a number, got {v!r}")
    f = float(v)
    if not math.isfinite(f) and not allow_nan:
        raise CalibrationError(f"{source}: {key} must be finite, got {v!r}")
    return f


def _check_positive(name: str, v: float) -> None:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v <= 0:
        raise CalibrationError(f"calibration: {name} must be a positive finite number, got {v!r}")


def _check_nonneg(name: str, v: float) -> None:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v < 0:
        raise CalibrationError(f"calibration: {name} must be a finite number >= 0, got {v!r}")


def atomic_write_text(path: str | os.PathLike[str], text: str) -> None:
    """Write ``text`` to ``path`` atomically (see :mod:`profilecheck._files`); a missing
    folder raises :class:`CalibrationError`."""
    _files.atomic_write_text(path, text, error=CalibrationError)


def save_calibration(cal: Calibration, path: str | os.PathLike[str]) -> None:
    """Save ``cal`` as JSON at ``path`` (atomic)."""
    atomic_write_text(path, json.dumps(cal.to_dict(), indent=2, sort_keys=True, allow_nan=False) + "\n")


def load_calibration(path: str | os.PathLike[str]) -> Calibration:
    """Load and validate a calibration file.

    Raises
    ------
    CalibrationError
        Missing file, not JSON, missing keys, non-numeric, non-finite or negative scale.
    """
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise CalibrationError(f"{p}: calibration file not found") from None
    except (OSError, UnicodeDecodeError) as e:
        raise CalibrationError(f"{p}: cannot read calibration file ({e.__class__.__name__})") from None
    try:
        d = json.loads(text)
    except json.JSONDecodeError as e:
        raise CalibrationError(f"{p}: not valid JSON (line {e.lineno}: {e.msg})") from None
    return Calibration.from_dict(d, source=str(p))
