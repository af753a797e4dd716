"""Iso-contours of a grey image by marching squares, assembled with array operations.

The vertices, their order and the joins are those of ``skimage.measure.find_contours`` with
its defaults (``fully_connected='low'``, ``positive_orientation='low'``), which follows
Lorensen & Cline (SIGGRAPH 1987) in two dimensions: every vertex sits on the segment between
two 4-adjacent pixel centres on opposite sides of the level, at the linear interpolation
``c + (level - v0) / (v1 - v0)``; inside each 2 x 2 cell the vertices are joined so that the
high side lies to the right of the direction of travel, and a saddle cell joins its low
corners (the low side counts as 8-connected). As every vertex is the end of exactly one
joining segment and the start of exactly one other (or lies on the image border), the
contours are the chains of a successor map, found here without the per-segment dictionary
work that dominates the reference implementation on a large image.

What differs from the reference: a closed contour may start at another of its vertices, and
contours come in the order of their first vertex in the raster scan rather than of the
reference's assembly. Pixel values exactly at the level (where the reference drops
degenerate segments and joins coincident vertices by their coordinates) are handed to the
reference itself (:func:`iso_contours` checks for them).
"""

from __future__ import annotations

import numpy as np

__all__ = ["iso_contours"]

# Square edges: 0 top (between ul and ur), 1 bottom (ll - lr), 2 left (ul - ll), 3 right
# (ur - lr). Case bits: ul 1, ur 2, ll 4, lr 8 (set where the value is above the level).
# Joins (from edge, to edge) per case, with the low corners joined at saddles (cases 6, 9).
_T, _B, _L, _R = 0, 1, 2, 3
_JOINS = {1: [(_T, _L)], 2: [(_R, _T)], 3: [(_R, _L)], 4: [(_L, _B)], 5: [(_T, _B)],
          6: [(_R, _T), (_L, _B)], 7: [(_R, _B)], 8: [(_B, _R)], 9: [(_T, _L), (_B, _R)],
          10: [(_B, _T)], 11: [(_B, _L)], 12: [(_L, _R)], 13: [(_T, _R)], 14: [(_L, _T)]}
_FIRST = np.full((16, 2), -1, dtype=np.int64)
_SECOND = np.full((16, 2), -1, dtype=np.int64)
for _case, _js in _JOINS.items():
    _FIRST[_case] = _js[0]
    if len(_js) > 1:
        _SECOND[_case] = _js[1]


def _edge_keys(r, c, edge, rows, cols):
    """Global key of a square edge: horizontal pixel pairs first, then vertical ones.

    Horizontal pair (r, c)-(r, c+1): key r * (cols - 1) + c; vertical pair (r, c)-(r+1, c):
    rows * (cols - 1) + r * cols + c.
    """
    nh = rows * (cols - 1)
    rr = np.where(edge == _B, r + 1, r)
    cc = np.where(edge == _R, c + 1, c)
    horiz = edge <= _B
    return np.where(horiz, rr * (cols - 1) + cc, nh + rr * cols + cc)


def _threshold_for(dtype, level: float):
    """A threshold t of ``dtype`` with (v > t) == (float64(v) > level) for every v of it.

    A float32 image compared with a Python float compares in float32 (NumPy's scalar
    promotion), so a level that float32 cannot hold would be rounded, either way; the
    largest float32 not above the level gives the float64 answer without a float64 copy.
    """
    if dtype == np.float32:
        t = np.float32(level)
        if float(t) > level:
            t = np.nextafter(t, np.float32(-np.inf))
        return t
    return np.float64(level)


