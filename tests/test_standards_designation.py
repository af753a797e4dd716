"""Designation grammar: the forms users write, round trips, and one-line errors.

Designation syntax follows the standards' own marking (ASME B1.1 §4 style
``1/4-20 UNC-2A``, ISO 965-1 ``M6x1-6g``, ISO 2904 ``Tr20x4``) plus our documented
additions (``-nSTART``, ``-INT``); the numbers checked are the standards' own: number sizes
D = 0.060 + 0.013 N (ASME B1.1, standards-notes §3).
"""

from decimal import Decimal

import pytest
from hypothesis import given, settings, strategies as st

from profilecheck.errors import SpecError
from profilecheck.standards import format_designation, parse_designation, thread_spec
from profilecheck.standards._iso_tables import COARSE_PITCH
from profilecheck.standards._unified_tables import SERIES_TPI


@pytest.mark.parametrize("text,family,diameter,tpi,pitch,cls,starts,lh", [
    ("1/4-20 UNC-2A", "unified", "0.25", "20", None, "2A", 1, False),
    ("1/4-40 UNS-2A", "unified", "0.25", "40", None, "2A", 1, False),
    ("10-32 UNF-2B", "unified", "0.190", "32", None, "2B", 1, False),
    ("#1-64 UNC-2A", "unified", "0.073", "64", None, "2A", 1, False),
    ("1-8 UNC-2A", "unified", "1", "8", None, "2A", 1, False),          # one inch, not #1
    ("1-1/2-6 UNC-2A", "unified", "1.5", "6", None, "2A", 1, False),
    ("1 1/2-6 UNC-2A", "unified", "1.5", "6", None, "2A", 1, False),
    ("2½-4 UNC-2A", "unified", "2.5", "4", None, "2A", 1, False),
    ("2-1/2-8 8UN-2A", "unified", "2.5", "8", None, "2A", 1, False),
    ("1/2-13 UNC-2A-LH", "unified", "0.5", "13", None, "2A", 1, True),
    ("1/2-13 UNC-2A-2START", "unified", "0.5", "13", None, "2A", 2, False),
    ("1/2-13 UNC-2A (3 STARTS)", "unified", "0.5", "13", None, "2A", 3, False),
    ("M6x1-6g", "metric", "6", None, "1", "6g", 1, False),
    ("M8-6H", "metric", "8", None, None, "6H", 1, False),
    ("m10 x 1.25 - 5g6g - lh", "metric", "10", None, "1.25", "5g6g", 1, True),
    ("M16xPh3P1.5-6g", "metric", "16", None, "1.5", "6g", 2, False),
    ("1/4 BSW", "whitworth", "0.25", None, None, "", 1, False),
    ("3/16-40 ME", "whitworth", "0.1875", "40", None, "", 1, False),
    ("4BA", "ba", "4", None, None, "", 1, False),
    ("1/2-10 ACME-2G", "acme", "0.5", "10", None, "2G", 1, False),
    ("Tr20x4-7e", "trapezoidal", "20", None, "4", "7e", 1, False),
    ("Tr20x8(P4)-LH", "trapezoidal", "20", None, "4", "", 2, True),
])
def test_parse_examples(text, family, diameter, tpi, pitch, cls, starts, lh):
    d = parse_designation(text)
    assert d.family == family
    assert d.diameter == Decimal(diameter)
    assert d.tpi == (Decimal(tpi) if tpi else None)
    assert d.pitch == (Decimal(pitch) if pitch else None)
    assert (d.thread_class, d.starts, d.left_hand) == (cls, starts, lh)
    assert parse_designation(format_designation(d)) == d


def test_asme_pitch_lead_marking():
    # ASME B1.1 multi-start marking gives pitch and lead in inches; L = starts x P
    d = parse_designation("0.750-0.0625P-0.1875L(3 STARTS)-UNF-2A")
    assert (d.tpi, d.starts, d.diameter) == (Decimal(16), 3, Decimal("0.750"))
    assert thread_spec("1/2-0.0769P-0.1538L UNC-2A").lead_mm == pytest.approx(2 * 25.4 / 13)
    for bad in ("1/2-0.07P-0.14L UNC-2A",                 # 1/P = 14.29 tpi
                "1/2-0.0769P-0.1000L UNC-2A",             # lead not a multiple of P
                "1/2-0.0769P-0.1538L(3 STARTS) UNC-2A"):  # disagrees with L/P = 2
        with pytest.raises(SpecError):
            parse_designation(bad)


def test_number_sizes():
    # ASME B1.1: D = 0.060 + 0.013 N
    for n in range(13):
        t = {0: 80, 1: 64, 2: 56, 3: 48, 4: 40, 5: 40, 6: 32, 8: 32, 10: 24, 12: 24}.get(n)
        if t is None:
            continue
        d = parse_designation(f"{n}-{t} UNS-2A")
        assert d.number_size and d.diameter == Decimal("0.060") + Decimal("0.013") * n


def test_spec_designation_is_canonical():
    assert thread_spec("1/4 - 20  unc - 2a").designation == "1/4-20 UNC-2A"
    assert thread_spec("M8").designation == "M8-6g"
    assert thread_spec("1/4-20 UNC").thread_class == "2A"


