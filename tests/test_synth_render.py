"""The renderer of known truth, checked against independent computations.

Reference values come from analytic geometry (shoelace area, the point symmetry of a
blurred straight edge, a Gaussian-blurred wedge) evaluated here by direct numerical
quadrature or Monte-Carlo sampling, and from OpenCV's ``projectPoints`` for the pinhole
camera: none of them reuses the renderer's scan-conversion.
"""

import math

import numpy as np
import pytest
from scipy.optimize import brentq
from scipy.special import ndtr

from profilecheck.synth import Camera, arc_points, render
from profilecheck.synth._raster import coverage

# Gauss-Legendre nodes over one pixel, for the independent pixel integral
_GL_X, _GL_W = np.polynomial.legendre.leggauss(24)
_GL_X = 0.5 * _GL_X
_GL_W = 0.5 * _GL_W


def _edge_pixel_value(d_px, theta, sigma):
    """Dark fraction of a pixel whose centre is at signed distance d (toward the bright
    side) from a straight edge with normal angle theta, blurred by sigma: direct 2-D
    quadrature over the pixel of Phi(-(d + s)/sigma) (analytic Gaussian edge spread)."""
    c, s = math.cos(theta), math.sin(theta)
    off = _GL_X[:, None] * c + _GL_X[None, :] * s
    wts = _GL_W[:, None] * _GL_W[None, :]
    d = np.asarray(d_px, dtype=float)[..., None, None]
    return np.sum(wts * ndtr(-(d + off) / sigma), axis=(-2, -1))


def _render16(polys_mm, cam, blur):
    img, truth = render(polys_mm, cam, blur_px=blur, noise=0.0, dark=30, bright=220,
                        bit_depth=16, seed=0)
    lv = truth["levels"]
    dark_frac = (lv["bright"] - img.astype(float)) / (lv["bright"] - lv["dark"])
    return dark_frac, truth


@pytest.mark.parametrize("angle_deg, offset_px", [
    (0.0, 0.0), (0.0, 0.25), (0.0, 0.5), (0.0, 0.137),      # exactly axis-aligned
    (90.0, 0.31), (3.0, 0.2), (17.0, 0.43), (45.0, 0.0), (-61.0, 0.77),
])
def test_straight_edge_50_percent_on_true_boundary(angle_deg, offset_px):
    # Truth: the edge line through (x0, y0) px with normal at angle_deg; the pixel-integrated
    # blurred step is point-symmetric about any point of the line, so its 50 % locus is the
    # line (analytic geometry). Bound 0.005 px: task requirement.
    w, h, sigma = 96, 80, 1.0
    cam = Camera(1.0, (w, h))  # 1 mm per px, world = px with y flipped
    th = math.radians(angle_deg)
    n = np.array([math.cos(th), math.sin(th)])        # image-frame normal, dark -> bright
    p0 = np.array([47.0 + offset_px, 40.0 + 0.5 * offset_px])
    t = np.array([-n[1], n[0]])
    big = 400.0
    corners_px = np.array([p0 + big * t, p0 + big * t - big * n, p0 - big * t - big * n, p0 - big * t])
    corners_mm = cam.px_to_world(corners_px)
    frac, _ = _render16([corners_mm], cam, sigma)
    yy, xx = np.mgrid[0:h, 0:w]
    d = (xx - p0[0]) * n[0] + (yy - p0[1]) * n[1]
    sel = (np.abs(d) < 3.0) & (xx > 8) & (xx < w - 8) & (yy > 8) & (yy < h - 8)
    obs = frac[sel]
    dd = d[sel]

    def resid(delta):
        return np.sum((obs - _edge_pixel_value(dd - delta, th, sigma)) *
                      np.exp(-0.5 * (dd - delta) ** 2))

    delta = brentq(resid, -0.2, 0.2, xtol=1e-7)
    assert abs(delta) < 0.005
    # and pixel by pixel the values follow the analytic edge spread
    assert np.max(np.abs(obs - _edge_pixel_value(dd, th, sigma))) < 1e-3


def test_coverage_integrates_to_polygon_area():
    # Truth: shoelace area of a non-convex polygon (analytic), with and without blur.
    star = []
    for k in range(10):
        r = 30.0 if k % 2 == 0 else 12.5
        a = math.radians(7 + 36 * k)
        star.append((64.3 + r * math.cos(a), 50.7 + r * math.sin(a)))
    star = np.array(star)
    x, y = star[:, 0], star[:, 1]
    area = 0.5 * abs(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))
    for sigma in (0.0, 0.7, 2.0):
        cov = coverage([star], (110, 130), sigma_px=sigma)
        assert cov.sum() == pytest.approx(area, abs=1e-6 * area + 1e-6)
    cam = Camera(0.01, (130, 110))
    frac, _ = _render16([cam.px_to_world(star)], cam, 1.3)
    assert frac.sum() == pytest.approx(area, abs=0.01)


