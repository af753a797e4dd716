"""Unified inch series: threads per inch of UNC, UNF and UNEF per size (ASME B1.1 Table 1).

Provenance: from memory [M] (standards-notes §3 tags the series lists [P 11][P 12][M]);
the rows used in tests (1/4, 1/2, 2-1/2, 0, 2, 10) agree with the published rows the
notes quote. Keys are basic major diameters in inches as exact decimal strings.
"""

from __future__ import annotations

from decimal import Decimal

__all__ = ["SERIES_TPI", "CONSTANT_PITCH_TPI", "tpi_of"]

# size (in) : (UNC, UNF, UNEF); None where the series has no thread for the size.
_ROWS: dict[str, tuple[int | float | None, int | None, int | None]] = {
    "0.060": (None, 80, None),   # 0
    "0.073": (64, 72, None),     # 1
    "0.086": (56, 64, None),     # 2
    "0.099": (48, 56, None),     # 3
    "0.112": (40, 48, None),     # 4
    "0.125": (40, 44, None),     # 5
    "0.138": (32, 40, None),     # 6
    "0.164": (32, 36, None),     # 8
    "0.190": (24, 32, None),     # 10
    "0.216": (24, 28, 32),       # 12
    "0.25": (20, 28, 32),
    "0.3125": (18, 24, 32),
    "0.375": (16, 24, 32),
    "0.4375": (14, 20, 28),
    "0.5": (13, 20, 28),
    "0.5625": (12, 18, 24),
    "0.625": (11, 18, 24),
    "0.6875": (None, None, 24),
    "0.75": (10, 16, 20),
    "0.8125": (None, None, 20),
    "0.875": (9, 14, 20),
    "0.9375": (None, None, 20),
    "1": (8, 12, 20),
    "1.0625": (None, None, 18),
    "1.125": (7, 12, 18),
    "1.1875": (None, None, 18),
    "1.25": (7, 12, 18),
    "1.3125": (None, None, 18),
    "1.375": (6, 12, 18),
    "1.4375": (None, None, 18),
    "1.5": (6, 12, 18),
    "1.5625": (None, None, 18),
    "1.625": (None, None, 18),
    "1.6875": (None, None, 18),
    "1.75": (5, None, None),
    "2": (4.5, None, None),
    "2.25": (4.5, None, None),
    "2.5": (4, None, None),
    "2.75": (4, None, None),
    "3": (4, None, None),
    "3.25": (4, None, None),
    "3.5": (4, None, None),
    "3.75": (4, None, None),
    "4": (4, None, None),
}

SERIES_TPI: dict[Decimal, dict[str, Decimal]] = {}
for _k, _row in _ROWS.items():
    SERIES_TPI[Decimal(_k).normalize()] = {
        name: Decimal(str(v)) for name, v in zip(("UNC", "UNF", "UNEF"), _row) if v is not None}

#: Constant-pitch series (ASME B1.1): 4-, 6-, 8-, 12-, 16-, 20-, 28-, 32-UN.
CONSTANT_PITCH_TPI = tuple(Decimal(n) for n in (4, 6, 8, 12, 16, 20, 28, 32))


def tpi_of(diameter_in: Decimal, series: str) -> Decimal | None:
    """Threads per inch of a graded series (UNC/UNF/UNEF) for a size, or None."""
    return SERIES_TPI.get(diameter_in.normalize(), {}).get(series)