_UN = sorted((D, s, t) for D, row in SERIES_TPI.items() for s, t in row.items())


def _fmt_size(D: Decimal) -> str:
    n = (D - Decimal("0.060")) / Decimal("0.013")
    if D < Decimal("0.25") and n == n.to_integral_value():
        return str(int(n))
    whole, frac = divmod(D, 1)
    if frac == 0:
        return str(int(whole))
    num = int(frac * 64)
    den = 64
    while num % 2 == 0:
        num //= 2
        den //= 2
    return f"{int(whole)}-{num}/{den}" if whole else f"{num}/{den}"


@settings(max_examples=100, deadline=None)
@given(row=st.sampled_from(_UN), cls=st.sampled_from(["1A", "2A", "3A", "1B", "2B", "3B", ""]),
       lh=st.booleans(), starts=st.integers(1, 4), unr=st.booleans(), sep=st.sampled_from(["-", " "]))
def test_unified_round_trip(row, cls, lh, starts, unr, sep):
    D, series, tpi = row
    if unr:
        series = series.replace("UN", "UNR")
    text = f"{_fmt_size(D)}-{tpi.normalize():f} {series}"
    text += f"-{cls}" if cls else ""
    text += f"{sep}LH" if lh else ""
    text += f"-{starts}START" if starts > 1 else ""
    d = parse_designation(text)
    assert d.diameter == D and d.tpi == tpi and d.starts == starts and d.left_hand == lh
    assert parse_designation(format_designation(d)) == d


@settings(max_examples=100, deadline=None)
@given(dp=st.sampled_from(sorted(COARSE_PITCH.items())), give_pitch=st.booleans(),
       cls=st.sampled_from(["", "6g", "6H", "4h", "5g6g", "7G", "6e"]), lh=st.booleans(),
       starts=st.integers(1, 3))
def test_metric_round_trip(dp, give_pitch, cls, lh, starts):
    d_mm, p = dp
    text = f"M{d_mm:g}"
    if starts > 1:
        text += f"xPh{p * starts:g}P{p:g}"
    elif give_pitch:
        text += f"x{p:g}"
    text += (f"-{cls}" if cls else "") + ("-LH" if lh else "")
    d = parse_designation(text)
    assert d.starts == starts
    assert parse_designation(format_designation(d)) == d
    assert format_designation(parse_designation(format_designation(d))) == format_designation(d)


@pytest.mark.parametrize("text", ["", "   ", "hello", "1/4-20", "M", "M6x", "Tr20", "1/0-20 UNS",
                                  "1/4-20 XYZ-2A", "M6xPh2.5P1-6g", "14-20 #UNC"])
def test_unreadable_designations(text):
    with pytest.raises(SpecError) as e:
        thread_spec(text)
    msg = str(e.value)
    assert "\n" not in msg and ("e.g." in msg or "examples" in msg)


def test_type_errors():
    with pytest.raises(TypeError, match="designation"):
        parse_designation(6)
    with pytest.raises(TypeError):
        thread_spec(None)


_ALPHABET = "0123456789/-. xXPhLMTrUNCFESRAB#()½GHegfhINTSTARTBWM"


@settings(max_examples=300, deadline=None)
@given(text=st.text(alphabet=_ALPHABET, max_size=24))
def test_any_text_gives_a_spec_or_a_spec_error(text):
    # bad input must end as one-line SpecError (exit 2), never another exception
    try:
        s = thread_spec(text)
    except SpecError as e:
        assert "\n" not in str(e)
    else:
        assert s.pitch_mm > 0 and s.major_diameter_mm > s.minor_diameter_mm > 0


@pytest.mark.parametrize("text, canonical", [
    # the canonical forms: ASME B1.1 clause 4 (number sizes with '#'), ISO 965-1 clause 4
    # (left hand designated 'LH' after the tolerance class); the spellings are shop-floor
    # usage (common practice, no source)
    ("No. 10-32 UNF-2A", "10-32 UNF-2A"),
    ("no 4-40 UNC-2A", "4-40 UNC-2A"),
    ('1/4"-20 UNC-2A', "1/4-20 UNC-2A"),
    ('1-1/2" -6 UNC-2A', "1-1/2-6 UNC-2A"),
    ("M8x1.25LH-6g", "M8x1.25-6g-LH"),
    ("M8x1.25 LH-6g", "M8x1.25-6g-LH"),
    ("M8x1.25-LH-6g", "M8x1.25-6g-LH"),
    ("Tr20x4 LH-7e", "Tr20x4-7e-LH"),
    ("M6x1 6g", "M6x1-6g"),
    ("M10x1.25 6H", "M10x1.25-6H"),
    ("1/4-20 UNC 2A", "1/4-20 UNC-2A"),
    ("1/4-20UNC2A", "1/4-20 UNC-2A"),
    ("3/8-24 UNF 3B LH", "3/8-24 UNF-3B-LH"),
    ("1/4-20 UNRC 2A", "1/4-20 UNRC-2A"),
])
def test_shop_floor_spellings(text, canonical):
    from profilecheck.standards import thread_spec
    spec = thread_spec(text)
    assert spec.designation == canonical
    assert spec.left_hand == canonical.endswith("LH")
