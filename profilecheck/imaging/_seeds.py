"""Seeds for edge profiles: where the silhouette contour crosses pixel rows and columns.

Marching squares (:func:`._contours.iso_contours`, the vertices and joins of
``skimage.measure.find_contours``; Lorensen & Cline, SIGGRAPH 1987) puts
every contour vertex on a pixel row (between two horizontally adjacent pixel centres) or on a
pixel column. A vertex on a row where the edge runs more vertically than horizontally seeds a
profile along that row; a vertex on a column where the edge runs more horizontally seeds a
profile along that column. So each row (column) crossing of a steep (shallow) edge gives one
profile of actual pixels, and no interpolation enters the fit.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._coords import rc_to_xy

__all__ = ["Seeds", "seeds_from_contours"]


@dataclass(frozen=True)
class Seeds:
    """Profile seeds (arrays of shape (M,))."""

    along_x: np.ndarray   # True: profile along a row (samples vary in x); False: along a column
    line: np.ndarray      # the row (along_x) or column index of the profile, int
    pos: np.ndarray       # seed edge position along the profile axis (col or row), float px
    n_axis: np.ndarray    # |normal component| along the profile axis, in [1/sqrt2, 1]
    n_other: np.ndarray   # |normal component| across it
    contour: np.ndarray   # source contour index
    corner: np.ndarray    # True where the contour turns sharply here (near a corner)
    closed: tuple         # per source contour


def _tangents(xy: np.ndarray, closed: bool, k: int) -> np.ndarray:
    m = len(xy)
    idx = np.arange(m)
    if closed:
        a, b = xy[(idx + k) % m], xy[(idx - k) % m]
    else:
        a, b = xy[np.minimum(idx + k, m - 1)], xy[np.maximum(idx - k, 0)]
    return a - b


def _turning(xy: np.ndarray, closed: bool, k: int) -> np.ndarray:
    m = len(xy)
    idx = np.arange(m)
    if closed:
        fwd = xy[(idx + k) % m] - xy
        bwd = xy - xy[(idx - k) % m]
    else:
        fwd = xy[np.minimum(idx + k, m - 1)] - xy
        bwd = xy - xy[np.maximum(idx - k, 0)]
    nf = np.hypot(*fwd.T)
    nb = np.hypot(*bwd.T)
    cosang = (fwd * bwd).sum(1) / np.maximum(nf * nb, 1e-12)
    ang = np.arccos(np.clip(cosang, -1, 1))
    ang[(nf == 0) | (nb == 0)] = 0.0
    return ang


def seeds_from_contours(contours_rc, *, min_vertices: int = 12,
                        corner_turn_rad: float = np.deg2rad(40.0)) -> Seeds:
    """Turn marching-squares contours into row/column profile seeds.

    Parameters
    ----------
    contours_rc : list of ndarray (M, 2)
        Contours in (row, col), as ``iso_contours`` (or ``find_contours``) returns them.
    min_vertices : int
        Contours with fewer vertices (dust, noise specks) are skipped.
    corner_turn_rad : float
        Vertices where the contour direction 4 vertices ahead and behind differs by more than
        this are flagged as near a corner.
    """
    out = {k: [] for k in ("along_x", "line", "pos", "na", "no", "contour", "corner")}
    closed_flags = []
    for ci, rc in enumerate(contours_rc):
        closed = bool(len(rc) > 2 and np.allclose(rc[0], rc[-1]))
        closed_flags.append(closed)
        if closed:
            rc = rc[:-1]
        if len(rc) < min_vertices:
            continue
        xy = rc_to_xy(rc)
        tan = _tangents(xy, closed, 3)
        tn = np.hypot(*tan.T)
        ok = tn > 0
        tx = np.where(ok, np.abs(tan[:, 0]) / np.where(ok, tn, 1), 0.0)
        ty = np.where(ok, np.abs(tan[:, 1]) / np.where(ok, tn, 1), 0.0)
        on_row = np.abs(rc[:, 0] - np.round(rc[:, 0])) < 1e-9
        on_col = np.abs(rc[:, 1] - np.round(rc[:, 1])) < 1e-9
        # normal = tangent turned 90 deg: |n_x| = |t_y|, |n_y| = |t_x|
        use_row = on_row & (ty >= tx) & ok
        use_col = on_col & ~on_row & (tx > ty) & ok
        corner = _turning(xy, closed, 4) > corner_turn_rad
        sel = use_row | use_col
        idx = np.flatnonzero(sel)
        ax = use_row[idx]
        out["along_x"].append(ax)
        out["line"].append(np.where(ax, np.round(rc[idx, 0]), np.round(rc[idx, 1])).astype(int))
        out["pos"].append(np.where(ax, rc[idx, 1], rc[idx, 0]))
        out["na"].append(np.where(ax, ty[idx], tx[idx]))
        out["no"].append(np.where(ax, tx[idx], ty[idx]))
        out["contour"].append(np.full(len(idx), ci))
        out["corner"].append(corner[idx])
    if not out["pos"]:
        e = np.zeros(0)
        return Seeds(np.zeros(0, bool), np.zeros(0, int), e, e, e, np.zeros(0, int),
                     np.zeros(0, bool), tuple(closed_flags))
    cat = {k: np.concatenate(v) for k, v in out.items()}
    return Seeds(along_x=cat["along_x"], line=cat["line"], pos=cat["pos"], n_axis=cat["na"],
                 n_other=cat["no"], contour=cat["contour"], corner=cat["corner"],
                 closed=tuple(closed_flags))
