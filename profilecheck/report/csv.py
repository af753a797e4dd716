"""CSV export of readings: one row per quantity, stable columns, and a round-trip reader.

Columns (:data:`COLUMNS`, in this order; a reader must not rely on more):
``job, time, kind, image, spec, quantity, value, u, unit, min, max, result, source,
n_points``. ``value`` and ``u`` (expanded, k = 2) are in ``unit`` (lengths mm, angles deg);
``min``/``max`` are the limits, empty when there is none; ``result`` is 'pass', 'fail',
'undecided' or empty (measured only). Numbers are written with Python's shortest round-trip
representation, so reading the file back gives the same floats.

Text that a spreadsheet would run as a formula (starting ``=``, ``+``, ``-``, ``@``, tab
or CR) is written with a leading apostrophe, which the reader removes again.
"""

from __future__ import annotations

import csv as _csv
import io
import math
import os
from pathlib import Path
from typing import Any, Iterable, Mapping

from ..errors import ProfilecheckError
from ._context import image_name, spec_designation
from ._rows import readings

__all__ = ["COLUMNS", "CsvFormatError", "readings_rows", "format_readings_csv",
           "write_readings_csv", "read_readings_csv"]

COLUMNS = ("job", "time", "kind", "image", "spec", "quantity", "value", "u", "unit", "min",
           "max", "result", "source", "n_points")
_FLOATS = ("value", "u", "min", "max")
_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


class CsvFormatError(ProfilecheckError, ValueError):
    """A readings CSV file cannot be read (wrong columns, not a number where one is due)."""


def readings_rows(result_dict: Mapping[str, Any], *, job: str = "",
                  time: str = "") -> list[dict[str, Any]]:
    """Rows (dicts keyed by :data:`COLUMNS`) of one measurement result dict.

    Parameters
    ----------
    result_dict : mapping
        The ``to_dict()`` JSON of a measurement.
    job, time : str
        Job name and ISO 8601 time stamp to put on every row (default: the result's
        ``job`` / ``time`` keys when present, else empty).
    """
    if not isinstance(result_dict, Mapping):
        raise TypeError(f"result_dict must be a dict, got {type(result_dict).__name__}")
    r = dict(result_dict)
    job = job or str(r.get("job") or "")
    time = time or str(r.get("time") or "")
    common = {"job": job, "time": time, "kind": str(r.get("kind") or ""),
              "image": image_name(r), "spec": spec_designation(r)}
    out = []
    for row in readings(r):
        out.append({**common, "quantity": row.quantity, "value": row.value, "u": row.u,
                    "unit": row.unit, "min": row.min, "max": row.max, "result": row.result,
                    "source": row.source, "n_points": row.n_points})
    return out


def _cell(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, bool):
        return str(v).lower()
    if isinstance(v, float):
        return repr(v) if math.isfinite(v) else ""
    if isinstance(v, int):
        return str(v)
    s = str(v)
    if s.startswith(_FORMULA_START) or (s.startswith("'") and s[1:2] in _FORMULA_START + ("'",)):
        return "'" + s
    return s


def format_readings_csv(rows: Iterable[Mapping[str, Any]]) -> str:
    """CSV text (header + rows, ``\\r\\n`` line ends as RFC 4180) of reading rows."""
    buf = io.StringIO()
    w = _csv.writer(buf, lineterminator="\r\n")
    w.writerow(COLUMNS)
    for row in rows:
        w.writerow([_cell(row.get(c)) for c in COLUMNS])
    return buf.getvalue()


def write_readings_csv(path: str | os.PathLike[str],
                       results: Mapping[str, Any] | Iterable[Mapping[str, Any]], *,
                       job: str = "", time: str = "") -> int:
    """Write the readings of one result dict (or of several) to ``path`` atomically.

    Returns the number of reading rows written.
    """
    from .annotate import write_bytes_atomic

    if isinstance(results, Mapping):
        results = [results]
    rows: list[dict[str, Any]] = []
    for r in results:
        rows.extend(readings_rows(r, job=job, time=time))
    write_bytes_atomic(path, format_readings_csv(rows).encode("utf-8"))
    return len(rows)


def _uncell(col: str, s: str, where: str) -> Any:
    if col in _FLOATS:
        if s == "":
            return None
        try:
            return float(s)
        except ValueError:
            raise CsvFormatError(f"{where}: column {col} should be a number, found {s!r}") from None
    if col == "n_points":
        if s == "":
            return None
        try:
            return int(s)
        except ValueError:
            raise CsvFormatError(f"{where}: column n_points should be a whole number, "
                                 f"found {s!r}") from None
    if s.startswith("'") and s[1:2] in _FORMULA_START + ("'",):
        return s[1:]
    return s


def read_readings_csv(source: str | os.PathLike[str] | io.TextIOBase) -> list[dict[str, Any]]:
    """Read a readings CSV written by :func:`write_readings_csv`.

    Returns a list of dicts keyed by :data:`COLUMNS`: floats for value/u/min/max (None where
    empty), int or None for n_points, str otherwise. Extra columns are kept as text.

    Raises
    ------
    CsvFormatError
        A required column is missing or a number cannot be read.
    """
    if isinstance(source, (str, os.PathLike)):
        name = str(source)
        try:
            text = Path(source).read_text(encoding="utf-8-sig")
        except FileNotFoundError:
            raise CsvFormatError(f"{name}: file not found") from None
        except (OSError, UnicodeDecodeError) as e:
            raise CsvFormatError(f"{name}: cannot read ({e.__class__.__name__})") from None
        fh: Any = io.StringIO(text, newline="")
    else:
        name, fh = "readings CSV", source
    reader = _csv.reader(fh)
    try:
        header = next(reader)
    except StopIteration:
        raise CsvFormatError(f"{name}: empty file, expected a header row") from None
    missing = [c for c in COLUMNS if c not in header]
    if missing:
        raise CsvFormatError(f"{name}: not a readings file, missing column(s) "
                             f"{', '.join(missing)}")
    out = []
    for lineno, cells in enumerate(reader, start=2):
        if not cells:
            continue
        cells = cells + [""] * (len(header) - len(cells))
        where = f"{name} line {lineno}"
        out.append({col: _uncell(col, cell, where) for col, cell in zip(header, cells)})
    return out
