"""Threaded parts rendered with their truth: axial-section values, apparent outline values,
chip, run-out and chamfer."""

import numpy as np
import pytest

from profilecheck.synth import Camera, render_thread


def test_render_thread_truth():
    # Truth dict carries the axial-section values (ISO 68-1) and the apparent outline
    # values, and the image shows the crest at the major diameter (helix leaves the crest
    # diameter unchanged, standards-notes s9).
    cam = Camera(0.01, (600, 1200))
    img, truth = render_thread(cam, pitch_mm=1.5, major_d_mm=10.0, thread_length_mm=5.0,
                               noise=0.0, blur_px=1.0, bit_depth=16, chamfer_mm=0.4)
    t = truth["thread"]
    assert t["pitch_d_mm"] == pytest.approx(10 - 0.649519 * 1.5, abs=1e-6)
    assert t["apparent_pitch_d_mm"] - t["pitch_d_mm"] == pytest.approx(0.038, abs=0.002)
    assert t["lead_angle_deg"] == pytest.approx(3.03, abs=0.01)   # vision-notes s5 table
    up = np.array(t["outline_mm"]["upper"])
    assert up[:, 1].max() == pytest.approx(5.0, abs=1e-12)
    # image: column through a crest centre is dark from y = -5 to +... at 0.01 mm/px
    lv = truth["levels"]
    frac = (lv["bright"] - img.astype(float)) / (lv["bright"] - lv["dark"])
    assert frac.shape == (1200, 600)
    dark_rows = frac[:, 300].sum()  # the column crosses both limbs
    assert 836 < dark_rows < 1001   # between the minor and major diameters in px



def test_chip_runout_and_chamfer_in_outline():
    # Construction rules (render_thread docstring): a chip cuts the upper outline to
    # r_major - depth over its width; the run-out ramp reaches the minor radius at its end;
    # a 45 deg chamfer of 0.4 mm leaves r_major - 0.4 at the end face.
    cam = Camera(0.05, (40, 40))
    img, t = render_thread(cam, pitch_mm=1.0, major_d_mm=6.0, thread_length_mm=4.0, x_start_mm=0.0,
                           chip={"x_mm": 3.0, "width_mm": 0.6, "depth_mm": 0.2}, runout_mm=1.5,
                           chamfer_mm=0.4, noise=0.0)
    up = np.array(t["thread"]["outline_mm"]["upper"])
    inside = (up[:, 0] > 2.75) & (up[:, 0] < 3.25)
    assert up[inside, 1].max() == pytest.approx(3.0 - 0.2, abs=1e-12)
    assert up[-1, 0] == pytest.approx(4.0) and up[-1, 1] <= 3.0 - 0.4 + 1e-12
    early = up[up[:, 0] < 0.05]
    assert early[:, 1].min() > 3.0 - 0.05 * (3.0 - t["thread"]["minor_d_mm"] / 2) / 1.5 - 1e-9


def test_pitch_error_kept_in_truth():
    # A part cut with the wrong pitch: the truth keeps nominal and actual; the outline's
    # crest spacing is the actual pitch (standards-notes s9: pitch unaffected by the helix).
    cam = Camera(0.05, (40, 40))
    img, t = render_thread(cam, pitch_mm=1.0, major_d_mm=6.0, thread_length_mm=4.0,
                           pitch_error_mm=0.01, noise=0.0)
    th = t["thread"]
    assert th["nominal_pitch_mm"] == 1.0 and th["pitch_mm"] == pytest.approx(1.01)
    # line fits on sampled (slightly curved) apparent flanks: spacing good to 1 nm
    assert th["apparent"]["upper"]["pitch_mm"] == pytest.approx(1.01, abs=1e-6)


def test_chamfer_cap_matches_brute_force():
    # Brute force (square view): with a turned 45 deg chamfer C(x) the solid is
    # r <= min(R(x - a phi), C(x)) and the outline height is max over phi of
    # cos(phi) min(R(x - a phi), C(x)), sampled at 1e5 angles (sampling error
    # <= a max|R'| dphi / 2 = 2.5e-6 mm for M10x1.5, the stated tolerance with margin 3e-6).
    import math

    from profilecheck.synth import axial_profile_iso
    from profilecheck.synth._helix import envelope

    prof = axial_profile_iso(1.5, 10.0)
    a = 1.5 / (2 * math.pi)
    end, ch = 6.0, 0.6

    def cap(x):
        return (5.0 - ch) + (end - np.asarray(x))

    xs = np.linspace(end - ch + 0.01, end - 0.001, 30)
    phi = np.linspace(-0.6, 0.6, 100_001)
    brute = np.array([np.max(np.cos(phi) * np.minimum(prof.radius(x - a * phi), cap(x))) for x in xs])
    exact = envelope(prof, a, 0.0, xs, cap=cap)
    assert np.all(brute <= exact + 1e-9)
    np.testing.assert_allclose(exact, brute, rtol=0, atol=3e-6)
