"""The standard output options of every measuring command, in two calls.

A measuring command stays thin::

    from ..report.outputs import add_output_arguments, prepare_outputs, add_standard_outputs

    def register(subparsers):
        p = subparsers.add_parser("thread", ...)
        ...
        add_output_arguments(p)          # --json --annotate --sheet --csv --log --job --units
        p.set_defaults(func=run)

    def run(args):
        outputs = prepare_outputs(args)  # checks every output path before any work
        result = measure_thread(img, cal, spec=spec)
        add_standard_outputs(outputs, args, result, img)   # queue JSON/PNG/sheet/CSV/log
        outputs.commit()                 # files written atomically, then the log record
        print(format_table(result.to_dict(), args.units))
        return exit_code_for(result.verdict)

Nothing is written if the measurement raised (``commands._common.OutputSet``); the log
record is appended last, after the files, in its own transaction.
"""

from __future__ import annotations

import argparse
import math
import os
from pathlib import Path
from typing import Any, Mapping

__all__ = ["add_output_arguments", "prepare_outputs", "add_standard_outputs", "write_all",
           "result_dict_of", "auto_scale_bar", "SHEET_MAX_SIDE"]

#: Longer side (px) of the picture embedded in a job sheet (keeps the HTML small).
SHEET_MAX_SIDE = 1000


def add_output_arguments(parser: argparse.ArgumentParser, *, annotate: bool = True) -> None:
    """Add ``--json FILE --annotate PNG --sheet FILE --csv FILE --log FILE --job NAME
    --units mm|in`` to a subcommand's parser (each skipped if the parser already has it)."""
    have = {a for act in parser._actions for a in act.option_strings}

    def opt(flag: str, **kw: Any) -> None:
        if flag not in have:
            parser.add_argument(flag, **kw)

    opt("--json", metavar="FILE", help="write the result as JSON (lengths mm, angles deg)")
    if annotate:
        opt("--annotate", metavar="PNG", help="write the image with the fitted lines and limits")
    opt("--sheet", metavar="FILE", help="write a one-page HTML job sheet (print from a browser)")
    opt("--csv", metavar="FILE", help="write the readings as CSV, one row per quantity")
    opt("--log", metavar="FILE", help="append the job to this inspection log (SQLite)")
    opt("--job", metavar="NAME", help="job name for the sheet and log (default: image name)")
    opt("--units", choices=("mm", "in"), default="mm",
        help="which system the terminal table shows first (both are always shown)")


def prepare_outputs(args: argparse.Namespace) -> Any:
    """An :class:`~profilecheck.commands._common.OutputSet` after checking every output path
    named in ``args`` (their folders must exist) and opening an existing ``--log`` (a damaged
    or foreign file raises LogError), so a bad output fails before any work."""
    from ..commands._common import OutputSet

    for attr, what in (("json", "JSON file"), ("annotate", "annotated image"),
                       ("sheet", "job sheet"), ("csv", "CSV file"), ("log", "log")):
        OutputSet.check_path(getattr(args, attr, None), what)
    log = getattr(args, "log", None)
    if log and Path(log).exists():  # a damaged or foreign log fails now, before any work
        from ..log import InspectionLog

        InspectionLog(log, create=False).close()
    return OutputSet()


def result_dict_of(result: Any) -> dict[str, Any]:
    """The JSON dict of a result object (``.to_dict()``) or of a dict already."""
    if isinstance(result, Mapping):
        return dict(result)
    to_dict = getattr(result, "to_dict", None)
    if not callable(to_dict):
        raise TypeError(f"result must have to_dict() or be a dict, got {type(result).__name__}")
    return dict(to_dict())


def auto_scale_bar(mm_per_px: float, width_px: int) -> Any:
    """A scale bar near a fifth of the image width (:func:`profilecheck.overlays.scale_bar_for`)."""
    from ..overlays import scale_bar_for

    return scale_bar_for(mm_per_px, width_px)


def _mm_per_px(d: Mapping[str, Any], args: argparse.Namespace) -> float | None:
    cal = d.get("calibration")
    if isinstance(cal, Mapping):
        v = cal.get("mm_per_px")
        if isinstance(v, (int, float)) and not isinstance(v, bool) and v > 0:
            return float(v)
    path = getattr(args, "cal", None)
    if path:
        try:
            from ..calibration import load_calibration

            return load_calibration(path).mm_per_px
        except Exception:  # noqa: BLE001 - a scale bar is never worth failing a report
            return None
    return None


