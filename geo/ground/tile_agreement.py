"""How far DEM tiles disagree where they meet: in overlaps and across seams.

The mosaic takes each point from the first tile with valid data
(:mod:`geo.ground.mosaic`), so two tiles that disagree in their overlap hand
the study one of them without a word. This module measures, in a box of the
mosaic's CRS (the part of the DEM the study read):

- **overlap disagreement**: at every valid cell centre of a tile that another
  tile also covers, the tile's own cell height minus the other tile's bilinear
  height there [2]_;
- **seam step**: at the boundary of each tile, at its edge cells (moved half a
  cell outward onto the boundary), the tile's edge surface extended linearly to
  the boundary minus the neighbour's, extended the same way from its side.
  Both one-sided linear extrapolations carry the same curvature error
  (``3/8 h^2 f''`` for cells ``h`` apart), which cancels, so on a smooth
  surface cut into tiles the step is of order ``h^3 f'''`` and a height jump
  between the tiles comes out as itself;
- **height ratios**: the median ratio of one tile's heights to the other's at
  the same points (overlap cell centres and seam points), which is near 3.281
  for a tile in feet read as metres among tiles in metres [3]_.

Heights are each tile's raster values times its vertical unit. The vertical
offset and the datum conversion are the same for every tile at one point, so
the differences are those of heights in the survey's datum; the ratios are
of the tiles' own heights, where a unit slip is a pure factor.

References
----------
.. [1] GDAL raster data model: the centre of cell (row, col) is at pixel
       coordinate (col + 0.5, row + 0.5).
.. [2] Press, W. H. et al., *Numerical Recipes*, 3rd ed., 2007, sec. 3.6
       (bilinear interpolation on a grid).
.. [3] NIST Handbook 44, Appendix C: 1 ft = 0.3048 m exactly.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from geo.ground.tile import apply_affine, valid_cells

__all__ = ["TileDifference", "TilePair", "TileAgreement", "measure_tiles"]

#: Cells a side of the part of one tile read for the checks: coarser cells beyond (every n-th). The overlap's
#: largest disagreement is then the largest at the cells read (our choice, to bound the cost on large tiles).
MAX_CELLS_PER_SIDE = 1500
#: Heights nearer zero than this give no ratio (a ratio of small heights says nothing of a unit). [m]
MIN_RATIO_HEIGHT_M = 1.0


@dataclass(frozen=True)
class TileDifference:
    """The largest height difference between two tiles, and where.

    Attributes
    ----------
    tile, other : str
        File names: ``tile`` minus ``other``.
    difference_m : float
        Signed height difference at that point. [m]
    x, y : float
        The point in the mosaic's CRS.
    lat_deg, lon_deg : float
        The point on WGS 84.
    points : int
        Points compared (overlap cell centres or seam points) over all pairs of tiles.
    """

    tile: str
    other: str
    difference_m: float
    x: float
    y: float
    lat_deg: float
    lon_deg: float
    points: int


@dataclass(frozen=True)
class TilePair:
    """Two tiles that meet: how many points they share and the median ratio of their heights there.

    Attributes
    ----------
    tile, other : int
        Indices of the tiles in the mosaic.
    points : int
        Points where both have heights (overlap cell centres and seam points).
    median_ratio : float
        Median of ``tile`` / ``other`` over the points with heights of at least
        :data:`MIN_RATIO_HEIGHT_M` (NaN without any).
    median_tile_m, median_other_m : float
        Median heights of each at those points. [m]
    """

    tile: int
    other: int
    points: int
    median_ratio: float
    median_tile_m: float
    median_other_m: float


@dataclass(frozen=True)
class TileAgreement:
    """Overlap disagreement, seam steps and height ratios of a mosaic's tiles in a box.

    Attributes
    ----------
    names : tuple of str
        The tiles' file names, in the mosaic's order.
    overlap, seam : TileDifference or None
        The largest overlap disagreement and the largest seam step (None where no tiles overlap or meet).
    pairs : tuple of TilePair
        Every ordered pair of tiles with shared points.
    medians_m : tuple of float
        Each tile's median height over its cells read (NaN for a tile outside the box). [m]
    """

    names: tuple[str, ...]
    overlap: TileDifference | None
    seam: TileDifference | None
    pairs: tuple[TilePair, ...]
    medians_m: tuple[float, ...]


def measure_tiles(mosaic, box=None, max_cells_per_side: int = MAX_CELLS_PER_SIDE) -> TileAgreement:
    """Overlap disagreement, seam steps and height ratios of every pair of tiles [2]_.

    Parameters
    ----------
    mosaic : geo.ground.mosaic.Mosaic
    box : tuple of float, optional
        (west, south, east, north) in the mosaic's CRS: only the tiles' cells in it count
        (default: the whole tiles).
    max_cells_per_side : int
        Beyond this many cells a side, every n-th cell is read (and every n-th edge cell).

    Returns
    -------
    TileAgreement
    """
    names = tuple(t.path.name for t in mosaic.tiles)
    overlap, seam, shared = [], [], {}
    medians = [float("nan")] * len(names)
    for k in range(len(mosaic.tiles)):
        cells = _tile_points(mosaic, k, box, max_cells_per_side)
        if cells is None:
            continue
        if np.isfinite(cells[0][2]).any():
            medians[k] = float(np.nanmedian(cells[0][2]))
        for j in range(len(mosaic.tiles)):
            if j == k:
                continue
            for kind, points, found in (("overlap", cells[0], overlap), ("seam", cells[1], seam)):
                got = _compare(mosaic, k, j, *points, kind == "seam")
                if got is None:
                    continue
                found.append((k, j, *got))
                shared.setdefault((k, j), []).append(got[3])
    pairs = tuple(_pair(k, j, np.concatenate(v, axis=1)) for (k, j), v in sorted(shared.items()))
    return TileAgreement(names, _largest(mosaic, overlap, names), _largest(mosaic, seam, names), pairs, tuple(medians))


def _tile_points(mosaic, k: int, box, max_cells_per_side: int):
    """Tile ``k``'s valid cell centres in the box, and its seam points, each as (x, y, z) in its own CRS."""
    from rasterio.windows import Window, from_bounds

    tile = mosaic.tiles[k]
    ds = tile.dataset
    r0, c0, r1, c1 = 0, 0, ds.height, ds.width
    if box is not None:
        west, south, east, north = box
        tx, ty = mosaic.to_tile(k, [west, east, east, west], [south, south, north, north])
        win = from_bounds(min(tx), min(ty), max(tx), max(ty), transform=ds.transform)
        r0, c0 = max(int(np.floor(win.row_off)) - 1, 0), max(int(np.floor(win.col_off)) - 1, 0)
        r1 = min(int(np.ceil(win.row_off + win.height)) + 1, ds.height)
        c1 = min(int(np.ceil(win.col_off + win.width)) + 1, ds.width)
    if r1 - r0 < 2 or c1 - c0 < 2:
        return None
    step = max(1, -(-max(r1 - r0, c1 - c0) // max_cells_per_side))
    rows, cols = np.arange(r0, r1)[::step], np.arange(c0, c1)[::step]
    if step == 1:
        z = _heights(tile, Window(c0, r0, c1 - c0, r1 - r0))
    else:  # the rows kept only
        z = np.vstack([_heights(tile, Window(c0, int(r), c1 - c0, 1))[:, ::step] for r in rows])
    ii, jj = np.meshgrid(rows, cols, indexing="ij")
    cx, cy = apply_affine(ds.transform, jj + 0.5, ii + 0.5)
    cells = (cx.ravel(), cy.ravel(), z.ravel())
    edges = []  # pixel coordinates (col, row) of the boundary beside the edge cells [1]_
    if r0 == 0:
        edges.append((cols + 0.5, np.zeros(cols.size)))
    if r1 == ds.height:
        edges.append((cols + 0.5, np.full(cols.size, float(ds.height))))
    if c0 == 0:
        edges.append((np.zeros(rows.size), rows + 0.5))
    if c1 == ds.width:
        edges.append((np.full(rows.size, float(ds.width)), rows + 0.5))
    if not edges:
        return cells, (np.zeros(0), np.zeros(0), np.zeros(0))
    pc = np.concatenate([e[0] for e in edges])
    pr = np.concatenate([e[1] for e in edges])
    px, py = apply_affine(ds.transform, pc, pr)
    pz = tile.sample(px, py, reach_cells=0.5)
    return cells, (px, py, pz)


def _heights(tile, window) -> np.ndarray:
    """A window of a tile's heights [m], NaN on nodata."""
    z = tile.dataset.read(1, window=window).astype(np.float64) * tile.vertical_scale
    z[~valid_cells(tile.dataset, window)] = np.nan
    return z


def _compare(mosaic, k: int, j: int, x, y, z, seam: bool):
    """Tile ``k``'s heights at its points minus tile ``j``'s there: (difference, x, y, stacked pairs) or None."""
    if x.size == 0:
        return None
    mx, my = mosaic.to_tile(0, x, y, from_tile=k)
    jx, jy = mosaic.to_tile(j, mx, my)
    other = mosaic.tiles[j]
    zj = other.sample(jx, jy, reach_cells=0.5 if seam else 0.0)
    if seam:
        zj[~other.covers(jx, jy)] = np.nan
    ok = np.isfinite(z) & np.isfinite(zj)
    if not ok.any():
        return None
    d = z[ok] - zj[ok]
    i = int(np.argmax(np.abs(d)))
    return float(d[i]), float(mx[ok][i]), float(my[ok][i]), np.vstack([z[ok], zj[ok]])


def _largest(mosaic, found: list, names: tuple[str, ...]) -> TileDifference | None:
    """The largest difference over all pairs, where (also on WGS 84), with the number of points compared."""
    from pyproj import CRS

    from geo.ground.mosaic import transformer_between

    if not found:
        return None
    k, j, d, x, y, _ = max(found, key=lambda f: abs(f[2]))
    lon, lat = transformer_between(mosaic.crs_wkt, CRS.from_epsg(4326).to_wkt()).transform(x, y)
    points = int(sum(f[5].shape[1] for f in found))
    return TileDifference(names[k], names[j], d, x, y, float(lat), float(lon), points)


def _pair(k: int, j: int, heights: np.ndarray) -> TilePair:
    """Median ratio of tile ``k``'s heights to tile ``j``'s at their shared points."""
    a, b = heights
    use = (np.abs(a) >= MIN_RATIO_HEIGHT_M) & (np.abs(b) >= MIN_RATIO_HEIGHT_M)
    if not use.any():
        return TilePair(k, j, a.size, float("nan"), float("nan"), float("nan"))
    return TilePair(k, j, a.size, float(np.median(a[use] / b[use])), float(np.median(a[use])), float(np.median(b[use])))
