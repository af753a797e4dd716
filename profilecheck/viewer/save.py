"""Saving what the viewer shows (no Qt): the annotated picture, the raw frame beside it,
and the JSON and job sheet the command line writes for the same measurement.

The measurement files go through the command line's own writer
(:func:`profilecheck.report.outputs.add_standard_outputs`), so ``STEM.json``, ``STEM.png``
and ``STEM.html`` are what ``profilecheck thread|tool|height IMAGE --json --annotate
--sheet`` writes for the same picture and calibration. All files of one save are prepared
first and then written atomically together (:class:`profilecheck.commands._common.
OutputSet`), so a failure leaves nothing half-written.
"""

from __future__ import annotations

import argparse
import json
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..commands._common import OutputSet
from ..errors import ProfilecheckError

__all__ = ["SavedFiles", "save_outcome", "output_paths"]


@dataclass(frozen=True)
class SavedFiles:
    """Paths written by :func:`save_outcome` (``sheet`` None when not written)."""
    annotated: Path
    raw: Path
    json: Path
    sheet: Path | None


def output_paths(stem: str | Path) -> dict[str, Path]:
    """The file names of one save: ``STEM.png`` (annotated), ``STEM_raw.png``,
    ``STEM.json``, ``STEM.html`` (job sheet). A suffix on ``stem`` is dropped."""
    p = Path(stem)
    if p.suffix.lower() in (".png", ".json", ".html"):
        p = p.with_suffix("")
    if not p.name:
        raise ValueError("stem must name a file")
    return {"annotated": p.with_name(p.name + ".png"), "raw": p.with_name(p.name + "_raw.png"),
            "json": p.with_name(p.name + ".json"), "sheet": p.with_name(p.name + ".html")}


def _raw_png(raw: np.ndarray) -> bytes:
    import cv2
    a = raw
    if a.dtype not in (np.uint8, np.uint16):
        # A picture already scaled to [0, 1] (e.g. loaded by load_image): keep 16 bits.
        a = np.clip(np.nan_to_num(np.asarray(a, dtype=np.float64)) * 65535.0 + 0.5, 0, 65535
                    ).astype(np.uint16)
    ok, buf = cv2.imencode(".png", np.ascontiguousarray(a))  # OpenCV order (BGR) kept as read
    if not ok:
        raise ProfilecheckError("could not encode the raw frame as PNG")
    return buf.tobytes()


def _bytes_writer(data: bytes):
    def write(tmp: Path) -> None:
        tmp.write_bytes(data)
    return write


def save_outcome(stem: str | Path, outcome, raw: np.ndarray, image: np.ndarray, *,
                 image_path: str | None = None, calibration_path: str | None = None,
                 job: str | None = None) -> SavedFiles:
    """Write the files of one job.

    Parameters
    ----------
    stem : str or Path
        Path without suffix; see :func:`output_paths`.
    outcome : JobOutcome
        What the job produced. A measurement writes its report JSON, the annotated picture
        and the job sheet exactly as the command line does; a calibration writes the
        calibration file (its own format) and the picture, no sheet.
    raw : ndarray
        The frame as read from the file or camera, written untouched as ``STEM_raw.png``.
    image : ndarray
        The grey picture in [0, 1] the job measured (drawn under the overlays).
    image_path, calibration_path : str, optional
        The files the job came from (the sheet's job name defaults to the picture's name,
        as on the command line).
    job : str, optional
        Job name for the sheet (default: the picture's file name, else the stem).

    Returns
    -------
    SavedFiles

    Raises
    ------
    ProfilecheckError
        Folder missing, or a file could not be encoded; nothing is written then.
    """
    if outcome is None:
        raise ProfilecheckError("nothing to save yet: run a job first")
    from ..report.annotate import draw_overlays, encode_png
    from ..report.outputs import add_standard_outputs, prepare_outputs

    paths = output_paths(stem)
    OutputSet.check_path(paths["raw"], "raw frame")
    raw_png = _raw_png(raw)
    if outcome.mode == "calibrate" and outcome.calibration is not None:
        for k in ("annotated", "json"):
            OutputSet.check_path(paths[k], k)
        out = OutputSet()
        out.add_writer(paths["annotated"],
                       _bytes_writer(encode_png(draw_overlays(image, outcome.overlays))))
        out.add_text(paths["json"], json.dumps(outcome.calibration.to_dict(), indent=2,
                                               sort_keys=True, allow_nan=False) + "\n")
        out.add_writer(paths["raw"], _bytes_writer(raw_png))
        out.commit()
        return SavedFiles(paths["annotated"], paths["raw"], paths["json"], None)
    args = argparse.Namespace(json=paths["json"], annotate=paths["annotated"],
                              sheet=paths["sheet"], csv=None, log=None,
                              job=job or (None if image_path else paths["json"].stem),
                              image=image_path, cal=calibration_path)
    out = prepare_outputs(args)
    add_standard_outputs(out, args, outcome.report, image, image_path=image_path,
                         calibration_path=calibration_path, overlays=outcome.overlays)
    out.add_writer(paths["raw"], _bytes_writer(raw_png))
    out.commit()
    return SavedFiles(paths["annotated"], paths["raw"], paths["json"], paths["sheet"])
