"""Saving what the viewer shows (no Qt): the annotated picture, the raw frame beside it,
and the JSON and job sheet the command line writes for the same measurement.

All files of one save are prepared in memory first and then written atomically together
(:class:`profilecheck.commands._common.OutputSet`), so a failure leaves nothing half-written.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..commands._common import OutputSet, dumps_json
from ..errors import ProfilecheckError

__all__ = ["SavedFiles", "save_outcome", "output_paths"]


@dataclass(frozen=True)
class SavedFiles:
    """Paths written by :func:`save_outcome` (``sheet`` None when not written) and notes."""
    annotated: Path
    raw: Path
    json: Path
    sheet: Path | None
    notes: tuple[str, ...] = ()


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


def save_outcome(stem: str | Path, outcome, raw: np.ndarray, image: np.ndarray, *,
                 spec=None) -> SavedFiles:
    """Write the four files of one measurement.

    Parameters
    ----------
    stem : str or Path
        Path without suffix; see :func:`output_paths`.
    outcome : JobOutcome
        What the job produced (its report is written as the CLI's JSON).
    raw : ndarray
        The frame as read from the file or camera.
    image : ndarray
        The grey picture in [0, 1] the job measured (drawn under the overlays).
    spec : ThreadSpec or dict, optional
        The thread specification, shown on the job sheet.

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
    from ..report.annotate import draw_overlays, encode_png, write_bytes_atomic

    paths = output_paths(stem)
    for k, p in paths.items():
        OutputSet.check_path(p, {"annotated": "annotated picture", "raw": "raw frame",
                                 "json": "report", "sheet": "job sheet"}[k])
    annotated = encode_png(draw_overlays(image, outcome.overlays))
    raw_png = _raw_png(raw)
    notes: list[str] = []
    sheet_html = None
    if outcome.mode != "calibrate":
        try:
            from ..report.sheet import render_sheet
        except ImportError:
            notes.append("job sheet not written: the report package has no job sheet yet")
        else:
            if spec is not None and hasattr(spec, "to_dict"):
                spec = spec.to_dict()
            sheet_html = render_sheet(outcome.report, annotated,
                                      spec=spec if isinstance(spec, dict) else None)
    if outcome.mode == "calibrate" and outcome.calibration is not None:
        import json
        text = json.dumps(outcome.calibration.to_dict(), indent=2, sort_keys=True,
                          allow_nan=False) + "\n"  # the calibration file's own format
    else:
        text = dumps_json(outcome.report)
    out = OutputSet()
    out.add_writer(paths["annotated"], lambda t, d=annotated: write_bytes_atomic(t, d))
    out.add_writer(paths["raw"], lambda t, d=raw_png: write_bytes_atomic(t, d))
    out.add_text(paths["json"], text)
    if sheet_html is not None:
        out.add_text(paths["sheet"], sheet_html)
    out.commit()
    return SavedFiles(paths["annotated"], paths["raw"], paths["json"],
                      paths["sheet"] if sheet_html is not None else None, tuple(notes))