def test_pixel_areas_exact_without_blur():
    # Truth: a rectangle cutting pixels at known fractions (analytic areas).
    rect = np.array([[10.2, 5.0], [20.7, 5.0], [20.7, 9.75], [10.2, 9.75]])  # px
    cov = coverage([rect], (16, 32), sigma_px=0.0)
    # pixel 10 covers x in [9.5, 10.5): 0.3 dark; 20 covers [19.5, 20.5) fully; 21 [20.5, 21.5): 0.2
    row = cov[7]
    assert row[10] == pytest.approx(0.3, abs=1e-12)
    assert row[15] == pytest.approx(1.0, abs=1e-12)
    assert row[20] == pytest.approx(1.0, abs=1e-12)
    assert row[21] == pytest.approx(0.2, abs=1e-12)
    # pixel row 4 covers y in [3.5, 4.5): untouched; row 5 covers [4.5, 5.5): half
    assert cov[4, 15] == pytest.approx(0.0, abs=1e-12)
    assert cov[5, 15] == pytest.approx(0.5, abs=1e-12)
    assert cov[9, 15] == pytest.approx(1.0, abs=1e-12)
    assert cov[10, 15] == pytest.approx(0.25, abs=1e-12)


def test_sharp_corner_is_not_rounded_beyond_blur():
    # Truth: for a dark 60 deg wedge, the dark fraction of the apex pixel equals
    # P(apex + pixel offset + Gaussian blur lands in the wedge), evaluated here by
    # Monte-Carlo with 4e6 samples (std error < 3e-4); for a rotationally symmetric blur
    # much wider than the pixel it tends to 60/360 (vision-notes section 1.2, [D]).
    sigma = 1.5
    apex = np.array([40.3, 30.6])
    half = math.radians(30.0)
    big = 200.0
    wedge = np.array([apex, apex + big * np.array([math.sin(half), 1.0 * math.cos(half)]),
                      apex + big * np.array([-math.sin(half), math.cos(half)])])  # opens +y (down)
    cov = coverage([wedge], (70, 80), sigma_px=sigma)
    rng = np.random.default_rng(11)
    n = 4_000_000
    for (px, py) in [(40, 31), (40, 30), (41, 31), (40, 33)]:
        pts = np.column_stack([px + rng.uniform(-0.5, 0.5, n) + rng.normal(0, sigma, n),
                               py + rng.uniform(-0.5, 0.5, n) + rng.normal(0, sigma, n)])
        v = pts - apex
        ang = np.abs(np.arctan2(v[:, 0], v[:, 1]))  # angle from +y
        expected = np.mean(ang < half)
        assert cov[py, px] == pytest.approx(expected, abs=1.5e-3)


def test_pinhole_projection_matches_opencv():
    # Reference library: cv2.projectPoints with K, dist and the camera pose.
    import cv2

    cam = Camera(0.005, (1280, 960), rotation_deg=12.0, centre_mm=(0.4, -0.3), k1=-0.12, k2=0.05,
                 working_distance_mm=35.0, focal_mm=8.0)
    rng = np.random.default_rng(3)
    pts = np.column_stack([rng.uniform(-2.5, 3, 50), rng.uniform(-2, 2, 50), rng.uniform(-1.5, 1.5, 50)])
    r, t = cam.pose()
    rvec, _ = cv2.Rodrigues(r)
    ref, _ = cv2.projectPoints(pts.reshape(-1, 1, 3), rvec, t, cam.camera_matrix(), cam.dist_coeffs())
    np.testing.assert_allclose(cam.world3_to_px(pts), ref.reshape(-1, 2), rtol=0, atol=1e-6)
    # a point nearer the lens by z images larger by Z / (Z - z) (pinhole similar triangles)
    plain = Camera(0.005, (1280, 960), working_distance_mm=35.0)
    a = plain.world3_to_px(np.array([[1.0, 0.0, 0.0], [1.0, 0.0, 2.0]]))
    u0 = plain.principal[0]
    assert (a[1, 0] - u0) / (a[0, 0] - u0) == pytest.approx(35.0 / 33.0, rel=1e-12)


def test_camera_inverse_and_rays():
    # Truth: px_to_world inverts world_to_px; a ray from the projection centre through an
    # image point passes through that point's world position (pinhole geometry).
    cam = Camera(0.004, (800, 600), rotation_deg=-7, k1=0.08, working_distance_mm=50.0)
    xy = np.array([[0.0, 0.0], [1.1, -0.7], [-1.5, 1.0]])
    px = cam.world_to_px(xy)
    np.testing.assert_allclose(cam.px_to_world(px), xy, rtol=0, atol=1e-9)
    o, d = cam.rays(px)
    s = -o[:, 2] / d[:, 2]
    np.testing.assert_allclose(o[:, :2] + s[:, None] * d[:, :2], xy, rtol=0, atol=1e-9)
    tele = Camera(0.004, (800, 600), rotation_deg=30)
    o, d = tele.rays(tele.world_to_px(xy))
    np.testing.assert_allclose(o[:, :2], xy, atol=1e-9)
    np.testing.assert_allclose(d, np.tile([0.0, 0.0, -1.0], (3, 1)), atol=1e-12)


