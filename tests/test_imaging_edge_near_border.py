"""A silhouette edge running 0-8 px from the image border, tilted (a pin gauge filling the frame).

Truth: analytic geometry of ``tests/_independent_render.py`` (3 um/px telecentric view, pin
D = 1.000 mm = 333.3 px, axis at 1 deg, view centre 0.03 mm above the axis, so the pin sits
10 px low): bottom side at row 356.19 - (col - 239.5) tan 1 deg, i.e. 352.0 px at the right
edge of the frame and 360.4 px (outside) at the left; top side 22.8 +/- 4.2 px. The bright
strip below the bottom side is narrower than the background fit's 10 px clearance. Target:
pin scale within 0.05 % (project target, common practice, no source).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import _independent_render as R
import profilecheck as pc
from profilecheck.imaging import find_edges
from profilecheck.imaging.silhouette import flatten_backlight

S, SIZE, D_MM, TILT_DEG, CENTRE_Y_MM = 0.003, (480, 360), 1.0, 1.0, 0.03


@pytest.fixture(scope="module")
def img():
    return R.as_float(R.render([R.pin_polygon(D_MM, axis_angle_deg=TILT_DEG)],
                               R.View(S, SIZE, centre_mm=(0.0, CENTRE_Y_MM)), blur_px=1.2,
                               vignetting=0.15, seed=1))


def _side_row(col, sign):
    # analytic geometry: axis row 179.5 + 10 at the centre column 239.5, falling tan(1 deg)
    # per column to the right; each side r / cos(tilt) above (-) or below (+) it
    t = math.tan(math.radians(TILT_DEG))
    r_px = D_MM / S / 2
    return (SIZE[1] - 1) / 2 + CENTRE_Y_MM / S - (col - (SIZE[0] - 1) / 2) * t \
        + sign * r_px / math.cos(math.radians(TILT_DEG))


def test_bright_strip_at_the_border_stays_bright(img):
    sil = flatten_backlight(img)
    # columns 300-479: the bottom side at rows 352.0-355.1, the strip below it 5-8 px wide
    # (analytic geometry); the last row is field there, well above the 50 % level
    assert np.median(sil.flat[-1, 300:]) > 0.6


def test_edge_close_to_the_border_is_kept_and_unbiased(img):
    e = find_edges(img)
    x, y = e.xy.T
    low = y > SIZE[1] / 2
    # the bottom side is found wherever its profile fits in the frame (rows <= ~356.5 px,
    # cols >= ~220): at least 200 columns of it
    assert low.sum() >= 150
    assert np.ptp(x[low]) >= 200
    d = y[low] - _side_row(x[low], +1)
    z = d / e.std_px[low]
    # no bias beyond the noise (3 standard errors of the mean, plus 0.01 px rendering)
    assert abs(d.mean()) <= 3 * d.std() / math.sqrt(len(d)) + 0.01
    # each point's stated std matches its scatter (chi-square, ~250 points)
    assert 0.7 < math.sqrt(np.mean(z ** 2)) < 1.4
    # the top side is complete: one point per column
    assert (~low).sum() >= 0.9 * SIZE[0]


def test_pin_close_to_the_border_calibrates(img):
    cal = pc.calibrate_from_pin(img, D_MM)
    assert cal.mm_per_px / S == pytest.approx(1.0, abs=5e-4)
    assert abs(cal.mm_per_px - S) <= cal.u_mm_per_px + 5e-4 * S
