"""The EdgeSet result of :func:`profilecheck.imaging.find_edges`."""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

__all__ = ["EdgeSet", "empty_edgeset"]


@dataclass(frozen=True, eq=False)
class EdgeSet:
    """Subpixel edge points of a backlit silhouette.

    All coordinates in full-image pixels, (x, y) = (col, row), integer values at pixel
    centres (docs/conventions.md), whatever ``roi`` the search used.

    Attributes
    ----------
    xy : ndarray (N, 2)
        Edge points (x, y) px. A point lies on the pixel row (or column) its profile was
        taken along, at the fitted edge position.
    normal : ndarray (N, 2)
        Unit normals from the dark part into the bright field, from a line through the
        neighbouring points of the same contour.
    sigma_px : ndarray (N,)
        Fitted Gaussian blur sigma_b of each profile, px along the normal (pixel integration
        not included: sigma_e^2 = sigma_b^2 + 1/12). The focus signal.
    std_px : ndarray (N,)
        Standard uncertainty (k = 1) of each point along its normal, px, from the fit's
        Fisher information and the residual noise (pooled with the image's noise level).
    dark, bright : ndarray (N,)
        Fitted local dark and bright levels (linearised grey, [0, 1] scale).
    contour : ndarray of int (N,)
        Boundary contour id, 0..K-1; points are ordered along each contour.
    closed : tuple of bool
        ``closed[k]`` is True when contour k is a closed loop inside the search area.
    n_dropped : int
        Seed points rejected because the 1-D edge model did not fit (corners, junctions,
        narrow gaps, dust, low contrast, residual far above the image's noise), or because
        their fit landed on an edge point another seed of the same pixel row (column)
        already gave.
    noise_std : float
        Pooled RMS residual of the profile fits (grey levels, [0, 1] scale).
    warnings : tuple of str
        Conditions that limit accuracy (clipping, low contrast, heavy blur, many drops).
    image_shape : tuple of int
        (rows, cols) of the image searched.
    """

    xy: np.ndarray
    normal: np.ndarray
    sigma_px: np.ndarray
    std_px: np.ndarray
    dark: np.ndarray
    bright: np.ndarray
    contour: np.ndarray
    closed: tuple[bool, ...] = ()
    n_dropped: int = 0
    noise_std: float = float("nan")
    warnings: tuple[str, ...] = ()
    image_shape: tuple[int, int] = (0, 0)

    def __len__(self) -> int:
        return int(self.xy.shape[0])

    @property
    def n(self) -> int:
        """Number of edge points."""
        return len(self)

    @property
    def blur_px(self) -> float:
        """Median fitted blur sigma_b (px); NaN when there are no points."""
        return float(np.median(self.sigma_px)) if len(self) else float("nan")

    @property
    def n_contours(self) -> int:
        """Number of contours with at least one point."""
        return int(self.contour.max()) + 1 if len(self) else 0

    def select(self, mask) -> "EdgeSet":
        """A new EdgeSet with the points where ``mask`` (bool (N,) or index array) selects.

        Contour ids and order are kept (ids may then have gaps).
        """
        m = np.asarray(mask)
        if m.dtype == bool and m.shape != (len(self),):
            raise ValueError(f"mask must have shape ({len(self)},), got {m.shape}")
        return replace(self, xy=self.xy[m], normal=self.normal[m], sigma_px=self.sigma_px[m],
                       std_px=self.std_px[m], dark=self.dark[m], bright=self.bright[m],
                       contour=self.contour[m])

    def by_contour(self, k: int) -> "EdgeSet":
        """The points of contour ``k``, in order."""
        return self.select(self.contour == k)

    def in_box(self, x_min: float, y_min: float, x_max: float, y_max: float) -> "EdgeSet":
        """The points inside the box x_min <= x < x_max, y_min <= y < y_max."""
        x, y = self.xy[:, 0], self.xy[:, 1]
        return self.select((x >= x_min) & (x < x_max) & (y >= y_min) & (y < y_max))


def empty_edgeset(shape, warnings=(), n_dropped: int = 0) -> EdgeSet:
    z2 = np.zeros((0, 2))
    z = np.zeros(0)
    return EdgeSet(xy=z2, normal=z2.copy(), sigma_px=z, std_px=z.copy(), dark=z.copy(),
                   bright=z.copy(), contour=np.zeros(0, dtype=int), closed=(),
                   n_dropped=int(n_dropped), warnings=tuple(warnings),
                   image_shape=tuple(int(s) for s in shape))