def iso_contours(img: np.ndarray, level: float) -> list[np.ndarray]:
    """Iso-contours of ``img`` at ``level``, as ``skimage.measure.find_contours`` gives them.

    Parameters
    ----------
    img : ndarray (rows, cols), float
        Grey image, finite, at least 2 x 2.
    level : float
        The contour level.

    Returns
    -------
    list of ndarray (M, 2)
        Each contour's vertices in (row, col), float64; a closed contour repeats its first
        vertex at the end. See the module notes for what may differ from the reference.

    Examples
    --------
    >>> a = np.zeros((3, 3)); a[0, 0] = 1
    >>> iso_contours(a, 0.5)[0].tolist()
    [[0.0, 0.5], [0.5, 0.0]]
    """
    a = np.asarray(img)
    rows, cols = a.shape
    level = float(level)
    hi = a > _threshold_for(a.dtype, level)
    # vertices: 4-adjacent pixel pairs on opposite sides of the level
    # (np.flatnonzero and divmod: several times faster than np.nonzero on a 2-D mask)
    kh = np.flatnonzero(hi[:, :-1] != hi[:, 1:])
    kv = np.flatnonzero(hi[:-1, :] != hi[1:, :])
    hr, hc = np.divmod(kh, cols - 1)
    vr, vc = np.divmod(kv, cols)
    nh = rows * (cols - 1)
    keys = np.concatenate([kh, nh + kv])
    if len(keys) == 0:
        return []
    v0 = np.concatenate([a[hr, hc], a[vr, vc]]).astype(np.float64)
    v1 = np.concatenate([a[hr, hc + 1], a[vr + 1, vc]]).astype(np.float64)
    frac = (level - v0) / (v1 - v0)
    if np.any((v0 == level) | (v1 == level)):
        from skimage.measure import find_contours
        return find_contours(a, level)
    n_h = len(hr)
    vert = np.empty((len(keys), 2))
    vert[:n_h, 0] = hr
    vert[:n_h, 1] = hc + frac[:n_h]
    vert[n_h:, 0] = vr + frac[n_h:]
    vert[n_h:, 1] = vc
    # the cells touching a vertex: a horizontal pair is the top edge of the cell below it
    # and the bottom edge of the cell above; a vertical pair the left and right edges
    cr = np.concatenate([hr, hr - 1, vr, vr])
    cc = np.concatenate([hc, hc, vc, vc - 1])
    inside = (cr >= 0) & (cr < rows - 1) & (cc >= 0) & (cc < cols - 1)
    # the distinct cells in raster order: marks in a flag per cell (faster than np.unique)
    marks = np.zeros((rows - 1) * (cols - 1), dtype=bool)
    marks[cr[inside] * (cols - 1) + cc[inside]] = True
    cell = np.flatnonzero(marks)
    r0, c0 = np.divmod(cell, cols - 1)
    case = (hi[r0, c0].astype(np.int64) | (hi[r0, c0 + 1] << 1) | (hi[r0 + 1, c0] << 2)
            | (hi[r0 + 1, c0 + 1] << 3))
    f_edge, t_edge, f_cell = [], [], []
    for table in (_FIRST, _SECOND):
        j = table[case]
        has = j[:, 0] >= 0
        f_edge.append(_edge_keys(r0[has], c0[has], j[has, 0], rows, cols))
        t_edge.append(_edge_keys(r0[has], c0[has], j[has, 1], rows, cols))
        f_cell.append(cell[has])
    f_key, t_key = np.concatenate(f_edge), np.concatenate(t_edge)
    seg_cell = np.concatenate(f_cell)
    order = np.argsort(keys)
    skeys = keys[order]
    f_idx = order[np.searchsorted(skeys, f_key)]
    t_idx = order[np.searchsorted(skeys, t_key)]
    n = len(keys)
    nxt = np.full(n, -1, dtype=np.int64)
    nxt[f_idx] = t_idx
    has_prev = np.zeros(n, dtype=bool)
    has_prev[t_idx] = True
    if np.bincount(t_idx, minlength=n).max() > 1 or np.bincount(f_idx, minlength=n).max() > 1:
        # a vertex entered or left twice cannot happen with values off the level; be safe
        from skimage.measure import find_contours
        return find_contours(a, level)
    # raster position of the cell where each vertex's outgoing join lies (contour order)
    out_cell = np.full(n, np.iinfo(np.int64).max)
    np.minimum.at(out_cell, f_idx, seg_cell)
    nxt_l = nxt.tolist()
    seen = np.zeros(n, dtype=bool)
    chains: list[tuple[int, np.ndarray, bool]] = []
    # open contours from their first vertex (on the image border), then the closed ones
    starts = np.flatnonzero(~has_prev)
    for s in starts.tolist():
        path = [s]
        j = nxt_l[s]
        while j >= 0:
            path.append(j)
            j = nxt_l[j]
        p = np.array(path)
        seen[p] = True
        chains.append((int(out_cell[p].min()) if len(p) > 1 else int(out_cell[s]), p, False))
    left = np.flatnonzero(~seen)
    if len(left):
        # start each loop at its vertex whose join comes first in the raster scan
        for s in left[np.argsort(out_cell[left], kind="stable")].tolist():
            if seen[s]:
                continue
            path = [s]
            j = nxt_l[s]
            while j != s:
                if j < 0 or len(path) > n:  # not a loop: the map is not one-to-one
                    from skimage.measure import find_contours
                    return find_contours(a, level)
                path.append(j)
                j = nxt_l[j]
            p = np.array(path)
            seen[p] = True
            chains.append((int(out_cell[s]), p, True))
    chains.sort(key=lambda ch: ch[0])
    out = []
    for _, p, closed in chains:
        c = vert[p]
        out.append(np.vstack([c, c[:1]]) if closed else c)
    return out
