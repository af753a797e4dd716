"""One-page HTML job sheet of a measurement (print CSS, no PDF dependency).

The sheet holds, for any measurement result dict (``../shared/design.md``): the annotated
image embedded as a ``data:`` URI PNG with its scale bar; every reading with its expanded
uncertainty (k = 2) in mm and inch side by side against the limits; the verdict per check in
words and the decision rule used (:data:`profilecheck.verdict.DECISION_RULE`); the
calibration the reading rests on; the spec's shop numbers (blank diameter, wires and
over-wire limits, tool tip, infeed); warnings; and the usual shop cautions with the note
that the standards and local practice govern acceptance.

Print it from any browser (A4, one page); the page is self-contained (no network, no
scripts).
"""

from __future__ import annotations

import base64
import html
import os
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Mapping

from ._cautions import ACCEPTANCE_NOTE, cautions_for
from ._context import (calibration_summary, image_name, infeed_rows, spec_designation,
                       spec_numbers)
from ._fmt import fmt_limits, fmt_pair, verdict_word
from ._rows import quantity_title, readings

__all__ = ["render_sheet", "write_sheet", "SHEET_CSS"]

#: The stylesheet inlined into every sheet (package data ``report/sheet.css``).
SHEET_CSS = Path(__file__).with_name("sheet.css")

_PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


def _e(v: Any) -> str:
    return html.escape(str(v), quote=True)


def _short(text: str, limit: int = 64) -> str:
    """A limit's source cut to ``limit`` characters (the full text is the cell's title)."""
    text = " ".join(str(text).split())
    return text if len(text) <= limit else text[:limit - 1].rstrip() + "\u2026"


def _png_bytes(annotated_png: bytes | str | os.PathLike[str] | None) -> bytes | None:
    if annotated_png is None:
        return None
    if isinstance(annotated_png, (bytes, bytearray, memoryview)):
        data = bytes(annotated_png)
    elif isinstance(annotated_png, (str, os.PathLike)):
        try:
            data = Path(annotated_png).read_bytes()
        except OSError as e:
            from ..errors import ImageError

            raise ImageError(f"{annotated_png}: cannot read the annotated image "
                             f"({e.__class__.__name__})") from None
    else:
        raise TypeError("annotated_png must be PNG bytes, a path, or None, got "
                        f"{type(annotated_png).__name__}")
    if not data.startswith(_PNG_MAGIC):
        raise ValueError("annotated_png is not a PNG (bad signature)")
    return data


