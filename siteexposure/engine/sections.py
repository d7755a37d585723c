"""Elevation cuts: the exposure ratio on the vertical plane through an antenna's boresight.

The plane contains the antenna's radiation centre and its horizontal boresight azimuth.
Its horizontal axis is the signed distance ``d`` along that azimuth from the point
straight below the antenna (positive in front, negative behind); its vertical axis is
the height ``z`` above site ground. A plane point is

    east  = e0 + d * sin(azimuth),   north = n0 + d * cos(azimuth),   up = z.

Values are point values (no spatial averaging: the cut shows the field itself, the
averaging line of the plan view belongs to people standing on floors), summed over all
antennas of the site, for every (limit set, population), governing over the set's
regions like the area grids (:func:`siteexposure.engine.combos.governing`); NaN where a
source that counts is not assessable (within its stand-off).

For the maps, :func:`cut_extent` sizes a cut from the antenna's keep-out distances and the
site's floors, and :func:`adaptive_cut` widens it until the general-public boundary of the
summed field closes inside it.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from siteexposure.containers import Site
from siteexposure.engine.combos import POPULATIONS, ComboTable, build_combos, governing
from siteexposure.engine.evaluate import BLOCK_ELEMENTS, Source, field_densities
from siteexposure.engine.result import SiteResult
from siteexposure.errors import InputError

__all__ = ["adaptive_cut", "cut_extent", "cut_points_enu", "elevation_cut"]

CUT_POINT_BUDGET = 8_000  #: plane points of one map's elevation cut (the models are costly)
CUT_MAX_HALF_M = 120.0  #: widest elevation cut, each side of the antenna [m]


def cut_points_enu(site: Site, antenna_id: str, dist_m: np.ndarray, z_m: np.ndarray) -> np.ndarray:
    """Site-frame points of the cut plane of one antenna.

    Parameters
    ----------
    site : Site
    antenna_id : str
    dist_m : ndarray, shape (nd,)
        Signed distance along the boresight azimuth from below the antenna. [m]
    z_m : ndarray, shape (nz,)
        Heights above site ground. [m]

    Returns
    -------
    ndarray, shape (nz, nd, 3)
        (east, north, up) of every plane point. [m]
    """
    try:
        ant = site.antenna(antenna_id)
    except KeyError as exc:
        known = ", ".join(a.id for a in site.antennas) or "none"
        raise InputError(f"elevation cut: antenna id {antenna_id!r} is not in the site; expected one of {known}") from exc
    a = np.deg2rad(float(ant.azimuth_deg))
    d = np.asarray(dist_m, dtype=float).ravel()
    z = np.asarray(z_m, dtype=float).ravel()
    e0, n0 = float(ant.position_m[0]), float(ant.position_m[1])
    pts = np.empty((len(z), len(d), 3))
    pts[..., 0] = e0 + d[None, :] * np.sin(a)
    pts[..., 1] = n0 + d[None, :] * np.cos(a)
    pts[..., 2] = z[:, None]
    return pts


def elevation_cut(
    site: Site,
    sources: Sequence[Source],
    antenna_id: str,
    *,
    half_width_m: float,
    height_range_m: tuple[float, float],
    resolution_m: float,
    table: ComboTable | None = None,
) -> tuple[np.ndarray, np.ndarray, dict[tuple[str, str], np.ndarray]]:
    """Exposure ratio on the vertical plane through one antenna's boresight azimuth.

    Parameters
    ----------
    site : Site
    sources : sequence of Source
        All radiators of the site with their models
        (:func:`siteexposure.engine.orchestrator.build_sources`).
    antenna_id : str
        The antenna whose boresight azimuth and foot define the plane.
    half_width_m : float
        The cut spans ``-half_width_m .. +half_width_m`` along the azimuth. [m]
    height_range_m : (float, float)
        Lowest and highest height above site ground. [m]
    resolution_m : float
        Spacing of the plane's grid in both directions. [m]
    table : ComboTable, optional
        Limit combinations (built from the site's limit sets when not given).

    Returns
    -------
    dist_m : ndarray, shape (nd,)
        Signed distance along the boresight azimuth (positive in front). [m]
    z_m : ndarray, shape (nz,)
        Height above site ground. [m]
    ratio : dict
        ``(set_id, population) -> ndarray (nz, nd)``: governing exposure ratio, the sum
        over all antennas at each point (no spatial averaging); NaN where not
        assessable. [1]

    Notes
    -----
    Densities come from :func:`siteexposure.engine.evaluate.field_densities` in chunks of at
    most ``BLOCK_ELEMENTS`` (source x point) values, so memory stays bounded.
    """
    half = float(half_width_m)
    lo, hi = (float(v) for v in height_range_m)
    res = float(resolution_m)
    if not (np.isfinite(half) and half > 0):
        raise InputError(f"elevation cut: half_width_m = {half_width_m!r}; expected a positive number of metres")
    if not (np.isfinite(lo) and np.isfinite(hi) and hi > lo):
        raise InputError(f"elevation cut: height_range_m = {height_range_m!r}; expected (low, high) with high > low")
    if not (np.isfinite(res) and res > 0):
        raise InputError(f"elevation cut: resolution_m = {resolution_m!r}; expected a positive number of metres")
    nd = int(np.floor(2 * half / res + 1e-9)) + 1
    nz = int(np.floor((hi - lo) / res + 1e-9)) + 1
    dist = -half + res * np.arange(nd)
    z = lo + res * np.arange(nz)
    pts = cut_points_enu(site, antenna_id, dist, z).reshape(-1, 3)
    if table is None:
        from siteexposure.engine.orchestrator import load_limit_sets

        table = build_combos(load_limit_sets(site), [site.antenna(s.id) for s in sources])
    values = np.full((len(table.combos), len(pts)), np.nan)
    if sources:
        chunk = max(1, BLOCK_ELEMENTS // len(sources))
        for start in range(0, len(pts), chunk):
            s_e, s_h = field_densities(sources, pts[start : start + chunk])
            values[:, start : start + chunk] = table.row_sums(s_e, s_h)
    ratio = {}
    for set_id in dict.fromkeys(c.set_id for c in table.combos):
        for pop in POPULATIONS:
            rows = table.rows_for(set_id, pop)
            if rows:
                best, _ = governing(values, rows)
                ratio[(set_id, pop)] = best.reshape(nz, nd)
    return dist, z, ratio


def cut_extent(result: SiteResult, antenna_id: str) -> tuple[float, tuple[float, float], float]:
    """Half width, height range and resolution of an antenna's elevation cut. [m]

    Wide enough for the largest general-public keep-out distance along the boresight
    (front or behind) and high enough for the one above and below, with the site's
    floors in view; the resolution keeps the cut within :data:`CUT_POINT_BUDGET` points.
    """
    site = result.site
    rec = next(r for r in result.antennas if r.antenna.id == antenna_id)
    ant = rec.antenna
    ko = [d for (_, pop), d in rec.keep_out_m.items() if pop == "general"]
    horiz = max([max(d.get("front", 0.0), d.get("behind", 0.0)) for d in ko] + [0.0])
    up = max([d.get("above", 0.0) for d in ko] + [0.0])
    down = max([d.get("below", 0.0) for d in ko] + [0.0])
    half = float(min(max(10.0, 1.3 * horiz + 2.0), CUT_MAX_HALF_M))
    z0 = float(ant.position_m[2])
    floors = [a.floor_m for a in site.areas] or [z0 - 3.0]
    lo = max(0.0, min(min(floors) - 1.0, z0 - 1.3 * down - 1.0))
    hi = max(z0 + 1.3 * up + 1.5, max(floors) + 3.0, z0 + 3.0)
    lo, hi = _balanced(lo, hi, half)
    return half, (lo, hi), _cut_resolution(half, lo, hi)


def _balanced(lo: float, hi: float, half: float) -> tuple[float, float]:
    """Grow a height range to at least 0.3 of the cut's width (readable maps). [m]"""
    need = 0.3 * 2.0 * half
    if hi - lo < need:
        lo = max(0.0, lo - 0.5 * (need - (hi - lo)))
        hi = lo + need
    return lo, hi


def _cut_resolution(half: float, lo: float, hi: float) -> float:
    """Grid spacing that keeps a cut within :data:`CUT_POINT_BUDGET` points. [m]"""
    return float(f"{max(0.05, math.sqrt(2 * half * (hi - lo) / CUT_POINT_BUDGET)):.2g}")


def adaptive_cut(result: SiteResult, sources: Sequence[Source], antenna_id: str, *,
                 table: ComboTable | None = None, rounds: int = 3):
    """The elevation cut of one antenna for its map, widened until the general-public
    boundary of the summed field (every set) closes inside it, or the width limit
    :data:`CUT_MAX_HALF_M` is reached.

    :func:`cut_extent` starts from the antenna's own keep-out distances; co-located
    antennas add up, so the sum can reach further. Returns what :func:`elevation_cut`
    returns.
    """
    half, (lo, hi), res = cut_extent(result, antenna_id)
    for _ in range(rounds + 1):
        cut = elevation_cut(result.site, sources, antenna_id, half_width_m=half,
                            height_range_m=(lo, hi), resolution_m=res, table=table)
        gen = [g for (_, pop), g in cut[2].items() if pop == "general"]
        edge = any(np.nanmax(np.r_[g[:, 0], g[:, -1], -np.inf]) > 1.0 for g in gen)
        top = any(np.nanmax(np.r_[g[-1, :], -np.inf]) > 1.0 for g in gen)
        if not (edge or top) or half >= CUT_MAX_HALF_M:
            return cut
        if edge:
            half = min(1.6 * half, CUT_MAX_HALF_M)
        if top:
            hi = lo + 1.4 * (hi - lo)
        lo, hi = _balanced(lo, hi, half)
        res = _cut_resolution(half, lo, hi)
    return cut
