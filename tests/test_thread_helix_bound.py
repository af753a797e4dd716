"""One edge in view and no spec: the helix correction is bounded, and U covers its error.

Truth: ISO 68-1 basic profile of M3x0.5 (flanks 30 deg, crest flat P/8, root flat P/4,
depth 5H/8; ../shared/standards-notes.md section 1). Seen square to the axis the helix
makes the flanks read wide by about 0.13 deg for M3x0.5 (standards-notes section 9,
vision-notes section 5 table), and the flats shift with the flank lines. Without the
diameter the correction is only bounded (its value at the smallest usual diameter, 4 P);
half is applied and half is a rectangular term of the budget.
Render: profilecheck.synth (true helicoid envelope, parallel view).
"""

import numpy as np
import pytest

from profilecheck.calibration import Calibration
from profilecheck.measure import measure_thread
from profilecheck.synth import Camera, axial_profile_iso, render_thread

P, D = 0.5, 3.0
H = np.sqrt(3.0) / 2.0 * P
S, SIZE = 0.00375, (640, 240)


@pytest.fixture(scope="module")
def one_edge():
    cam = Camera(S, SIZE, rotation_deg=0.4, centre_mm=(0.03, D / 2 - 0.15))
    img, _ = render_thread(cam, profile=axial_profile_iso(P, D), thread_length_mm=3.6,
                           x_start_mm=-1.8, blur_px=1.2, noise=2.0, dark=28, bright=225,
                           seed=7)
    img = img.astype(float) / 255.0
    return img, Calibration(S, 1e-7, SIZE, blur_px=1.2)


def test_bounded_correction_and_u_covers_error(one_edge):
    img, cal = one_edge
    r = measure_thread(img, cal)
    assert r.both_edges is False and "pitch_diameter" not in r.measurements
    assert r.helix["bounded"] is True
    assert any("diameter is unknown" in w for w in r.warnings)
    m = r.measurements
    truth = {"flank_left": 30.0, "flank_right": 30.0, "crest_flat": P / 8, "root_flat": P / 4,
             "depth": 5 * H / 8}
    for key, t in truth.items():
        assert abs(m[key].value - t) <= m[key].u, (key, m[key].value, m[key].u)
    # the midpoint of [0, full correction] lands within 0.1 deg here (M3x0.5 is d/P = 6)
    assert m["flank_left"].value == pytest.approx(30.0, abs=0.1)
    assert m["flank_right"].value == pytest.approx(30.0, abs=0.1)
    # pitch is not moved by the helix (standards-notes section 9)
    assert m["pitch"].value == pytest.approx(P, abs=0.0005)


def test_bound_is_between_uncorrected_and_spec_correction(one_edge):
    img, cal = one_edge
    m = measure_thread(img, cal).measurements
    with_spec = measure_thread(img, cal, spec="M3x0.5-6g").measurements
    # the spec gives d2 = 2.675 mm (> the 4 P bound), so the spec's correction is smaller
    # than the bound; the bounded reading's U still reaches the spec-corrected value
    for key in ("flank_left", "flank_right", "crest_flat", "root_flat"):
        assert abs(m[key].value - with_spec[key].value) <= m[key].u, key
        assert m[key].u > with_spec[key].u, key
