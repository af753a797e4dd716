"""ISO 965-1 tolerance tables (µm) and ISO 261 coarse pitches (mm).

Provenance per entry (tags of standards-notes): values confirmed by a published chart
row are marked P5 / P6 (via standards-notes §11); the rest are from memory [M] and were
cross-checked against the formulas (standards-notes §2) where those agree. Anything not
in these tables is computed from the ISO 965-1 formulas and reported 'formula-derived'.
"""

from __future__ import annotations

__all__ = ["COARSE_PITCH", "ES_G_UM", "TD_6_UM", "TD2_6_UM", "TD2_INT_6_UM", "TD1_6_UM",
           "DIAMETER_RANGES", "ENGAGEMENT_N_MM"]

#: ISO 261 coarse pitch per nominal diameter, mm (standards-notes §1 [C 2][P 7]; sizes
#: not listed there [M]).
COARSE_PITCH: dict[float, float] = {
    1.0: 0.25, 1.2: 0.25, 1.4: 0.3, 1.6: 0.35, 1.8: 0.35, 2.0: 0.4, 2.2: 0.45, 2.5: 0.45,
    3.0: 0.5, 3.5: 0.6, 4.0: 0.7, 4.5: 0.75, 5.0: 0.8, 6.0: 1.0, 7.0: 1.0, 8.0: 1.25,
    9.0: 1.25, 10.0: 1.5, 11.0: 1.5, 12.0: 1.75, 14.0: 2.0, 16.0: 2.0, 18.0: 2.5,
    20.0: 2.5, 22.0: 2.5, 24.0: 3.0, 27.0: 3.0, 30.0: 3.5, 33.0: 3.5, 36.0: 4.0,
    39.0: 4.0, 42.0: 4.5, 45.0: 4.5, 48.0: 5.0, 52.0: 5.0, 56.0: 5.5, 60.0: 5.5,
    64.0: 6.0, 68.0: 6.0,
}

#: Fundamental deviation g (magnitude, µm) per pitch, ISO 965-1 Table 1 (standards-notes §2
#: [C 2], consistent with the published chart rows [P 5]). G is the same with + sign.
ES_G_UM: dict[float, int] = {
    0.2: 17, 0.25: 18, 0.3: 18, 0.35: 19, 0.4: 19, 0.45: 20, 0.5: 20, 0.6: 21, 0.7: 22,
    0.75: 22, 0.8: 24, 1.0: 26, 1.25: 28, 1.5: 32, 1.75: 34, 2.0: 38, 2.5: 42, 3.0: 48,
    3.5: 53, 4.0: 60, 4.5: 63, 5.0: 71, 5.5: 75, 6.0: 80, 8.0: 100,
}

#: Td grade 6 (external major), µm, per pitch, ISO 965-1 Table 3.
#: P5-confirmed: 0.5 (106), 0.7 (140), 0.8 (150), 1 (180), 1.25 (212), 1.5 (236); rest [M].
TD_6_UM: dict[float, int] = {
    0.2: 56, 0.25: 67, 0.3: 75, 0.35: 85, 0.4: 95, 0.45: 100, 0.5: 106, 0.6: 125,
    0.7: 140, 0.75: 140, 0.8: 150, 1.0: 180, 1.25: 212, 1.5: 236, 1.75: 265, 2.0: 280,
    2.5: 335, 3.0: 375, 3.5: 425, 4.0: 475, 4.5: 500, 5.0: 530, 5.5: 560, 6.0: 600,
}

#: Basic-diameter ranges of ISO 965-1 (mm): (over, up to and including).
DIAMETER_RANGES = ((0.99, 1.4), (1.4, 2.8), (2.8, 5.6), (5.6, 11.2), (11.2, 22.4),
                   (22.4, 45.0), (45.0, 90.0), (90.0, 180.0), (180.0, 355.0))

#: Td2 grade 6 (external pitch), µm: {range index: {pitch: value}}, ISO 965-1 Table 4.
#: P5-confirmed: (2.8-5.6) 0.5 -> 75, 0.7 -> 90, 0.8 -> 95; (5.6-11.2) 1 -> 112,
#: 1.25 -> 118, 1.5 -> 132; rest [M].
TD2_6_UM: dict[int, dict[float, int]] = {
    1: {0.35: 63, 0.4: 67, 0.45: 71},
    2: {0.35: 67, 0.5: 75, 0.6: 85, 0.7: 90, 0.75: 90, 0.8: 95},
    3: {0.75: 100, 1.0: 112, 1.25: 118, 1.5: 132},
    4: {1.0: 118, 1.25: 132, 1.5: 140, 1.75: 150, 2.0: 160, 2.5: 170},
    5: {1.0: 125, 1.5: 150, 2.0: 170, 3.0: 200, 3.5: 212, 4.0: 224, 4.5: 236},
}

#: TD2 grade 6 (internal pitch), µm, ISO 965-1 Table 5. P6-confirmed: (5.6-11.2) 1 -> 150,
#: 1.5 -> 180; (11.2-22.4) 1.25 -> 180, 1.5 -> 190, 1.75 -> 200; rest [M]
#: ((2.8-5.6) 0.5 -> 100 [M], standards-notes §12.1).
TD2_INT_6_UM: dict[int, dict[float, int]] = {
    1: {0.35: 85, 0.4: 90, 0.45: 95},
    2: {0.5: 100, 0.6: 112, 0.7: 118, 0.75: 118, 0.8: 125},
    3: {0.75: 132, 1.0: 150, 1.25: 160, 1.5: 180},
    4: {1.0: 160, 1.25: 180, 1.5: 190, 1.75: 200, 2.0: 212, 2.5: 224},
    5: {1.0: 170, 1.5: 200, 2.0: 224, 3.0: 265, 3.5: 280, 4.0: 300, 4.5: 315},
}

#: TD1 grade 6 (internal minor), µm, per pitch, ISO 965-1 Table 2. P6-confirmed: 0.5 -> 140,
#: 1 -> 236, 1.5 -> 300, 1.75 -> 335; rest [M].
TD1_6_UM: dict[float, int] = {
    0.35: 100, 0.4: 112, 0.45: 125, 0.5: 140, 0.6: 160, 0.7: 180, 0.75: 190, 0.8: 200,
    1.0: 236, 1.25: 265, 1.5: 300, 1.75: 335, 2.0: 375, 2.5: 450, 3.0: 500, 3.5: 560,
    4.0: 600, 4.5: 670, 5.0: 710, 5.5: 750, 6.0: 800,
}

#: Normal length of engagement N (min, max) in mm by (diameter-range index, pitch),
#: ISO 965-1 Table 2 rows quoted in standards-notes §2 [C 2] (consistent with [M]).
ENGAGEMENT_N_MM: dict[tuple[int, float], tuple[float, float]] = {
    (2, 0.5): (1.5, 4.5), (2, 0.7): (2.0, 6.0), (2, 0.8): (2.5, 7.5),
    (3, 1.0): (3.0, 9.0), (3, 1.25): (4.0, 12.0), (3, 1.5): (5.0, 15.0),
    (4, 1.75): (6.0, 18.0), (4, 2.0): (8.0, 24.0), (4, 2.5): (10.0, 30.0),
}
