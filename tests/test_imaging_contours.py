"""iso_contours against the reference library (scikit-image's find_contours).

Source of truth: ``skimage.measure.find_contours`` with its defaults; the contours must hold
the same vertices joined in the same order (a closed contour may start elsewhere).
"""

from __future__ import annotations

import cv2
import numpy as np
import pytest
from skimage.measure import find_contours

from profilecheck.imaging import find_edges, load_image
from profilecheck.imaging._contours import _threshold_for, iso_contours


def _same_contour(a: np.ndarray, b: np.ndarray) -> bool:
    if a.shape != b.shape:
        return False
    closed = len(a) > 2 and np.array_equal(a[0], a[-1])
    if not closed:
        return np.array_equal(a, b)
    ring_a, ring_b = a[:-1], b[:-1]
    hit = np.flatnonzero((ring_a == ring_b[0]).all(axis=1))
    return len(hit) == 1 and np.array_equal(np.roll(ring_a, -hit[0], axis=0), ring_b)


def _match(ref: list, got: list) -> bool:
    if len(ref) != len(got):
        return False
    used: set[int] = set()
    for a in ref:
        j = next((j for j, b in enumerate(got) if j not in used and _same_contour(a, b)), None)
        if j is None:
            return False
        used.add(j)
    return True


@pytest.mark.parametrize("seed", range(40))
def test_same_contours_as_reference(seed):
    rng = np.random.default_rng(seed)
    h, w = rng.integers(2, 48, 2)
    img = rng.random((h, w))
    if seed % 3 == 0:
        img = cv2.GaussianBlur(img, (0, 0), 1.5)
    if seed % 4 == 1:  # two-level picture: many saddles and one-pixel features
        img = np.where(rng.random((h, w)) > 0.5, 0.9, 0.1)
    level = 0.5 - 1e-9 if seed % 2 else float(np.median(img)) + 1e-7
    assert _match(find_contours(img, level), iso_contours(img, level))


def test_float32_image_compares_like_float64():
    rng = np.random.default_rng(3)
    img = cv2.GaussianBlur(rng.random((60, 70)), (0, 0), 2.0).astype(np.float32)
    # a level float32 cannot hold: NumPy would round it for a float32 comparison
    level = float(np.median(img)) + 1e-9
    assert _match(find_contours(img.astype(np.float64), level), iso_contours(img, level))
    v = np.float32([0.5, np.nextafter(np.float32(0.5), 0), np.nextafter(np.float32(0.5), 1)])
    for lev in (0.5 - 1e-9, 0.5, 0.5 + 1e-9):
        assert np.array_equal(v > _threshold_for(np.float32, lev), v.astype(np.float64) > lev)


def test_values_at_the_level_fall_back_to_reference():
    img = np.zeros((5, 6))
    img[1:4, 2:5] = 1.0
    img[2, 3] = 0.5  # exactly at the level
    assert _match(find_contours(img, 0.5), iso_contours(img, 0.5))


def test_flat_image_has_no_contour():
    assert iso_contours(np.full((9, 9), 0.3), 0.5) == []


def test_float32_load_gives_the_same_edges(tmp_path):
    # an edge through a rendered disc: float32 and float64 pictures give the same points
    rows, cols = np.mgrid[0:120, 0:160]
    r = np.hypot(cols - 80.3, rows - 60.7)
    img = (30 + 190 / (1 + np.exp(-(r - 35.0) / 0.8))).round().astype(np.uint8)
    path = tmp_path / "disc.png"
    cv2.imwrite(str(path), img)
    e64 = find_edges(load_image(path))
    e32 = find_edges(load_image(path, dtype=np.float32))
    assert load_image(path, dtype=np.float32).dtype == np.float32
    assert len(e64.xy) == len(e32.xy) > 150
    assert np.max(np.abs(e64.xy - e32.xy)) < 1e-5
    with pytest.raises(ValueError, match="dtype"):
        load_image(path, dtype=np.int16)
