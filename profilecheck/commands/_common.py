"""Helpers shared by the subcommands: length arguments, atomic outputs, exit codes."""

from __future__ import annotations

import json
import math
import os
import sys
from pathlib import Path
from typing import Any, Callable

from .._files import atomic_write_text, json_safe
from ..errors import ProfilecheckError

__all__ = ["dumps_json", "OutputSet", "exit_code_for", "info"]


def dumps_json(obj: Any) -> str:
    """Deterministic JSON: sorted keys, 2-space indent, non-finite floats as null."""
    return json.dumps(json_safe(obj), indent=2, sort_keys=True, allow_nan=False) + "\n"


class OutputSet:
    """Collect output files and write them only once everything has succeeded.

    Each output is checked up front (its folder must exist) so a bad path fails before any
    work; :meth:`commit` writes each file atomically. Nothing is written if the measurement
    raised.
    """

    def __init__(self) -> None:
        self._pending: list[tuple[Path, Callable[[Path], None]]] = []

    @staticmethod
    def check_path(path: str | os.PathLike[str] | None, what: str) -> Path | None:
        if path is None:
            return None
        p = Path(path)
        parent = p.parent if str(p.parent) else Path(".")
        if not parent.is_dir():
            raise ProfilecheckError(f"{what} {p}: folder {parent} does not exist")
        if p.is_dir():
            raise ProfilecheckError(f"{what} {p} is a folder, not a file")
        return p

    def add_text(self, path: Path | None, text: str) -> None:
        if path is not None:
            self._pending.append((path, lambda p, t=text: atomic_write_text(p, t)))

    def add_writer(self, path: Path | None, writer: Callable[[Path], None]) -> None:
        """``writer(tmp_path)`` writes the file at a temporary path; it is renamed after."""
        if path is None:
            return

        def _write(p: Path, w=writer) -> None:
            tmp = p.with_name(f".{p.name}.{os.getpid()}.tmp{p.suffix}")
            try:
                w(tmp)
                os.replace(tmp, p)
            finally:
                if tmp.exists():
                    tmp.unlink()

        self._pending.append((path, _write))

    def add_action(self, path: Path | None, action: Callable[[Path], None]) -> None:
        """Queue ``action(path)`` (e.g. a log record) to run at :meth:`commit`, after the
        files before it; the action is responsible for its own atomicity."""
        if path is not None:
            self._pending.append((path, action))

    def commit(self) -> None:
        for path, write in self._pending:
            write(path)
        self._pending.clear()


def exit_code_for(verdict_overall: str) -> int:
    """0 for 'pass' or no spec ('none'); 1 for 'fail' or 'undecided'."""
    return 0 if verdict_overall in ("pass", "none") else 1


def info(msg: str) -> None:
    """Progress and notes go to stderr; stdout carries the table or JSON."""
    print(msg, file=sys.stderr)


def finish_measurement(args: Any, result: Any, img: Any, outputs: "OutputSet", *,
                       extra_lines: Callable[[dict], list[str]] | None = None,
                       before_commit: Callable[[dict], None] | None = None) -> int:
    """The common end of ``thread``, ``tool`` and ``height``: queue the standard outputs
    (``--json --annotate --sheet --csv --log``), write them all, print the table and the
    warnings, and return the exit status from the verdict.

    ``extra_lines(d)`` adds lines under the table; ``before_commit(d)`` queues
    command-specific outputs (e.g. ``--save-axis``) on ``outputs``.
    """
    from ..report.outputs import add_standard_outputs
    from ..report.table import format_table

    d = result.to_dict()
    d["image"] = args.image
    d["calibration"] = dict(d["calibration"], file=args.cal)
    add_standard_outputs(outputs, args, d, img, overlays=result.overlays)
    if before_commit is not None:
        before_commit(d)
    text = format_table(d, units=args.units)
    if extra_lines is not None:
        text += "".join(line + "\n" for line in extra_lines(d))
    outputs.commit()
    print(text, end="")
    for w in result.warnings:
        info(f"warning: {w}")
    return exit_code_for(result.verdict)