def add_standard_outputs(outputs: Any, args: argparse.Namespace, result: Any,
                         image: Any = None, *, image_path: str | os.PathLike[str] | None = None,
                         calibration_path: str | os.PathLike[str] | None = None,
                         overlays: Any = None) -> dict[str, Any]:
    """Queue every standard output named in ``args`` on ``outputs``.

    Parameters
    ----------
    outputs : OutputSet
        From :func:`prepare_outputs`; nothing is written until ``outputs.commit()``.
    args : argparse.Namespace
        With the attributes of :func:`add_output_arguments` (missing ones count as not
        given), and ``image`` / ``cal`` paths when the command has them.
    result : result object or dict
        ``.to_dict()`` gives the JSON of design.md; ``.overlays`` the drawing primitives.
    image : ndarray, optional
        The image measured (grey, [0, 1] or uint8); needed for ``--annotate`` and for the
        picture on the sheet (without it the sheet says no picture is attached).
    image_path, calibration_path : path-like, optional
        Files to hash into the log (default ``args.image``, ``args.cal``).
    overlays : sequence, optional
        Overrides ``result.overlays``.

    Returns
    -------
    dict
        The result dict, with ``job`` added, as written to the JSON file.
    """
    from ..commands._common import dumps_json

    d = result_dict_of(result)
    image_path = image_path if image_path is not None else getattr(args, "image", None)
    calibration_path = (calibration_path if calibration_path is not None
                        else getattr(args, "cal", None))
    job = getattr(args, "job", None) or (Path(str(image_path)).stem if image_path
                                         else str(d.get("kind") or "job"))
    d.setdefault("job", job)
    ann_path = _as_path(getattr(args, "annotate", None))
    sheet_path = _as_path(getattr(args, "sheet", None))
    png_full = png_sheet = None
    if image is not None and (ann_path or sheet_path):
        from ..overlays import ScaleBar
        from .annotate import draw_overlays, encode_png

        ovs = list(overlays if overlays is not None else getattr(result, "overlays", ()) or ())
        bar = None
        s = _mm_per_px(d, args)
        if s is not None and not any(isinstance(o, ScaleBar) for o in ovs):
            bar = auto_scale_bar(s, int(getattr(image, "shape", (0, 0))[1]))
        if ann_path:
            png_full = encode_png(draw_overlays(image, ovs, scale_bar=bar))
        if sheet_path:
            png_sheet = encode_png(draw_overlays(image, ovs, scale_bar=bar,
                                                 max_side=SHEET_MAX_SIDE))
    if getattr(args, "json", None):
        _queue_bytes(outputs, Path(args.json), dumps_json(d).encode("utf-8"))
    if ann_path and png_full is not None:
        _queue_bytes(outputs, ann_path, png_full)
    if sheet_path:
        from .sheet import render_sheet

        _queue_bytes(outputs, sheet_path, render_sheet(d, png_sheet, job=job).encode("utf-8"))
    if getattr(args, "csv", None):
        from .csv import format_readings_csv, readings_rows

        _queue_bytes(outputs, Path(args.csv),
                     format_readings_csv(readings_rows(d, job=job)).encode("utf-8"))
    if getattr(args, "log", None):
        log_path = Path(args.log)

        def _log(_path: Path, d=d, job=job) -> None:
            from ..log import InspectionLog

            with InspectionLog(log_path) as log:
                log.record(d, job=job, image_path=image_path, calibration_path=calibration_path)

        _add_action(outputs, log_path, _log)
    return d


def write_all(result: Any, image: Any, stem: str | os.PathLike[str], *,
              formats: tuple[str, ...] = ("json", "png", "html", "csv"),
              job: str | None = None, log: str | os.PathLike[str] | None = None,
              image_path: str | os.PathLike[str] | None = None,
              calibration_path: str | os.PathLike[str] | None = None) -> dict[str, Path]:
    """Write a result's reports beside each other: ``<stem>.json``, ``<stem>.png``
    (annotated), ``<stem>.html`` (job sheet), ``<stem>.csv``, and optionally append to a
    log. Used by the demo and by scripts.

    Returns
    -------
    dict
        Format name -> path written.
    """
    unknown = set(formats) - {"json", "png", "html", "csv"}
    if unknown:
        raise ValueError(f"formats: unknown {sorted(unknown)}; use json, png, html, csv")
    stem = Path(stem)
    paths = {"json": stem.with_name(stem.name + ".json"),
             "png": stem.with_name(stem.name + ".png"),
             "html": stem.with_name(stem.name + ".html"),
             "csv": stem.with_name(stem.name + ".csv")}
    paths = {k: v for k, v in paths.items() if k in formats}
    args = argparse.Namespace(json=paths.get("json"), annotate=paths.get("png"),
                              sheet=paths.get("html"), csv=paths.get("csv"), log=log,
                              job=job or stem.name, image=image_path, cal=calibration_path)
    outputs = prepare_outputs(args)
    add_standard_outputs(outputs, args, result, image)
    outputs.commit()
    return paths


def _queue_bytes(outputs: Any, path: Path, data: bytes) -> None:
    """Queue ``data`` for ``path``: written to the OutputSet's temporary name, flushed to
    disk (fsync) and renamed at commit; the new file gets the usual umask permissions."""

    def _write(tmp: Path, data: bytes = data) -> None:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())

    outputs.add_writer(path, _write)


def _as_path(p: Any) -> Path | None:
    """``Path(p)`` or None."""
    return None if not p else Path(p)


def _add_action(outputs: Any, path: Path, action: Any) -> None:
    """Queue a non-file action (the log append) to run at ``outputs.commit()`` after the
    files."""
    outputs.add_action(path, action)
