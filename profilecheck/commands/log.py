"""``profilecheck log FILE [list | show ID | export CSV]``: read the inspection log.

* ``list`` (default): one line per record, oldest first (``--last N`` for the newest N,
  ``--kind`` to filter).
* ``show ID``: the record's table (both unit systems), the files and their SHA-256; with
  ``--json`` the whole stored record as JSON.
* ``export CSV``: every reading of every record as a readings CSV
  (:data:`profilecheck.report.csv.COLUMNS`).

Opening a log made by an older profilecheck migrates it to the current schema first (one
transaction; see :mod:`profilecheck.log`). Exit status 0; 2 when the log is missing or
damaged or the record does not exist.
"""

from __future__ import annotations

import argparse
from typing import Any

__all__ = ["register", "run"]


def register(subparsers: Any) -> None:
    p = subparsers.add_parser(
        "log", help="list, show or export the inspection log",
        description="Read an inspection log written by --log: list the jobs, show one, or "
                    "export every reading as CSV.")
    p.add_argument("file", metavar="FILE", help="the inspection log (SQLite)")
    p.add_argument("action", nargs="?", default="list", choices=("list", "show", "export"),
                   help="list (default), show ID, export CSV")
    p.add_argument("target", nargs="?", metavar="ID|CSV",
                   help="record id for show; output file for export")
    p.add_argument("--last", type=int, metavar="N", help="list: only the newest N records")
    p.add_argument("--kind", help="list: only records of this kind (thread, tool, check...)")
    p.add_argument("--json", action="store_true", help="show: print the stored record as JSON")
    p.add_argument("--units", choices=("mm", "in"), default="mm",
                   help="show: which system the table shows first")
    p.set_defaults(func=run)


def _list_lines(rows: list[dict[str, Any]]) -> list[str]:
    from ..report._fmt import verdict_word

    if not rows:
        return ["(the log holds no records)"]
    body = [(str(r["id"]), r["time"] or "", r["kind"] or "", r["job"] or "", r["spec"] or "",
             verdict_word(r["verdict"]) if r["verdict"] else "-", str(r["readings"]))
            for r in rows]
    head = ("id", "time (UTC)", "kind", "job", "spec", "verdict", "readings")
    widths = [max(len(h), *(len(b[i]) for b in body)) for i, h in enumerate(head)]
    fmt = "  ".join(f"{{:<{w}}}" for w in widths)
    return [fmt.format(*head).rstrip(), "  ".join("-" * w for w in widths),
            *(fmt.format(*b).rstrip() for b in body)]


def run(args: argparse.Namespace) -> int:
    from ..errors import LogError
    from ..log import InspectionLog
    from ._common import OutputSet, dumps_json, info

    if args.action == "list" and args.target is not None:
        raise LogError(f"'list' takes no argument (got {args.target!r}); use 'show ID'")
    if args.action in ("show", "export") and not args.target:
        raise LogError(f"'{args.action}' needs "
                       + ("a record id, e.g. 'show 3'" if args.action == "show"
                          else "an output file, e.g. 'export readings.csv'"))
    if args.last is not None and args.last < 1:
        raise LogError(f"--last must be 1 or more, got {args.last}")
    export_path = None
    if args.action == "export":
        export_path = OutputSet.check_path(args.target, "CSV file")
    with InspectionLog(args.file, create=False) as log:
        if args.action == "list":
            rows = log.list(kind=args.kind, limit=args.last)
            print("\n".join(_list_lines(rows)))
            return 0
        if args.action == "show":
            try:
                rid = int(args.target)
            except ValueError:
                raise LogError(f"record id must be a whole number, got {args.target!r}") from None
            rec = log.show(rid)
            if args.json:
                print(dumps_json(rec), end="")
                return 0
            print(_show_text(rec, args.units), end="")
            return 0
        n = log.export_csv(export_path)
        info(f"wrote {n} readings to {export_path}")
        return 0


def _show_text(rec: dict[str, Any], units: str) -> str:
    from ..report.table import format_table

    lines = [f"record {rec['id']}: job {rec['job']}, {rec['time']}, {rec['kind']}"]
    for what, path, sha in (("image", rec.get("image_path"), rec.get("image_sha256")),
                            ("calibration", rec.get("calibration_path"),
                             rec.get("calibration_sha256"))):
        if path:
            lines.append(f"{what} {path}" + (f"  sha256 {sha}" if sha else "  (not hashed)"))
    sc = rec.get("standard_check")
    if sc:
        lines.append(f"check standard: pin {sc['nominal_mm']:.4f} mm read "
                     f"{sc['measured_mm']:.4f} mm, scale error {100 * sc['scale_error']:+.3f} % "
                     f"(allowed \u00b1{100 * sc['u_scale']:.3f} %)"
                     + ("  DRIFT" if sc["drift"] else ""))
    result = rec.get("result")
    text = "\n".join(lines) + "\n"
    if isinstance(result, dict):
        text += format_table(result, units)
    return text
