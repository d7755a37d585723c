"""Keep-out zones: where the exposure ratio of an area's grid reaches a level.

A zone is the part of an area (its outline, in local east/north metres) where the
governing exposure ratio of one limit set and population is above one level. Zones are
*super-level sets*, nested by level, not bands: the zone "above the occupational limit"
lies inside the zone "above the general-public limit" of the same set.

Levels contoured on every evaluated area (``access`` public or worker), for every limit
set of the site:

======================  ============  ======================================================
kind                    population    level (exposure ratio)
======================  ============  ======================================================
``general-limit``       general       1 (the general-public limit)
``occupational-limit``  occupational  1 (the occupational limit)
``occupational-10x``    occupational  10 (the threshold of Category Four, see below)
``extra``               the area's    each of ``site.zone_levels`` (e.g. 0.05, 0.5, 10),
                        own           on the population the area is judged against
``not-assessable``      the area's    NaN: where the models cannot give a number
======================  ============  ======================================================

How a zone is made
    The grid (cell centres, with one evaluated margin ring beyond the outline so that
    contours close) is handed to ``contourpy`` (filled contours between the level and
    +inf, ``FillType.OuterOffset``: each outer ring with its holes), turned into shapely
    polygons and clipped to the area outline. No contour tracer of our own.

A zone agrees with the area's verdict -- our decision
    The verdict is judged on points (the inside cell centres and the outline samples of
    :mod:`siteexposure.engine.grid`), so the zone is tied to the same points:

    * a piece of the clipped contour that holds no judged point above the level is
      dropped: it is only the interpolation between the margin ring (outside the area)
      and the cells inside, and the area was not found to exceed there;
    * the part of the area within half a cell (a square of side ``resolution_m``) of each
      outline sample above the level that the contour leaves out is added, so a narrow
      part (a walkway, a ledge, the arm of an L) whose samples exceed is inside the zone.

    Hence a zone of a level exists exactly where a judged point exceeds that level, and
    the worst point of an exceeding area lies inside its zone.

Cells the models cannot assess (NaN; within an antenna's stand-off) -- our decision
    They are never a pass. The region of the outline not covered by grid quads whose
    corners all carry a number (``contourpy`` filled contour of the whole valid range),
    with the half-cell squares of the outline samples the models cannot assess, is

    * added to EVERY exceedance zone of that grid (a keep-out zone is never made
      smaller by not knowing), and
    * emitted once more as its own ``not-assessable`` zone so that maps and GIS can
      mark it.

Mitigation category (47 CFR 1.1307(b)(4))
    Each zone carries the category that holds everywhere in it: the lowest category of
    the judged points above its level (not-assessable points excluded), from the
    governing ratios of the same set to its general (R_g) and occupational (R_o) limits:

    ============  =================================  ==============================
    category      condition                          sign word
    ============  =================================  ==============================
    One           R_g <= 1                           INFORMATION (optional)
    Two           R_g > 1 and R_o <= 1               NOTICE
    Three         1 < R_o <= 10                      CAUTION
    Four          R_o > 10                           WARNING (DANGER: see below)
    ============  =================================  ==============================

    The category scheme is the FCC's, defined against the 47 CFR 1.1310 limits; for
    other limit sets it is applied by analogy with that set's own general and
    occupational limits (the report says so). Only words are carried, no colours.

References
----------
.. [1] 47 CFR 1.1307(b)(4), "Mitigation", as amended by FCC 19-126 (Resolution of
       Notice of Inquiry, Second Report and Order, ET Docket Nos. 03-137 and 13-84,
       adopted Nov. 27 2019, released Dec. 4 2019), published 85 FR 18131 (April 1,
       2020, FR Doc. 2020-02745). The Federal Register summary confirms that the order
       "establish[es] post-evaluation RF exposure mitigation procedures (e.g., signage)".
       Confirmed: Category One (at or below the general-population limit) needs no
       mitigation, an INFORMATION sign is optional; signage and access-control duties
       attach in Categories Two to Four. From memory (rule text not retrieved): the
       boundaries of Two (above general, at most occupational), Three (above
       occupational, at most ten times occupational) and Four (above ten times
       occupational) and the sign words NOTICE, CAUTION, WARNING or DANGER.
.. [2] ITU, "Shaping smarter and more sustainable cities" (2016), Table 3 "Guidance on
       use of RF warning signs", adapted from IEEE C95.7-2005 and IEEE C95.2-1999:
       Notice (may exceed the public reference levels), Caution (may exceed the worker
       reference levels), Warning (may exceed the worker levels by a factor of 10),
       Danger (normally only where immediate and serious injury will occur, e.g. RF
       burns). The same four-step structure at the same thresholds.
.. [3] contourpy documentation, ``contour_generator`` and ``FillType.OuterOffset``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from siteexposure.engine.result import POPULATIONS, AreaResult, SiteResult

__all__ = [
    "CATEGORY_NAMES",
    "SIGN_WORDS",
    "Zone",
    "barrier_length_m",
    "compute_zones",
    "mitigation_category",
]

#: 47 CFR 1.1307(b)(4) category names (0: not assessable, our own word)
CATEGORY_NAMES = {0: "not assessable", 1: "Category One", 2: "Category Two",
                  3: "Category Three", 4: "Category Four"}
#: the sign word of each category (Category Four: WARNING; DANGER is a reviewer's choice
#: where immediate serious injury, e.g. an RF burn on contact, is possible)
SIGN_WORDS = {0: "", 1: "INFORMATION", 2: "NOTICE", 3: "CAUTION", 4: "WARNING"}
CATEGORY_FOUR_FACTOR = 10.0  #: Category Four starts above ten times the occupational limit
KIND_ORDER = ("general-limit", "occupational-limit", "occupational-10x", "extra", "not-assessable")
_MIN_PIECE_M2 = 1e-6  #: polygon pieces smaller than this (1 mm^2) are numerical slivers


@dataclass(frozen=True)
class Zone:
    """The part of one area where one exposure ratio exceeds one level.

    Attributes
    ----------
    area : str
        Name of the area.
    access : str
        ``public`` or ``worker``.
    floor_m : float
        Floor height of the area above site ground. [m]
    set_id : str
        Limit-set id.
    population : str
        ``general`` or ``occupational``: the limit the level is a multiple of.
    level : float
        Exposure-ratio level (NaN for the not-assessable zone). [1]
    kind : str
        One of :data:`KIND_ORDER`.
    geometry : shapely Polygon or MultiPolygon
        Local east/north metres, clipped to the area outline; holes where the ratio
        dips below the level.
    area_m2 : float
        Plan area of ``geometry``. [m^2]
    category : int
        47 CFR 1.1307(b)(4) category 1-4 holding everywhere in the zone; 0 for the
        not-assessable zone.
    sign_word : str
        INFORMATION, NOTICE, CAUTION or WARNING ("" for not assessable).
    """

    area: str
    access: str
    floor_m: float
    set_id: str
    population: str
    level: float
    kind: str
    geometry: Any
    area_m2: float
    category: int
    sign_word: str

    @property
    def category_name(self) -> str:
        return CATEGORY_NAMES[self.category]

    @property
    def label(self) -> str:
        """Short text for map legends and GIS names."""
        if self.kind == "not-assessable":
            return "not assessable"
        if self.kind == "general-limit":
            return "general-public limit"
        if self.kind == "occupational-limit":
            return "occupational limit"
        if self.kind == "occupational-10x":
            return "10 x occupational limit"
        return f"{self.level:g} x {self.population} limit"


def mitigation_category(r_general, r_occupational) -> np.ndarray:
    """47 CFR 1.1307(b)(4) category (1-4) of exposure ratios to the general and
    occupational limits of one set; broadcasts; 0 where either is NaN.

    Parameters
    ----------
    r_general, r_occupational : array_like
        Exposure ratios to the general-public and to the occupational limit. [1]

    Returns
    -------
    ndarray of int
        1: R_g <= 1; 2: R_g > 1 and R_o <= 1; 3: 1 < R_o <= 10; 4: R_o > 10.

    References
    ----------
    47 CFR 1.1307(b)(4) as amended by FCC 19-126 (85 FR 18131, 2020); see the module
    docstring for what was confirmed and what is from memory.

    Examples
    --------
    >>> mitigation_category([0.5, 2.0, 6.0, 60.0], [0.1, 0.4, 1.2, 12.0]).tolist()
    [1, 2, 3, 4]
    """
    rg = np.asarray(r_general, dtype=float)
    ro = np.asarray(r_occupational, dtype=float)
    rg, ro = np.broadcast_arrays(rg, ro)
    cat = np.where(ro > CATEGORY_FOUR_FACTOR, 4, np.where(ro > 1.0, 3, np.where(rg > 1.0, 2, 1)))
    return np.where(np.isfinite(rg) & np.isfinite(ro), cat, 0).astype(int)


# ---------------------------------------------------------------------------------------
# geometry helpers (shapely and contourpy are imported where used: import stays fast)
# ---------------------------------------------------------------------------------------


def _polygonal(geom):
    """The polygonal part of ``geom`` as a Polygon or MultiPolygon (empty Polygon if none)."""
    import shapely
    from shapely.geometry import MultiPolygon, Polygon

    if geom is None or geom.is_empty:
        return Polygon()
    parts = [p for p in shapely.get_parts(geom) if p.geom_type in ("Polygon", "MultiPolygon")]
    polys = []
    for p in parts:
        polys.extend(shapely.get_parts(p) if p.geom_type == "MultiPolygon" else [p])
    polys = [p for p in polys if p.area > _MIN_PIECE_M2]
    if not polys:
        return Polygon()
    if len(polys) == 1:
        return polys[0]
    return MultiPolygon(polys)


def _filled(gen, lower: float, upper: float):
    """contourpy filled contour ``lower < z <= upper`` as one shapely geometry."""
    import shapely
    from shapely.geometry import Polygon

    points, offsets = gen.filled(lower, upper)
    polys = []
    for pts, offs in zip(points, offsets, strict=True):
        rings = [pts[offs[i] : offs[i + 1]] for i in range(len(offs) - 1)]
        rings = [r for r in rings if len(r) >= 4]
        if not rings:
            continue
        poly = Polygon(rings[0], rings[1:])
        if not poly.is_valid:
            poly = shapely.make_valid(poly)
        polys.append(poly)
    if not polys:
        return Polygon()
    return _polygonal(shapely.union_all(polys))


def _outline_polygon(area):
    import shapely
    from shapely.geometry import Polygon

    poly = Polygon(np.asarray(area.outline_en, dtype=float))
    return poly if poly.is_valid else _polygonal(shapely.make_valid(poly))


def _generator(ar: AreaResult, grid: np.ndarray):
    import contourpy

    z = np.ma.masked_invalid(np.asarray(grid, dtype=float))
    return contourpy.contour_generator(
        np.asarray(ar.east_m, float), np.asarray(ar.north_m, float), z,
        fill_type=contourpy.FillType.OuterOffset, corner_mask=True,
    )


# ---------------------------------------------------------------------------------------
# zones
# ---------------------------------------------------------------------------------------


def _levels_for(area_population: str, extra: tuple[float, ...]) -> list[tuple[str, str, float]]:
    """(kind, population, level) of one area, duplicates removed, in KIND_ORDER."""
    out = [("general-limit", "general", 1.0), ("occupational-limit", "occupational", 1.0),
           ("occupational-10x", "occupational", CATEGORY_FOUR_FACTOR)]
    seen = {(p, lv) for _, p, lv in out}
    for lv in sorted({float(v) for v in extra if np.isfinite(v) and v > 0}):
        if (area_population, lv) not in seen:
            out.append(("extra", area_population, lv))
            seen.add((area_population, lv))
    return out


def _zone_category(rg, ro, own, level) -> int:
    """Lowest category of the judged points (1-D arrays) whose own ratio exceeds ``level``."""
    cat = mitigation_category(rg, ro)
    sel = np.isfinite(own) & (own > level) & (cat > 0)
    if sel.any():
        return int(cat[sel].min())
    # no judged point exceeds the level (a zone made of not-assessable parts only): the
    # category just above the level, with the ratio of the two grids at the hottest point
    finite = np.isfinite(rg) & np.isfinite(ro) & np.isfinite(own) & (own > 0)
    if not finite.any():
        return 0
    j = np.flatnonzero(finite)[int(np.argmax(own[finite]))]
    scale = level * (1.0 + 1e-9) / own[j]
    return int(mitigation_category(rg[j] * scale, ro[j] * scale))


def _resolution(ar: AreaResult) -> float:
    for axis in (ar.east_m, ar.north_m):
        if len(axis) > 1:
            return float(axis[1] - axis[0])
    return 1.0


def _sample_patches(points: np.ndarray, res: float, outline):
    """The part of the area within half a cell (a square of side ``res``) of each point."""
    import shapely
    from shapely.geometry import Polygon

    if not len(points):
        return Polygon()
    h = 0.5 * res
    squares = shapely.box(points[:, 0] - h, points[:, 1] - h, points[:, 0] + h, points[:, 1] + h)
    return _polygonal(shapely.union_all(squares).intersection(outline))


def _supported(geom, cells: np.ndarray, samples: np.ndarray, tol: float):
    """The pieces of ``geom`` that hold a judged point above the level: an inside cell
    centre (``cells``) or an outline sample (``samples``, within ``tol``: they lie on the
    outline, where rounding may put them a hair outside the clipped piece). Pieces
    without one are the linear interpolation between the grid's margin ring (outside the
    area) and the cells inside, not a place where the area was found to exceed."""
    import shapely

    keep = []
    sample_pts = shapely.points(samples) if len(samples) else None
    for piece in shapely.get_parts(geom):
        x0, y0, x1, y1 = piece.bounds
        near = ((cells[:, 0] >= x0) & (cells[:, 0] <= x1) & (cells[:, 1] >= y0)
                & (cells[:, 1] <= y1))
        if near.any() and shapely.intersects_xy(piece, cells[near, 0], cells[near, 1]).any():
            keep.append(piece)
        elif sample_pts is not None and shapely.dwithin(piece, sample_pts, tol).any():
            keep.append(piece)
    return _polygonal(shapely.union_all(keep)) if keep else _polygonal(None)


def _outside(geom, points: np.ndarray, tol: float) -> np.ndarray:
    """Which of ``points`` lie farther than ``tol`` from ``geom``."""
    import shapely

    if geom.is_empty:
        return np.ones(len(points), dtype=bool)
    shapely.prepare(geom)
    return ~shapely.dwithin(geom, shapely.points(points), tol)


def _judged(ar: AreaResult, key) -> tuple[np.ndarray, np.ndarray]:
    """Ratios of ``key`` at the inside cell centres and at the outline samples."""
    grid = ar.ratio[key]
    samples = ar.sample_ratio.get(key, np.full(len(ar.samples_en), np.nan))
    return grid[ar.inside], np.asarray(samples, float)


def _above(ar: AreaResult, key, level: float) -> tuple[np.ndarray, np.ndarray]:
    """East/north of the inside cell centres and of the outline samples above ``level``."""
    grid = ar.ratio[key]
    jj, ii = np.nonzero(ar.inside & (grid > level))
    vals = ar.sample_ratio.get(key, np.full(len(ar.samples_en), np.nan))
    samples = np.asarray(ar.samples_en, float).reshape(-1, 2)[np.asarray(vals) > level]
    return np.column_stack([ar.east_m[ii], ar.north_m[jj]]), samples


def _area_zones(result: SiteResult, ar: AreaResult) -> list[Zone]:
    area = ar.area
    own_pop = area.population
    outline = _outline_polygon(area)
    levels = _levels_for(own_pop, result.site.zone_levels)
    res = _resolution(ar)
    tol = 1e-6 * max(res, 1e-3)
    samples_en = np.asarray(ar.samples_en, float).reshape(-1, 2)
    zones: list[Zone] = []
    for set_id in result.site.limits:
        rg = ar.ratio.get((set_id, "general"))
        ro = ar.ratio.get((set_id, "occupational"))
        if rg is None or ro is None:
            continue
        judged = {pop: np.concatenate(_judged(ar, (set_id, pop))) for pop in POPULATIONS}
        gens, unknown = {}, {}
        for pop, grid in (("general", rg), ("occupational", ro)):
            gen = _generator(ar, grid)
            valid = _filled(gen, -np.inf, np.inf)
            gens[pop] = gen
            unknown[pop] = _polygonal(outline.difference(valid))
            bad = np.isnan(_judged(ar, (set_id, pop))[1])
            if bad.any():  # outline samples the models cannot assess
                unknown[pop] = _polygonal(unknown[pop].union(
                    _sample_patches(samples_en[bad], res, outline)))
        for kind, pop, level in levels:
            cells, samples = _above(ar, (set_id, pop), level)
            geom = _polygonal(_filled(gens[pop], level, np.inf).intersection(outline))
            geom = _supported(geom, cells, samples, tol)
            if len(samples):  # every outline sample above the level lies in the zone
                out = _outside(geom, samples, tol)
                if out.any():
                    geom = _polygonal(geom.union(_sample_patches(samples[out], res, outline)))
            if not unknown[pop].is_empty:
                geom = _polygonal(geom.union(unknown[pop]))
            if geom.is_empty:
                continue
            own = judged[pop]
            cat = _zone_category(judged["general"], judged["occupational"], own, level)
            zones.append(Zone(area.name, area.access, float(area.floor_m), set_id, pop,
                              float(level), kind, geom, float(geom.area), cat, SIGN_WORDS[cat]))
        na = unknown[own_pop]
        if not na.is_empty:
            zones.append(Zone(area.name, area.access, float(area.floor_m), set_id, own_pop,
                              math.nan, "not-assessable", na, float(na.area), 0, SIGN_WORDS[0]))
    return zones


def compute_zones(result: SiteResult) -> list[Zone]:
    """Keep-out zones of every evaluated area of ``result``.

    Parameters
    ----------
    result : SiteResult
        From :func:`siteexposure.engine.orchestrator.evaluate_site`.

    Returns
    -------
    list of Zone
        Non-empty zones only, ordered by area (as in the site), limit set (as in the
        site), then kind (:data:`KIND_ORDER`) and level. Areas with ``access = "none"``
        have none.

    Notes
    -----
    See the module docstring for the levels, the contouring (contourpy filled contours,
    shapely clipping), the treatment of not-assessable cells and the category rule.
    """
    zones: list[Zone] = []
    for ar in result.areas:
        if not ar.evaluated or not ar.ratio or ar.area.population is None:
            continue
        zones.extend(_area_zones(result, ar))
    return zones


def barrier_length_m(result: SiteResult, zones: list[Zone]) -> dict[str, dict[str, Any]]:
    """Length of the general-public boundary that lies inside public areas.

    This is the barrier (rope, rail, fence) a site owner would install to keep the public
    out of the zone above the general-public limit; boundary pieces that run along the
    area's own edge (a parapet, a wall) need none and are not counted. Not-assessable
    parts are inside the zone (see :func:`compute_zones`), so the barrier goes round
    them too.

    Parameters
    ----------
    result : SiteResult
    zones : list of Zone
        From :func:`compute_zones`.

    Returns
    -------
    dict
        ``{set_id: {"total_m": float, "by_area_m": {area name: float}}}`` for every limit
        set of the site; 0 where no public area has such a zone. [m]
    """
    out: dict[str, dict[str, Any]] = {
        sid: {"total_m": 0.0, "by_area_m": {}} for sid in result.site.limits
    }
    outlines = {ar.area.name: ar.area for ar in result.areas}
    for z in zones:
        if z.kind != "general-limit" or z.access != "public" or z.area not in outlines:
            continue
        outline = _outline_polygon(outlines[z.area])
        scale = max(math.sqrt(max(outline.area, 1e-12)), 1.0)
        edge = outline.boundary.buffer(1e-7 * scale)
        length = float(z.geometry.boundary.difference(edge).length)
        entry = out.setdefault(z.set_id, {"total_m": 0.0, "by_area_m": {}})
        entry["by_area_m"][z.area] = entry["by_area_m"].get(z.area, 0.0) + length
        entry["total_m"] += length
    return out
