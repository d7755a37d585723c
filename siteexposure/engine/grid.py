"""Evaluation grids over the areas people stand on.

Each area gets a rectangular grid of cell centres at the site's resolution over the
bounding box of its outline, plus one cell of margin so that contours close cleanly at
the edges. Cells whose centre lies inside the outline (or on it) are evaluated; the
margin ring is evaluated too, so that maps and contours are not cut short, but it never
counts towards an area's verdict.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass

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
    evaluate: np.ndarray  #: (ny, nx) bool: inside, dilated by one cell

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


def build_grid(area: Area, resolution_m: float) -> AreaGrid:
    """The grid of one area: cell centres, the inside mask and the evaluation mask."""
    import shapely

    outline = np.asarray(area.outline_en, dtype=float)
    east, north = grid_axes(outline, resolution_m)
    ee, nn = np.meshgrid(east, north)
    poly = shapely.Polygon(outline)
    inside = shapely.intersects_xy(poly, ee, nn)
    evaluate = inside.copy()
    # dilate by one cell (4-neighbours and diagonals) for clean contours at the edges
    pad = np.pad(inside, 1)
    for di in (-1, 0, 1):
        for dj in (-1, 0, 1):
            evaluate |= pad[1 + di : 1 + di + inside.shape[0], 1 + dj : 1 + dj + inside.shape[1]]
    return AreaGrid(east_m=east, north_m=north, inside=inside, evaluate=evaluate)
