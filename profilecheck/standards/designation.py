"""Reading and writing thread designations.

Grammar (case-insensitive except the ISO tolerance letters, whose case says external
(``g``) or internal (``H``)); ``[]`` optional:

* Unified inch (ASME B1.1): ``SIZE-TPI SERIES[-CLASS][-LH][-nSTART]``, e.g. ``1/4-20 UNC-2A``,
  ``#10-32 UNF-2B``, ``1-1/2-6 UNC-2A``, ``2.500-8 UN-2A``, ``1/4-40 UNS-2A``, ``1/4-20 UNRC-2A``,
  ``1/2-13 UNC-2A-2START`` (two starts, lead 2P; ``(2 STARTS)`` is read too, and the
  ASME B1.1 marking with pitch and lead in inches, ``0.500-0.0769P-0.1538L(2 STARTS) UNC-2A``,
  where 1/P must be a whole or half number of threads per inch). SIZE is a
  number size 0-12 (``#`` optional), a fraction (``1/4``, ``1-1/2``, ``1 1/2``, ``2½``) or a
  decimal inch (``0.250``). A bare integer 1 or 2 is a number size when TPI >= 48, 3-12 when
  TPI >= 24, otherwise whole inches (``1-8 UNC`` is one inch). SERIES: UNC, UNF, UNEF, UN
  (constant pitch 4/6/8/12/16/20/28/32; ``8UN`` or ``8-UN`` also read), UNS, and the UNR
  variants (UNRC, UNRF, UNREF, UNR, UNRS). No class: 2A.
* ISO metric: ``M<d>[x<P>][-CLASS][-LH]`` (``M8`` = coarse pitch), multi-start
  ``M16xPh3P1.5``; CLASS one or two symbols (``6g``, ``5g6g``, ``6H``); no class: 6g.
* Whitworth form: ``1/4 BSW``, ``1/4-26 BSF``, ``3/16-40 ME`` (constant-pitch 26/32/40 tpi),
  ``3/8-26 BSB``; BA: ``4BA``; Acme: ``1/2-10 ACME[-2G]``; trapezoidal ``Tr20x4[-7e]``,
  multi-start ``Tr20x8(P4)``.
* Also read: ``No. 10-32 UNF`` (for ``#10-32 UNF``), an inch mark after the size
  (``1/4"-20 UNC-2A``), ``LH`` before the class (``M8x1.25LH-6g``, ``Tr20x4 LH-7e``),
  which the canonical form puts last as ISO 965-1 does (``M8x1.25-6g-LH``), and the class
  after a space or run on (``M6x1 6g``, ``1/4-20 UNC 2A``, ``1/4-20UNC2A``).
* Forms without class letters take ``-INT`` for an internal thread (``1/4 BSW-INT``,
  ``1/2-10 ACME-2G-INT``); external is the default.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, replace
from decimal import Decimal, InvalidOperation
from fractions import Fraction

from ..errors import SpecError

__all__ = ["Designation", "parse_designation", "format_designation", "EXAMPLES"]

#: Examples named in error messages.
EXAMPLES = "1/4-20 UNC-2A, 10-32 UNF-2B, M6x1-6g, M8-6H, 1/4 BSW, 4BA, 1/2-10 ACME-2G, Tr20x4-7e"

_VULGAR = {"½": "1/2", "¼": "1/4", "¾": "3/4", "⅛": "1/8", "⅜": "3/8", "⅝": "5/8", "⅞": "7/8"}

_UNIFIED_SERIES = ("UNC", "UNF", "UNEF", "UN", "UNS", "UNRC", "UNRF", "UNREF", "UNR", "UNRS")
_WHIT_SERIES = ("BSW", "BSF", "ME", "BSB")


@dataclass(frozen=True)
class Designation:
    """A parsed designation (numbers as exact decimals; no tolerances applied yet).

    Attributes
    ----------
    family : str
        'unified', 'metric', 'whitworth', 'ba', 'acme' or 'trapezoidal'.
    size : str
        Canonical size text: '1/4', '10', '1-1/2', '0.250' (inch), '6' (M6), '4' (4BA).
    diameter : Decimal
        Basic major diameter in the family's unit (inch, or mm for metric/BA/trapezoidal).
    pitch : Decimal or None
        Pitch in mm (metric, BA, trapezoidal) when given, else None.
    tpi : Decimal or None
        Threads per inch (inch families) when given.
    series : str
        e.g. 'UNC', 'UNRF', 'UN', 'UNS', 'M', 'BSW', 'ME', 'BA', 'ACME', 'Tr'.
    thread_class : str
        As written ('2A', '6g', '5g6g', '2G', '7e') or '' when not given.
    internal : bool or None
        From '-INT' / '-EXT' (None when not written; the class decides).
    left_hand : bool
    starts : int
    lead : Decimal or None
        Lead in mm for metric/trapezoidal multi-start (``Ph``, ``Tr d x L (P p)``).
    """

    family: str
    size: str
    diameter: Decimal
    series: str
    pitch: Decimal | None = None
    tpi: Decimal | None = None
    thread_class: str = ""
    internal: bool | None = None
    left_hand: bool = False
    starts: int = 1
    lead: Decimal | None = None
    number_size: bool = False


def _bad(text: str, why: str = "") -> SpecError:
    why = f" ({why})" if why else ""
    return SpecError(f"cannot read the thread designation {text!r}{why}; "
                     f"valid examples: {EXAMPLES}")


def _dec(text: str, original: str) -> Decimal:
    try:
        return Decimal(text)
    except InvalidOperation:
        raise _bad(original, f"{text!r} is not a number") from None


def _size_value(size: str, original: str) -> tuple[str, Decimal]:
    """Canonical inch size text and its value (without the number-size rule)."""
    m = re.fullmatch(r"(\d+)[- ](\d+)/(\d+)|(\d+)/(\d+)|(\d*\.\d+|\d+)", size)
    if m is None:
        raise _bad(original, f"size {size!r}")
    if m.group(1):
        whole, num, den = int(m.group(1)), int(m.group(2)), int(m.group(3))
        if den == 0 or num >= den:
            raise _bad(original, f"size {size!r}")
        frac = Fraction(whole) + Fraction(num, den)
        text = f"{whole}-{num}/{den}"
    elif m.group(4):
        num, den = int(m.group(4)), int(m.group(5))
        if den == 0:
            raise _bad(original, f"size {size!r}")
        frac = Fraction(num, den)
        text = f"{num}/{den}"
    else:
        return m.group(6), _dec(m.group(6), original)
    return text, Decimal(frac.numerator) / Decimal(frac.denominator)


def _strip_suffixes(text: str) -> tuple[str, bool, int | None, bool | None]:
    s = text.strip()
    left = False
    starts: int | None = None
    internal: bool | None = None
    while True:
        m = re.search(r"[\s-]+LH$", s, re.IGNORECASE)
        if m:
            left, s = True, s[:m.start()]
            continue
        m = re.search(r"[\s-]*\(?\s*(\d+)\s*-?\s*STARTS?\s*\)?$", s, re.IGNORECASE)
        if m:
            starts, s = int(m.group(1)), s[:m.start()]
            continue
        m = re.search(r"[\s-]+(INT|EXT)$", s, re.IGNORECASE)
        if m:
            internal, s = m.group(1).upper() == "INT", s[:m.start()]
            continue
        m = re.search(r"[\s-]+RH$", s, re.IGNORECASE)
        if m:
            s = s[:m.start()]
            continue
        return s.strip(), left, starts, internal


_NUM = r"\d+(?:\.\d+)?|\.\d+"
_METRIC_RE = re.compile(
    rf"^M\s*(?P<d>{_NUM})(?:\s*[x×*]\s*(?:PH\s*(?P<lead>{_NUM})\s*P\s*(?P<pl>{_NUM})|(?P<p>{_NUM})))?"
    r"(?:\s*-\s*(?P<cls>\w+))?$", re.IGNORECASE)
_TR_RE = re.compile(
    rf"^TR\s*(?P<d>{_NUM})\s*[x×*]\s*(?P<a>{_NUM})(?:\s*\(\s*P\s*(?P<p>{_NUM})\s*\))?"
    r"(?:\s*-\s*(?P<cls>\w+))?$", re.IGNORECASE)
_BA_RE = re.compile(r"^(?P<n>\d+)\s*B\.?A\.?$", re.IGNORECASE)
_INCH_RE = re.compile(
    r"^#?(?P<size>\d+[- ]\d+/\d+|\d+/\d+|\d*\.\d+|\d+)"
    rf"(?:\s*-\s*(?P<tpi>{_NUM}))?\s*-?\s*(?P<series>(?:\d+\s*-?\s*)?[A-Z]+)"
    r"(?:\s*-\s*(?P<cls>\w+))?$", re.IGNORECASE)


def parse_designation(text: str) -> Designation:
    """Parse a thread designation (grammar in the module docstring).

    Raises
    ------
    TypeError
        If `text` is not a string.
    SpecError
        If the text cannot be read, names an unknown series or class, or has a zero
        pitch or diameter. The message names the problem and gives valid examples.

    Examples
    --------
    >>> parse_designation('1/4-20 UNC-2A').tpi
    Decimal('20')
    """
    if not isinstance(text, str):
        raise TypeError(f"designation must be a str, got {type(text).__name__}")
    original = text
    s = " ".join(text.split())
    for k, v in _VULGAR.items():
        s = re.sub(rf"(\d)\s*{k}", rf"\1-{v}", s).replace(k, v)
    if not s:
        raise _bad(original, "empty")
    # spellings seen on drawings: 'No. 10-32 UNF' for '#10-32 UNF'; an inch mark after the
    # size ('1/4"-20 UNC'); 'LH' between the pitch and the tolerance class
    # ('M8x1.25LH-6g', 'Tr20x4 LH-7e') where ISO 965-1 puts it last ('M8x1.25-6g-LH')
    s = re.sub(r"^N[OR]\.?\s*(?=\d)", "#", s, flags=re.IGNORECASE)
    s = re.sub(r"^([#\d][\d/. -]*?\d)\s*[\"\u2033]\s*(?=-|\s)", r"\1", s)
    m = re.match(r"^((?:M|TR)\s*\d[^-]*?)[\s-]*LH\s*-\s*(\w+)$", s, re.IGNORECASE)
    if m:
        s = f"{m.group(1)}-{m.group(2)}-LH"
    s, left, starts, internal = _strip_suffixes(s)
    # the class after a space instead of a hyphen ('M6x1 6g', '1/4-20 UNC 2A'), or run on
    # ('1/4-20UNC2A')
    s = re.sub(r"^(M\s*\d[^\s-]*)\s+(\d[A-Ha-h]\w*)$", r"\1-\2", s, flags=re.IGNORECASE)
    s = re.sub(r"(?<![A-Z])(UNR?EF|UNR?[CFS]|UNR?)\s*-?\s*([123][AB])$", r"\1-\2", s,
               flags=re.IGNORECASE)
    if starts is not None and starts < 1:
        raise _bad(original, "the number of starts must be 1 or more")
    d = (_parse_metric(s, original) or _parse_tr(s, original) or _parse_ba(s, original)
         or _parse_inch(s, original))
    if d is None:
        raise _bad(original)
    if starts is not None:
        if d.lead is not None and starts != d.starts:
            raise _bad(original, "the lead and the number of starts disagree")
        d = replace(d, starts=starts)
    d = replace(d, left_hand=left, internal=internal)
    _check_numbers(d, original)
    return d


def _check_numbers(d: Designation, original: str) -> None:
    if d.family != "ba" and d.diameter <= 0:
        raise SpecError(f"{original!r}: the diameter must be above zero; "
                        f"valid examples: {EXAMPLES}")
    for name, v in (("pitch", d.pitch), ("threads per inch", d.tpi), ("lead", d.lead)):
        if v is not None and v <= 0:
            raise SpecError(f"{original!r}: the {name} must be above zero; "
                            f"valid examples: {EXAMPLES}")


def _parse_metric(s: str, original: str) -> Designation | None:
    m = _METRIC_RE.match(s)
    if m is None:
        return None
    dia = _dec(m.group("d"), original)
    pitch = lead = None
    starts = 1
    if m.group("lead"):
        lead = _dec(m.group("lead"), original)
        pitch = _dec(m.group("pl"), original)
        starts = _starts_from_lead(lead, pitch, original)
    elif m.group("p"):
        pitch = _dec(m.group("p"), original)
    return Designation("metric", _num_text(dia), dia, "M", pitch=pitch,
                       thread_class=m.group("cls") or "", starts=starts, lead=lead)


def _starts_from_lead(lead: Decimal, pitch: Decimal, original: str) -> int:
    if pitch <= 0 or lead <= 0:
        raise SpecError(f"{original!r}: the pitch and lead must be above zero; "
                        f"valid examples: {EXAMPLES}")
    q = lead / pitch
    if q != q.to_integral_value() or q < 1:
        raise _bad(original, "the lead must be a whole number of pitches")
    return int(q)


def _parse_tr(s: str, original: str) -> Designation | None:
    m = _TR_RE.match(s)
    if m is None:
        return None
    dia = _dec(m.group("d"), original)
    a = _dec(m.group("a"), original)
    if m.group("p"):
        pitch, lead = _dec(m.group("p"), original), a
        starts = _starts_from_lead(lead, pitch, original)
    else:
        pitch, lead, starts = a, None, 1
    return Designation("trapezoidal", _num_text(dia), dia, "Tr", pitch=pitch,
                       thread_class=m.group("cls") or "", starts=starts, lead=lead)


def _parse_ba(s: str, original: str) -> Designation | None:
    m = _BA_RE.match(s)
    if m is None:
        return None
    n = int(m.group("n"))
    return Designation("ba", str(n), Decimal(n), "BA")


_ASME_LEAD_RE = re.compile(
    rf"^(?P<size>#?(?:\d+[- ]\d+/\d+|\d+/\d+|\d*\.\d+|\d+))\s*-\s*(?P<p>{_NUM})\s*P\s*-\s*"
    rf"(?P<l>{_NUM})\s*L\s*(?:\(\s*(?P<n>\d+)\s*STARTS?\s*\))?\s*-?\s*(?P<rest>[A-Z].*)$",
    re.IGNORECASE)


def _asme_lead_form(s: str, original: str) -> tuple[str, int] | None:
    """Rewrite ``SIZE-pP-lL(n STARTS) SERIES-CLASS`` as ``SIZE-tpi SERIES-CLASS`` and starts."""
    m = _ASME_LEAD_RE.match(s)
    if m is None:
        return None
    p, lead = _dec(m.group("p"), original), _dec(m.group("l"), original)
    if p <= 0 or lead <= 0:
        raise SpecError(f"{original!r}: the pitch and lead must be above zero; "
                        f"valid examples: {EXAMPLES}")
    tpi = (2 / p).to_integral_value() / 2    # nearest whole or half tpi
    if abs(tpi * p - 1) > Decimal("0.002"):
        raise _bad(original, f"pitch {p} in is not a whole number of threads per inch")
    starts = int((lead / p).to_integral_value())
    if starts < 1 or abs(starts * p - lead) > Decimal("0.0005"):
        raise _bad(original, "the lead must be a whole number of pitches")
    if m.group("n") and int(m.group("n")) != starts:
        raise _bad(original, "the lead and the number of starts disagree")
    return f"{m.group('size')}-{tpi.normalize():f} {m.group('rest')}", starts


def _parse_inch(s: str, original: str) -> Designation | None:
    lead_form = _asme_lead_form(s, original)
    if lead_form is not None:
        d = _parse_inch(lead_form[0], original)
        return None if d is None else replace(d, starts=lead_form[1])
    m = _INCH_RE.match(s)
    if m is None:
        return None
    series = re.sub(r"[\s-]", "", m.group("series").upper())
    cls = (m.group("cls") or "").upper()
    tpi = _dec(m.group("tpi"), original) if m.group("tpi") else None
    size_raw = m.group("size")
    cp = re.fullmatch(r"(\d+)(UNR?)", series)
    if cp:  # '8UN' / '8-UN': constant-pitch series written with its tpi
        if tpi is not None and Decimal(cp.group(1)) != tpi:
            raise _bad(original, f"{series} does not match {tpi} threads per inch")
        tpi = Decimal(cp.group(1)) if tpi is None else tpi
        series = cp.group(2)
    if series in ("WHIT", "WHITWORTH"):
        series = "BSW"
    if series in _UNIFIED_SERIES:
        family = "unified"
    elif series in _WHIT_SERIES:
        family = "whitworth"
    elif series == "ACME":
        family = "acme"
    else:
        raise SpecError(f"{original!r}: unknown thread series {m.group('series')!r}; "
                        f"known: {', '.join(_UNIFIED_SERIES + _WHIT_SERIES)}, ACME, M, Tr, BA; "
                        f"valid examples: {EXAMPLES}")
    number = False
    if family == "unified" and re.fullmatch(r"\d+", size_raw) and not s.startswith("0."):
        n = int(size_raw)
        if tpi is None:
            raise _bad(original, "a Unified designation needs its threads per inch, e.g. 10-32 UNF")
        if s.startswith("#") or n == 0 or (n in (1, 2) and tpi >= 48) or (3 <= n <= 12 and tpi >= 24):
            if n > 12:
                raise SpecError(f"{original!r}: number sizes run 0 to 12; "
                                f"valid examples: {EXAMPLES}")
            number = True
    if number:
        size_text, dia = size_raw.lstrip("0") or "0", Decimal("0.060") + Decimal("0.013") * int(size_raw)
    else:
        size_text, dia = _size_value(size_raw, original)
    return Designation(family, size_text, dia, series, tpi=tpi, thread_class=cls,
                       number_size=number)


def _num_text(d: Decimal) -> str:
    t = format(d.normalize(), "f")
    return t


def format_designation(d: Designation) -> str:
    """Canonical text of a designation; ``parse_designation`` reads it back unchanged.

    Examples
    --------
    >>> format_designation(parse_designation('1/4 - 20  unc - 2a'))
    '1/4-20 UNC-2A'
    """
    if not isinstance(d, Designation):
        raise TypeError("d must be a Designation")
    if d.family == "metric":
        if d.lead is not None:
            core = f"M{d.size}xPh{_num_text(d.lead)}P{_num_text(d.pitch)}"
        else:
            core = f"M{d.size}" + (f"x{_num_text(d.pitch)}" if d.pitch is not None else "")
    elif d.family == "trapezoidal":
        if d.lead is not None:
            core = f"Tr{d.size}x{_num_text(d.lead)}(P{_num_text(d.pitch)})"
        else:
            core = f"Tr{d.size}x{_num_text(d.pitch)}"
    elif d.family == "ba":
        core = f"{d.size}BA"
    else:
        size = ("#" + d.size) if d.number_size and d.tpi is not None and not _auto_number(d) \
            else d.size
        tpi = f"-{_num_text(d.tpi)}" if d.tpi is not None else ""
        core = f"{size}{tpi} {d.series}"
    parts = [core]
    if d.thread_class:
        parts.append(d.thread_class)
    if d.internal is True:
        parts.append("INT")
    elif d.internal is False:
        parts.append("EXT")
    if d.left_hand:
        parts.append("LH")
    if d.starts > 1 and d.lead is None:
        parts.append(f"{d.starts}START")
    return "-".join(parts)


def _auto_number(d: Designation) -> bool:
    """True when the bare integer is read as a number size without '#'."""
    n = int(d.size)
    return n == 0 or (n in (1, 2) and d.tpi >= 48) or (3 <= n <= 12 and d.tpi >= 24)
