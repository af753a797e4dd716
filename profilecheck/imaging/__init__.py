"""Imaging core: image loading with limits, backlit silhouettes, subpixel edges, robust fits.

No Qt here. Pixel convention (docs/conventions.md): ``img[row, col]``, origin top-left,
integer coordinates at pixel centres; point sets are (N, 2) arrays of (x, y) = (col, row);
:func:`rc_to_xy` is the one converter from scikit-image's (row, col). Uncertainties inside
this package are standard (k = 1, names ``std_*``, ``cov``); measure modules expand them.

Typical use::

    img = load_image("part.png")
    edges = find_edges(img, gamma=1.0)      # or gamma=estimate_gamma(img).gamma to check it
    flank = fit_line(edges.in_box(100, 50, 300, 200).xy, sigma_px=...)
    tip, cov = intersect_lines(flank_a, flank_b)

Never take a contour apex as a corner or tool point: the blurred 50 % contour recedes into
the dark part by about 1.3 sigma at a 60 deg point; intersect flank lines fitted away from
the corner (exclude about 3 sigma_e plus the nose radius), and correct fitted radii with
:func:`correct_radius_for_blur` (vision-notes section 1.2).
"""

from __future__ import annotations

from ._coords import rc_to_xy
from ._edgeset import EdgeSet
from .edges import find_edges
from ._response import GammaEstimate, estimate_gamma
from .fit import CircleFit, LineFit, Regression, fit_circle, fit_line, regress_line
from .geometry import (angle_between, correct_radius_for_blur, intersect_lines,
                       point_line_distance, sigma_e_px)
from .io import DEFAULT_MAX_PIXELS, load_image
from .silhouette import Silhouette, clipping_fraction, flatten_backlight, linearise

__all__ = [
    "load_image", "DEFAULT_MAX_PIXELS", "linearise", "clipping_fraction",
    "flatten_backlight", "Silhouette", "estimate_gamma", "GammaEstimate",
    "find_edges", "EdgeSet",
    "fit_line", "LineFit", "fit_circle", "CircleFit", "regress_line", "Regression",
    "intersect_lines", "angle_between", "point_line_distance",
    "sigma_e_px", "correct_radius_for_blur",
    "rc_to_xy",
]
