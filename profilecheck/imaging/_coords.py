"""The one converter between scikit-image (row, col) and profilecheck (x, y) points.

Pixel convention (docs/conventions.md): integer coordinates at pixel centres, origin at the
top-left; point sets are (N, 2) arrays in (x, y) = (col, row) order.
"""

from __future__ import annotations

import numpy as np

__all__ = ["rc_to_xy"]


def rc_to_xy(rc: np.ndarray) -> np.ndarray:
    """Convert (row, col) coordinates to (x, y) = (col, row).

    Parameters
    ----------
    rc : array_like, shape (N, 2) or (2,)
        Points as (row, col), e.g. from ``skimage.measure.find_contours``.

    Returns
    -------
    xy : ndarray of float64, same shape
        The same points as (x, y) = (col, row), in pixels, integer values at pixel centres.

    Raises
    ------
    ValueError
        If ``rc`` does not have a last axis of length 2.

    Examples
    --------
    >>> rc_to_xy([[3.0, 5.5]])
    array([[5.5, 3. ]])
    """
    arr = np.asarray(rc, dtype=np.float64)
    if arr.ndim == 0 or arr.shape[-1] != 2:
        raise ValueError(f"rc must have shape (N, 2) or (2,), got {arr.shape}")
    return arr[..., ::-1].copy()
