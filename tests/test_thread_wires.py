"""Virtual three-wire reading on measured profiles against the ASME B1.2 / NIST H28 formula.

Formula (standards-notes section 4, lead angle neglected, any symmetric form):
E = M + (P/2) cot(theta) - w (1 + csc(theta)), best wire w = P / (2 cos theta).
M6x1 at basic E 5.350481 with w 0.577350: M = 6.2165 mm; the lead-angle term of the exact
general formula is +1.5 um for M6x1 and +0.00011 in for 1/4-20 UNC (standards-notes
section 4 table and section 11).
"""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from profilecheck.measure._thread_profile import analyse_limb
from profilecheck.measure.wires import lead_term_mm, virtual_over_wire, wire_tops

from test_thread_profile import flat_profile, whitworth_profile


def _formula_m(E, P, half_deg, w):
    th = math.radians(half_deg)
    return E - 0.5 * P / math.tan(th) + w * (1 + 1 / math.sin(th))


def _limbs(P, half, d_major, n=7, shift_bottom=0.5):
    H = P / (2 * math.tan(math.radians(half)))
    y0 = d_major / 2 - 5 * H / 8
    top, _ = flat_profile(P, half, half, P / 8, P / 4, n, y0=y0)
    bot, _ = flat_profile(P, half, half, P / 8, P / 4, n, y0=y0, x0=shift_bottom * P)
    return analyse_limb(top, sigma_e_mm=0.002), analyse_limb(bot, sigma_e_mm=0.002)


def test_m6_basic_profile_over_best_wires():
    P = 1.0
    t, b = _limbs(P, 30, 6.0)
    w = P / (2 * math.cos(math.radians(30)))
    m, std, n, ok = virtual_over_wire(t, b, w)
    E = 6.0 - 0.649519 * P  # ISO 68-1 basic d2
    assert_allclose(m, _formula_m(E, P, 30, w), atol=2e-4)
    assert_allclose(m, 6.2165, atol=3e-4)  # standards-notes section 11 (basic)
    assert ok and n >= 10


def test_best_wire_touches_at_pitch_line():
    # Best size touches the flanks at the pitch line (standards-notes section 4).
    P = 1.5
    t, _ = _limbs(P, 30, 10.0)
    w = P / (2 * math.cos(math.radians(30)))
    for c in wire_tops(t, w):
        assert_allclose(c.contact_y, [t.pitch_line_y, t.pitch_line_y], atol=3e-4)


def test_other_wire_sizes_follow_formula():
    # Wires between the H28 limits 0.505182P and 1.010363P still obey the formula.
    P = 1.25
    t, b = _limbs(P, 30, 8.0)
    E = 8.0 - 0.649519 * P
    for f in (0.56, 0.7, 0.9):
        m, _, _, ok = virtual_over_wire(t, b, f * P)
        assert_allclose(m, _formula_m(E, P, 30, f * P), atol=3e-4)


def test_whitworth_best_wire():
    # 55 deg: E = M - 3.16568 w + 0.960491 P (standards-notes section 4).
    P = 25.4 / 40
    top, depth, r = whitworth_profile(P, 6)
    drop = r * (1 - math.sin(math.radians(27.5)))
    kw = dict(sigma_e_mm=0.002, crest_drop_mm=drop, root_drop_mm=drop, radiused_crest=True,
              radiused_root=True)
    y0 = 2.0
    t = analyse_limb(top + [0, y0], **kw)
    b = analyse_limb(top + [P / 2, y0], **kw)
    w = 0.563691 * P
    m, _, _, ok = virtual_over_wire(t, b, w)
    E = 2 * y0 + 2 * (depth / 2)  # pitch line halfway up the Whitworth depth
    assert_allclose(m - 3.16568 * w + 0.960491 * P, E, atol=3e-4)
    assert ok


def test_lead_term_published_values():
    # M6x1 best wire at basic E: +1.5 um; 1/4-20 UNC: +0.00011 in (standards-notes 4, 11).
    th = math.radians(30)
    assert_allclose(lead_term_mm(0.57735, th, math.atan(1 / (math.pi * 5.3505))), 0.0015,
                    atol=0.0001)
    e_in = 0.2175
    assert_allclose(lead_term_mm(0.02887, th, math.atan(0.05 / (math.pi * e_in))), 0.00011,
                    atol=0.00001)


def test_bad_wire():
    t, b = _limbs(1.0, 30, 6.0)
    with pytest.raises(ValueError, match="wire_mm"):
        virtual_over_wire(t, b, 0.0)
