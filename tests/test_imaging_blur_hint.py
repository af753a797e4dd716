"""find_edges with the blur expected from the calibration (``blur_px``).

Check values: a disc rendered here from exact geometry (radius 35.0 px, an erf edge profile
of sigma 1.2 px across the rim, each pixel the mean of 8 x 8 point samples), whose 50 % level
lies on the circle r = 35.0 px by construction (analytic geometry); the hint must not change
what is found, only skip the pilot fit.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.special import ndtr

from profilecheck.imaging import find_edges, fit_circle

R_PX, SIGMA_PX, CX, CY = 35.0, 1.2, 80.3, 60.7


def _disc():
    g = (np.arange(8) + 0.5) / 8 - 0.5
    rows, cols = np.mgrid[0:120, 0:160].astype(float)
    acc = np.zeros_like(rows)
    for dy in g:
        for dx in g:
            r = np.hypot(cols + dx - CX, rows + dy - CY)
            acc += 0.1 + 0.7 * ndtr((r - R_PX) / SIGMA_PX)   # dark disc, bright field
    return acc / 64


def test_right_hint_finds_the_same_edge():
    img = _disc()
    plain = find_edges(img)
    hinted = find_edges(img, blur_px=SIGMA_PX)
    assert len(hinted.xy) == len(plain.xy) > 150
    # windows from the hint instead of the pilot's estimate: the same points to well under
    # the noise-free fit's own precision
    assert np.max(np.abs(hinted.xy - plain.xy)) < 1e-3
    c = fit_circle(hinted.xy)
    assert c.radius == pytest.approx(R_PX, abs=0.01)
    assert np.hypot(c.centre[0] - CX, c.centre[1] - CY) < 0.01


def test_wrong_hint_falls_back_to_measuring_the_blur():
    img = _disc()
    plain = find_edges(img)
    wrong = find_edges(img, blur_px=3.0 * SIGMA_PX)
    assert len(wrong.xy) == len(plain.xy)
    assert np.max(np.abs(wrong.xy - plain.xy)) < 1e-9
    assert wrong.blur_px == pytest.approx(plain.blur_px)


@pytest.mark.parametrize("bad, err", [(0.0, ValueError), (-1.0, ValueError),
                                      (float("nan"), ValueError), ("1.2", TypeError),
                                      (True, TypeError)])
def test_bad_hint_is_refused(bad, err):
    with pytest.raises(err, match="blur_px"):
        find_edges(_disc(), blur_px=bad)
