"""Evaluation grids over the areas people stand on.

Each area gets a rectangular grid of cell centres at the site's resolution over the
bounding box of its outline, plus one cell of margin so that contours close cleanly at
the edges. Cells whose centre lies inside the outline (or on it) are evaluated; the
margin ring is evaluated too, so that maps and contours are not cut short, but it never
counts towards an area's verdict.

Cell centres alone miss every part of an area narrower than a cell that no centre falls
in (a walkway, a ledge, the arm of an L), so each area also gets *outline samples* that
do count towards its verdict:

* points along every edge of the outline, its vertices included, at most one
  ``resolution_m`` apart (on the outline itself: the edge is part of the area, e.g. the
  line along a parapet where people stand);
* one point inside the area in every cell that the area covers in part but whose centre
  lies outside it: the centroid of the part of the area in that cell (or, where the
  centroid of a non-convex part falls outside it, a point on its surface).

Every point of an area is then within about one cell of a judged point, however narrow
the area; every cell the area covers is evaluated, with its neighbours, so that the
zones of :mod:`siteexposure.engine.zones` reach into every part. An outline that
encloses no surface gets no samples (the orchestrator says why).
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field

import numpy as np

from siteexposure.containers import Area

#: refuse grids larger than this many evaluation points (cells x averaging heights) per
#: area: a bound on the run time (see estimate_points)
MAX_POINTS_PER_AREA = 20_000_000

#: memory a run may plan to use, at most (see memory_budget_bytes) [bytes]
MEMORY_BUDGET_BYTES = 2 * 1024**3

#: Bytes of the memory model of a run (see estimate_memory_bytes), measured with tracemalloc
#: on square areas of 0.16 to 2.6 million cells and one to three limit sets, rounded up.
STORED_BYTES_PER_CELL_KEY = 8  #: one float64 ratio grid per (limit set, population)
STORED_BYTES_PER_CELL = 2  #: inside and assessable masks
WORK_BYTES_PER_CELL = 64  #: meshgrid, masks, indices, column coordinates of the largest area
WORK_BYTES_PER_CELL_COMBO = 8  #: the reduced ratios of every combination, largest area
CHUNK_BYTES_PER_POINT = 96  #: coordinates and reductions of one chunk, per point
CHUNK_BYTES_PER_ELEMENT = 32  #: densities and their masks, per (source, point) of a chunk
CHUNK_BYTES_PER_POINT_COMBO = 16  #: the weighted sums of one chunk, per point and combination
ZONE_BYTES_PER_CELL = 64  #: contouring work of the largest area (engine.zones)
BASE_BYTES = 64 * 1024**2  #: everything else: limit tables, patterns, interpreter

#: a grid axis longer than this many cells is counted as this many (no overflow)
_AXIS_CAP = 2**40


@dataclass(frozen=True)
class AreaGrid:
    """Cell centres of one area's grid."""

    east_m: np.ndarray  #: (nx,) [m]
    north_m: np.ndarray  #: (ny,) [m]
    inside: np.ndarray  #: (ny, nx) bool
    evaluate: np.ndarray  #: (ny, nx) bool: every cell the area covers, dilated by one cell
    #: (m, 2) outline samples: points on the outline, then one point in each cell the area
    #: covers in part whose centre lies outside it [m]
    samples_en: np.ndarray = field(default_factory=lambda: np.zeros((0, 2)))

    @property
    def shape(self) -> tuple[int, int]:
        return self.inside.shape


def grid_axes(outline_en: np.ndarray, resolution_m: float) -> tuple[np.ndarray, np.ndarray]:
    """Cell-centre coordinates covering ``outline_en`` with one cell of margin. [m]

    Centres sit at ``(k + 1/2) * resolution`` on a lattice anchored at the site origin, so
    the grids of neighbouring areas line up.
    """
    lo = outline_en.min(axis=0)
    hi = outline_en.max(axis=0)
    k_lo = np.floor(lo / resolution_m - 0.5).astype(int) - 1
    k_hi = np.ceil(hi / resolution_m - 0.5).astype(int) + 1
    east = (np.arange(k_lo[0], k_hi[0] + 1) + 0.5) * resolution_m
    north = (np.arange(k_lo[1], k_hi[1] + 1) + 0.5) * resolution_m
    return east, north