def render_sheet(result_dict: Mapping[str, Any],
                 annotated_png: bytes | str | os.PathLike[str] | None = None, *,
                 spec: Mapping[str, Any] | None = None, job: str | None = None,
                 created: str | None = None, title: str = "profilecheck job sheet") -> str:
    """Render the job sheet of one measurement as a self-contained HTML page.

    Parameters
    ----------
    result_dict : mapping
        The ``to_dict()`` JSON of a measurement. Missing parts are left out of the sheet.
    annotated_png : bytes, path or None
        The annotated picture (:func:`profilecheck.report.annotate.write_annotated_png`
        returns these bytes); embedded as a ``data:image/png;base64`` URI. ``None`` prints a
        placeholder saying no picture was attached.
    spec : mapping, optional
        The spec's ``to_dict()`` when fuller than the result's ``spec`` entry (used for the
        shop numbers); defaults to ``result_dict['spec']``.
    job : str, optional
        Job name printed in the heading (default: ``result_dict['job']`` or the image name).
    created : str, optional
        Time stamp printed (default: now, UTC, ISO 8601).
    title : str
        Page title.

    Returns
    -------
    str
        HTML5 text (UTF-8).

    Raises
    ------
    TypeError
        ``result_dict`` is not a mapping, ``annotated_png`` of a wrong type.
    ValueError
        ``annotated_png`` bytes are not a PNG.
    """
    if not isinstance(result_dict, Mapping):
        raise TypeError(f"result_dict must be a dict, got {type(result_dict).__name__}")
    r = dict(result_dict)
    png = _png_bytes(annotated_png)
    kind = str(r.get("kind") or "measurement")
    job = job if job is not None else str(r.get("job") or Path(image_name(r)).stem or kind)
    created = created or datetime.now(timezone.utc).isoformat(timespec="seconds")
    verdict = r.get("verdict") if isinstance(r.get("verdict"), Mapping) else {}
    overall = str(verdict.get("overall") or "none")
    spec_d = spec if spec is not None else r.get("spec")

    parts: list[str] = []
    add = parts.append
    add("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
    add(f"<title>{_e(title)}: {_e(job)}</title>\n")
    add("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
    add(f"<style>\n{SHEET_CSS.read_text(encoding='utf-8')}</style>\n</head>\n<body>\n")

    # -- heading and overall verdict ---------------------------------------------------------
    meta = [f"<b>{_e(kind)}</b> measurement", f"job {_e(job)}"]
    if image_name(r):
        meta.append(f"image {_e(image_name(r))}")
    if spec_designation(r):
        meta.append(f"spec <b>{_e(spec_designation(r))}</b>")
    meta.append(f"printed {_e(created)}")
    word = verdict_word(overall)
    sub = {"pass": "every check inside its limits, U included",
           "fail": "at least one check outside its limits",
           "undecided": "a reading lies within U of a limit",
           "none": "no limits given: measured only"}.get(overall, "")
    add("<div class=\"head\"><div>")
    add(f"<h1>{_e(title)}</h1><div class=\"meta\">{' &middot; '.join(meta)}</div></div>")
    add(f"<div class=\"overall v-{_e(overall)}\">{_e(word)}<small>{_e(sub)}</small></div>")
    add("</div>\n")

    # -- picture -----------------------------------------------------------------------------
    if png is not None:
        uri = "data:image/png;base64," + base64.b64encode(png).decode("ascii")
        add(f"<figure><img alt=\"annotated image of {_e(job)}\" src=\"{uri}\">"
            "<figcaption>Annotated image: fitted lines and limits as measured; scale bar "
            "lower left.</figcaption></figure>\n")
    else:
        add("<figure><div class=\"noimg\">no annotated image attached</div></figure>\n")

    # -- readings ----------------------------------------------------------------------------
    add("<h2>Readings</h2>\n")
    rows = readings(r)
    if rows:
        add("<table><thead><tr><th>quantity</th><th>metric (value &plusmn; U)</th>"
            "<th>inch (value &plusmn; U)</th><th>limits (mm / in)</th>"
            "<th>verdict</th><th>limits from</th></tr></thead><tbody>\n")
        for row in rows:
            metric = fmt_pair(row.value, row.u, row.unit, "mm")
            inch = fmt_pair(row.value, row.u, row.unit, "in") if row.unit == "mm" else ""
            lim_mm = fmt_limits(row.min, row.max, row.unit, "mm")
            lim_in = fmt_limits(row.min, row.max, row.unit, "in") if row.unit == "mm" else ""
            res = row.result.lower() if row.result else ""
            word = verdict_word(res) if res else "&ndash;"
            add(f"<tr><td>{_e(quantity_title(row.quantity))}</td>"
                f"<td class=\"num\">{_e(metric)}</td><td class=\"num\">{_e(inch)}</td>"
                f"<td class=\"num\">{_e(lim_mm)}{'<br>' + _e(lim_in) if lim_in else ''}</td>"
                f"<td class=\"word r-{_e(res)}\">{word if not res else _e(word)}</td>"
                f"<td class=\"src\" title=\"{_e(row.source)}\">{_e(_short(row.source))}</td>"
                "</tr>\n")
        add("</tbody></table>\n")
    else:
        add("<p>No readings in this result.</p>\n")
    from ..verdict import DECISION_RULE

    add(f"<p class=\"rule\"><b>Decision rule:</b> {_e(DECISION_RULE)}. U is the expanded "
        "uncertainty, coverage factor k = 2 (about 95 %, JCGM 100:2008).</p>\n")

    # -- calibration and spec ----------------------------------------------------------------
    add("<div class=\"cols\"><div><h2>Calibration</h2>\n<dl>")
    cal = calibration_summary(r.get("calibration"))
    cal_rows = (("file", cal["file"]), ("camera", cal["label"]), ("gauge", cal["gauge"]),
                ("made", cal["created"]), ("scale", cal["scale"]),
                ("scale uncertainty", cal["u_scale"]), ("view", cal["view"]))
    sha = r.get("calibration", {}).get("sha256") if isinstance(r.get("calibration"), Mapping) \
        else None
    if sha:
        cal_rows += (("file sha256", str(sha)[:16] + "\u2026"),)
    shown = [(k, v) for k, v in cal_rows if v]
    for k, v in shown or [("calibration", "not stated in this result")]:
        add(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>")
    add("</dl>")
    infeed = infeed_rows(r)
    if infeed:
        add("<h2>Infeed to go</h2>\n<dl>")
        for k, v in infeed:
            add(f"<dt>{_e(k.replace('infeed to go, ', ''))}</dt><dd>{_e(v)}</dd>")
        add("</dl>")
    add("</div>\n<div><h2>Spec</h2>\n<dl>")
    shown_limits = frozenset(row.quantity for row in rows if row.min is not None
                             or row.max is not None)
    numbers = spec_numbers(spec_d, None, skip_limits=shown_limits)
    for k, v in numbers or [("spec", spec_designation(r) or "none given: measured only")]:
        add(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>")
    add("</dl></div></div>\n")

    # -- warnings and cautions ---------------------------------------------------------------
    warnings = [str(w) for w in (r.get("warnings") or []) if str(w).strip()]
    add("<h2>Warnings</h2>\n")
    if warnings:
        add("<ul class=\"warn\">" + "".join(f"<li>{_e(w)}</li>" for w in warnings) + "</ul>\n")
    else:
        add("<p class=\"rule\">None raised by the measurement.</p>\n")
    advice = [str(a) for a in (r.get("advice") or []) if str(a).strip()]
    if advice:
        add("<h2>What to do</h2>\n<ul class=\"warn\">"
            + "".join(f"<li>{_e(a)}</li>" for a in advice) + "</ul>\n")
    notes = [str(n) for n in (r.get("notes") or []) if str(n).strip()]
    if notes:
        add("<p class=\"rule\"><b>Method notes:</b> " + " &middot; ".join(_e(n) for n in notes)
            + "</p>\n")
    add("<div class=\"caution\"><b>Caution</b><ul>")
    add("".join(f"<li>{_e(c)}</li>" for c in cautions_for(kind)))
    add(f"</ul><p class=\"rule\">{_e(ACCEPTANCE_NOTE)}</p></div>\n")
    from .. import __version__

    add(f"<footer><span>profilecheck {_e(__version__)}</span>"
        f"<span>{_e(kind)} &middot; {_e(job)}</span></footer>\n</body>\n</html>\n")
    return "".join(parts)


def write_sheet(path: str | os.PathLike[str], result_dict: Mapping[str, Any],
                annotated_png: bytes | str | os.PathLike[str] | None = None,
                **kwargs: Any) -> None:
    """Render the job sheet and write it at ``path`` atomically (temp file, fsync, rename).

    Keyword arguments are those of :func:`render_sheet`.
    """
    from .annotate import write_bytes_atomic

    write_bytes_atomic(path, render_sheet(result_dict, annotated_png, **kwargs).encode("utf-8"))
