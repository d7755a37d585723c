"""Evaluation grids over the areas people stand on.

Each area gets a rectangular grid of cell centres at the site's resolution over the
bounding box of its outline, plus one cell of margin so that contours close cleanly at
the edges. Cells whose centre lies inside the outline (or on it) are evaluated; the
margin ring is evaluated too, so that maps and contours are not cut short, but it never
counts towards an area's verdict.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from siteexposure.containers import Area

#: refuse grids larger than this many evaluation points per area (see estimate_points)
MAX_POINTS_PER_AREA = 20_000_000


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


def estimate_points(area: Area, resolution_m: float) -> int:
    """Number of cell centres the grid of ``area`` would have (before masking)."""
    east, north = grid_axes(np.asarray(area.outline_en, float), resolution_m)
    return int(east.size * north.size)


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