def test_rotation_and_y_up_convention():
    # Truth (docs/conventions.md, this module's docstring): world +y is up on the screen and
    # rotation_deg turns the scene counter-clockwise on the screen.
    cam = Camera(0.01, (200, 100), rotation_deg=90.0)
    p = cam.world_to_px(np.array([[0.0, 0.0], [0.1, 0.0], [0.0, 0.1]]))
    u0, v0 = cam.principal
    np.testing.assert_allclose(p[0], [u0, v0], atol=1e-12)
    np.testing.assert_allclose(p[1], [u0, v0 - 10.0], atol=1e-9)   # +x now points up
    np.testing.assert_allclose(p[2], [u0 - 10.0, v0], atol=1e-9)   # +y now points left


def test_photometry_levels_noise_vignetting_gamma_clipping():
    # Truth: the stated photometric model (render docstring): levels, 15 % corner fall-off,
    # I = FS (I_lin/FS)^(1/gamma), clipping at full scale; noise std by sample statistics
    # (chi-square spread of a 2e5-pixel sample is < 1 %).
    cam = Camera(0.01, (500, 400))
    img, _ = render([], cam, noise=0.0, bright=200, vignetting=0.15, bit_depth=16)
    full = img.astype(float) / 257.0
    assert full[200, 250] == pytest.approx(200 * (1 - 0.15 * (0.25 ** 2 + 0.25 ** 2) / (249.5 ** 2 + 199.5 ** 2)), abs=0.01)
    assert full[0, 0] == pytest.approx(30 + (200 * 0.85 - 30), abs=0.01)
    img, _ = render([], cam, noise=3.0, bright=150, seed=5)
    assert img.std() == pytest.approx(3.0, rel=0.03)
    assert img.mean() == pytest.approx(150, abs=0.05)
    img, _ = render([], cam, noise=0.0, bright=128, gamma=2.2)
    assert int(img[5, 5]) == round(255 * (128 / 255) ** (1 / 2.2))
    img, truth = render([], cam, noise=0.0, bright=300)
    assert img.max() == 255 and truth["render"]["clipped"]


def test_jpeg_dust_and_determinism():
    cam = Camera(0.01, (160, 120))
    disk = arc_points((0.0, 0.0), 0.3, 0, 360)
    a, ta = render([disk], cam, dust=4, seed=9, jpeg_quality=70)
    b, _ = render([disk], cam, dust=4, seed=9, jpeg_quality=70)
    c, _ = render([disk], cam, dust=4, seed=10)
    assert a.dtype == np.uint8 and np.array_equal(a, b) and not np.array_equal(a[:, :], c)
    assert len(ta["dust"]) == 4
    # the disk: area of the dark part ~ pi r^2 in px^2 (analytic), JPEG and dust aside
    lv = ta["levels"]
    clean, _ = render([disk], cam, noise=0.0, bit_depth=16)
    frac = (lv["bright"] * 257 - clean.astype(float)) / ((lv["bright"] - lv["dark"]) * 257)
    # polygon of arc_points chords (sagitta <= 1 nm = 1e-4 px) vs the circle: rel 1e-5
    assert frac.sum() == pytest.approx(math.pi * 30.0 ** 2, rel=1e-5)


def test_arc_points_sagitta_and_ends():
    # Truth: circle geometry: every point at the radius, ends at the given angles, chord
    # sagitta r (1 - cos(dphi/2)) below the requested bound.
    p = arc_points((1.0, 2.0), 0.5, 30.0, -60.0, max_error_mm=1e-5)
    np.testing.assert_allclose(np.hypot(p[:, 0] - 1, p[:, 1] - 2), 0.5, atol=1e-12)
    np.testing.assert_allclose(p[0], [1 + 0.5 * math.cos(math.radians(30)), 2 + 0.5 * math.sin(math.radians(30))])
    np.testing.assert_allclose(p[-1], [1 + 0.5 * math.cos(math.radians(-60)), 2 + 0.5 * math.sin(math.radians(-60))])
    dphi = math.radians(90) / (len(p) - 1)
    assert 0.5 * (1 - math.cos(dphi / 2)) <= 1e-5


def test_bad_calls_name_the_parameter():
    with pytest.raises(ValueError, match="mm_per_px"):
        Camera(0.0)
    with pytest.raises(ValueError, match="working_distance_mm"):
        Camera(0.01, focal_mm=8.0)
    cam = Camera(0.01, (50, 40))
    with pytest.raises(ValueError, match="bit_depth"):
        render([], cam, bit_depth=12)
    with pytest.raises(ValueError, match="shapes"):
        render([np.zeros((2, 2))], cam)
    with pytest.raises(TypeError, match="camera"):
        render([], "cam")