def _axis_cells(lo: float, hi: float, resolution_m: float) -> int:
    """Cells of :func:`grid_axes` along one axis, counted without building it."""
    a, b = lo / resolution_m - 0.5, hi / resolution_m - 0.5
    if not (math.isfinite(a) and math.isfinite(b)) or b - a > _AXIS_CAP:
        return _AXIS_CAP
    return (math.ceil(b) + 1) - (math.floor(a) - 1) + 1


def estimate_points(area: Area, resolution_m: float) -> int:
    """Number of cell centres the grid of ``area`` would have (before masking).

    Counted from the outline's bounding box alone, in constant time and memory, so that a
    grid too large to build can be refused before anything is allocated; an axis longer
    than 2**40 cells (or a resolution so fine that the count overflows) counts as 2**40.
    """
    outline = np.asarray(area.outline_en, dtype=float)
    if not float(resolution_m) > 0.0:
        return _AXIS_CAP * _AXIS_CAP
    lo, hi = outline.min(axis=0), outline.max(axis=0)
    res = float(resolution_m)
    return _axis_cells(float(lo[0]), float(hi[0]), res) * _axis_cells(float(lo[1]), float(hi[1]), res)


def _edge_lengths(outline: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """|d east| and |d north| of every edge of the closed outline. [m]"""
    d = np.abs(np.diff(np.vstack([outline, outline[:1]]), axis=0))
    return d[:, 0], d[:, 1]


def estimate_samples(area: Area, resolution_m: float) -> int:
    """An upper bound of the outline samples :func:`build_grid` makes for ``area``.

    Points along the edges (``ceil(length / resolution)`` per edge, at least one) plus one
    per cell the outline passes through (at most ``|d east| / resolution + |d north| /
    resolution + 2`` per edge); constant memory in the number of cells, and capped at
    2**80 like :func:`estimate_points`.
    """
    outline = np.asarray(area.outline_en, dtype=float)
    res = float(resolution_m)
    if not res > 0.0:
        return _AXIS_CAP * _AXIS_CAP
    de, dn = _edge_lengths(outline)
    with np.errstate(over="ignore", invalid="ignore"):
        along = np.ceil(np.hypot(de, dn) / res)
        crossed = np.floor(de / res) + np.floor(dn / res) + 2.0
        total = float(np.sum(np.maximum(along, 1.0) + crossed))
    if not math.isfinite(total) or total > float(_AXIS_CAP * _AXIS_CAP):
        return _AXIS_CAP * _AXIS_CAP
    return int(total)


def estimate_columns(area: Area, resolution_m: float) -> int:
    """Averaging lines of ``area`` at most: grid cells plus outline samples."""
    return estimate_points(area, resolution_m) + estimate_samples(area, resolution_m)


def memory_budget_bytes() -> int:
    """Memory a run may plan to use: :data:`MEMORY_BUDGET_BYTES`, or half the machine's
    physical memory where that is less. [bytes]

    The physical size (not the momentarily free memory) is used so that the same site is
    accepted or refused alike on every run on one machine.
    """
    budget = MEMORY_BUDGET_BYTES
    try:
        physical = os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    except (AttributeError, ValueError, OSError):  # not available on this platform
        return budget
    return min(budget, physical // 2) if physical > 0 else budget


def estimate_memory_bytes(cells: list[int], n_heights: int, n_sources: int, n_keys: int,
                          n_combos: int, block_elements: int) -> int:
    """Peak memory of evaluating and contouring the area grids of one site. [bytes]

    Parameters
    ----------
    cells : list of int
        Grid cells of every evaluated area (:func:`estimate_points`).
    n_heights : int
        Points of each averaging line.
    n_sources : int
        Antennas.
    n_keys : int
        Stored ratio grids per area: limit sets x populations.
    n_combos : int
        Weight rows: limit sets x populations x regions.
    block_elements : int
        Largest (source x point) block the chunked evaluation holds at once
        (:data:`siteexposure.engine.evaluate.BLOCK_ELEMENTS`).

    Notes
    -----
    The result keeps one float64 ratio grid per key for every area; the computation is
    chunked, so besides those grids only the largest area's working arrays, one chunk and
    the contouring work are held at once. The coefficients are measured (tracemalloc) and
    rounded up; the test suite checks the estimate against a measured run.
    """
    if not cells:
        return BASE_BYTES
    stored = sum(cells) * (STORED_BYTES_PER_CELL + STORED_BYTES_PER_CELL_KEY * n_keys)
    largest = max(cells)
    work = largest * (WORK_BYTES_PER_CELL + WORK_BYTES_PER_CELL_COMBO * n_combos)
    chunk_points = min(largest * n_heights, max(1, block_elements // max(n_sources, 1)))
    chunk = chunk_points * (CHUNK_BYTES_PER_POINT + CHUNK_BYTES_PER_POINT_COMBO * n_combos
                            + CHUNK_BYTES_PER_ELEMENT * max(n_sources, 1))
    zones = largest * ZONE_BYTES_PER_CELL
    return int(BASE_BYTES + stored + max(work + chunk, zones))


#: parts of a cell smaller than this fraction of the cell are rounding slivers of an edge
#: that runs along a cell border, not a part of the area
_PART_OF_CELL = 1e-9
_BOX_BATCH = 65_536  #: at most this many cell squares are built at once (bounded memory)
_LEAF_CELLS = 256  #: candidate cells intersected with one piece of the area at once
_LEAF_VERTICES = 64  #: pieces of the area with fewer vertices are not cut down further


def _dilate(mask: np.ndarray) -> np.ndarray:
    """``mask`` grown by one cell (4-neighbours and diagonals)."""
    out = mask.copy()
    pad = np.pad(mask, 1)
    for di in (-1, 0, 1):
        for dj in (-1, 0, 1):
            out |= pad[1 + di : 1 + di + mask.shape[0], 1 + dj : 1 + dj + mask.shape[1]]
    return out


def outline_points(outline_en: np.ndarray, spacing_m: float) -> np.ndarray:
    """Points along every edge of a closed outline, at most ``spacing_m`` apart. [m]

    Each edge from vertex ``a`` to ``b`` gets ``n = max(1, ceil(|b - a| / spacing))``
    points ``a + (b - a) i / n``, ``i = 0 .. n-1``: the vertices are included once and
    the points keep the order of the outline.
    """
    outline = np.asarray(outline_en, dtype=float).reshape(-1, 2)
    a = outline
    d = np.roll(outline, -1, axis=0) - a
    n = np.maximum(1, np.ceil(np.hypot(d[:, 0], d[:, 1]) / spacing_m)).astype(np.int64)
    edge = np.repeat(np.arange(len(a)), n)
    start = np.repeat(np.cumsum(n) - n, n)
    t = (np.arange(int(n.sum())) - start) / n[edge]
    return a[edge] + t[:, None] * d[edge]


def _cell_of(points: np.ndarray, east: np.ndarray, north: np.ndarray, res: float):
    """(row, column) of the grid cell that holds each point; -1 where off the grid."""
    i = np.floor((points[:, 0] - (east[0] - 0.5 * res)) / res).astype(np.int64)
    j = np.floor((points[:, 1] - (north[0] - 0.5 * res)) / res).astype(np.int64)
    off = (i < 0) | (i >= len(east)) | (j < 0) | (j >= len(north))
    return np.where(off, -1, j), np.where(off, -1, i)


def _part_cells(poly, outline, east, north, inside, res: float) -> tuple[np.ndarray, np.ndarray]:
    """Cells the area covers in part whose centre lies outside it: their mask, and one
    point inside the area in each (centroid of the part, else a point on its surface).

    The outline passes through every such cell, so the candidates are the cells within one
    cell of the outline. Each candidate's square is intersected with the area; the area is
    first cut down to ever smaller rectangles around the candidates (halving the longer
    side, as a k-d tree does), so that an outline of many vertices costs about
    ``vertices x log(candidates)``, not ``vertices x candidates``.
    """
    import shapely

    # a point of the outline within one cell of a crossed cell (spacing res/2) lies in it
    # or in one of its eight neighbours
    jj, ii = _cell_of(outline_points(outline, 0.5 * res), east, north, res)
    near = np.zeros(inside.shape, dtype=bool)
    near[jj[jj >= 0], ii[jj >= 0]] = True
    cand_j, cand_i = np.nonzero(_dilate(near) & ~inside)
    part = np.zeros(inside.shape, dtype=bool)
    found_j, found_i, reps = [], [], []
    h = 0.5 * res
    stack = [(poly, cand_j, cand_i)]
    while stack:
        geom, cj, ci = stack.pop()
        if not len(cj) or geom.is_empty:
            continue
        if len(cj) > _BOX_BATCH or (len(cj) > _LEAF_CELLS
                                    and shapely.get_num_coordinates(geom) > _LEAF_VERTICES):
            # halve the candidates' extent along its longer side (both halves hold cells:
            # distinct cells span more than one row or column), and cut the area with them
            key = ci if np.ptp(ci) >= np.ptp(cj) else cj
            cut = 0.5 * (int(key.min()) + int(key.max()))
            for side in (key <= cut, key > cut):
                sj, si = cj[side], ci[side]
                rect = shapely.box(east[si.min()] - h, north[sj.min()] - h,
                                   east[si.max()] + h, north[sj.max()] + h)
                stack.append((shapely.intersection(geom, rect), sj, si))
            continue
        x, y = east[ci], north[cj]
        pieces = shapely.intersection(geom, shapely.box(x - h, y - h, x + h, y + h))
        keep = shapely.area(pieces) > _PART_OF_CELL * res * res
        pieces = pieces[keep]
        points = shapely.centroid(pieces)
        off = ~shapely.covers(pieces, points)
        points[off] = shapely.point_on_surface(pieces[off])
        found_j.append(cj[keep])
        found_i.append(ci[keep])
        reps.append(shapely.get_coordinates(points).reshape(-1, 2))
    if not reps:
        return part, np.zeros((0, 2))
    fj, fi, pts = np.concatenate(found_j), np.concatenate(found_i), np.vstack(reps)
    order = np.lexsort((fi, fj))  # row by row, as the grid: the same for every run
    part[fj, fi] = True
    return part, pts[order]


def _surface(poly):
    """``poly`` itself, or the polygonal part of its repair where its edges cross (the site
    reader refuses such outlines; a Python caller may still build one)."""
    import shapely
    from shapely.geometry import MultiPolygon

    if poly.is_valid:
        return poly
    pieces = shapely.get_parts(shapely.get_parts(shapely.make_valid(poly)))  # two levels deep
    parts = [g for g in pieces if g.geom_type == "Polygon"]
    return MultiPolygon(parts)


def build_grid(area: Area, resolution_m: float) -> AreaGrid:
    """The grid of one area: cell centres, the inside and evaluation masks, and the
    outline samples (see the module docstring)."""
    import shapely

    outline = np.asarray(area.outline_en, dtype=float)
    res = float(resolution_m)
    east, north = grid_axes(outline, res)
    ee, nn = np.meshgrid(east, north)
    poly = shapely.Polygon(outline)
    inside = shapely.intersects_xy(poly, ee, nn)
    surface = _surface(poly)
    if area.access == "none" or not surface.area > 0.0:  # not judged, or no surface to sample
        return AreaGrid(east_m=east, north_m=north, inside=inside, evaluate=_dilate(inside))
    part, reps = _part_cells(surface, outline, east, north, inside, res)
    samples = np.vstack([outline_points(outline, res), reps])
    # every cell the area covers, and its neighbours, for zones that reach into every part
    return AreaGrid(east_m=east, north_m=north, inside=inside, evaluate=_dilate(inside | part),
                    samples_en=samples)
