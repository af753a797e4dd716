"""A gauge picture whose grey levels are gamma-encoded gets a note at calibration.

Pictures from the independent renderer (tests/_independent_render.py): a 2.2 mm pin at
5 um/px, blur 1.2 px, 15 % vignetting, the grey levels either linear or encoded as
code = linear ** (1 / 2.2) (an sRGB-like camera; vision-notes section 4 gives the edge
shift this causes, 0.81 sigma_e toward the dark side).
"""

from __future__ import annotations

import _independent_render as R
import pytest

from profilecheck.calibration import calibrate_from_pin

S_MM, SIZE, D_MM = 0.005, (640, 480), 2.2


def _pin(gamma: float):
    img = R.render([R.pin_polygon(D_MM, axis_angle_deg=2.0)], R.View(S_MM, SIZE), blur_px=1.2,
                   vignetting=0.15, gamma=gamma, seed=3)
    return R.as_float(img)


def _gamma_notes(cal):
    return [n for n in cal.notes if "camera gamma" in n]


def test_linear_picture_has_no_gamma_note():
    assert _gamma_notes(calibrate_from_pin(_pin(1.0), D_MM)) == []


def test_encoded_picture_is_noted_with_its_estimate():
    notes = _gamma_notes(calibrate_from_pin(_pin(2.2), D_MM))
    assert len(notes) == 1
    assert "--gamma 2." in notes[0]          # the estimate, rounded, is offered


def test_declared_gamma_silences_the_note():
    cal = calibrate_from_pin(_pin(2.2), D_MM, gamma=2.2)
    assert _gamma_notes(cal) == []
    # and the scale is right once the response is undone (analytic: the render's scale)
    assert cal.mm_per_px == pytest.approx(S_MM, rel=5e-4)
