"""A pin gauge nearly filling the frame: its sides 6-20 px from the image border.

Truth: the scale of ``tests/_independent_render.py`` (3 um/px) and the pin's diameter
(1.000 mm, 333 px); the target is the pin-scale accuracy of 0.05 % (project target, common
practice, no source). Each side's edge profile (about +/-7 px at 1.2 px blur) fits inside
the frame, so the pin must be measured.
"""

from __future__ import annotations

import pytest

import _independent_render as R
import profilecheck as pc

S, SIZE, D_MM = 0.003, (480, 360), 1.0


def test_pin_close_to_the_border_is_measured():
    # view centre 0.01 mm above the pin's axis: the pin sits 3.3 px low; sides at 16.2 and
    # 349.5 px +/- 4.2 px (1 deg tilt over 480 px), i.e. 12-20 px from the top border and
    # 6-14 px from the bottom one (analytic geometry)
    centre_y_mm = 0.01
    img = R.render([R.pin_polygon(D_MM, axis_angle_deg=1.0)],
                   R.View(S, SIZE, centre_mm=(0.0, centre_y_mm)), blur_px=1.2,
                   vignetting=0.15, seed=1)
    cal = pc.calibrate_from_pin(R.as_float(img), D_MM)
    assert cal.mm_per_px / S == pytest.approx(1.0, abs=5e-4)
    assert abs(cal.mm_per_px - S) <= cal.u_mm_per_px + 5e-4 * S
