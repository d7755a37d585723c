"""Keep-out zones from exposure-ratio grids (siteexposure.engine.zones).

The grids here are analytic fields whose super-level sets are known exactly (discs,
annuli), so the contouring, hole handling, clipping and not-assessable rules are checked
against geometry, not against our own numbers. The category thresholds are those of
47 CFR 1.1307(b)(4) as amended by FCC 19-126 (85 FR 18131, 2020): Category One at or
below the general-population limit (confirmed); Two above it up to the occupational
limit, Three above the occupational limit up to ten times it, Four above ten times it,
with the sign words NOTICE, CAUTION, WARNING (from memory: rule text not retrieved).
"""

import math

import numpy as np
import pytest

from siteexposure.containers import Area, Site
from siteexposure.engine.result import AreaResult, SiteResult
from siteexposure.engine.zones import (
    CATEGORY_NAMES,
    SIGN_WORDS,
    barrier_length_m,
    compute_zones,
    mitigation_category,
)

RES = 0.1
SET = "fcc-1310"
#: occupational limit / general limit of 47 CFR 1.1310 Table 1 at 1500-100000 MHz:
#: 5 mW/cm^2 over 1 mW/cm^2
OCC_OVER_GEN = 5.0


def _axes(lo=-10.0, hi=10.0, res=RES):
    k = np.arange(math.floor(lo / res), math.ceil(hi / res))
    return (k + 0.5) * res


def _result(rg, east, north, outline, access="public", zone_levels=(), ro=None):
    import shapely

    area = Area("Deck", access, 0.0, np.asarray(outline, float))
    ee, nn = np.meshgrid(east, north)
    inside = shapely.intersects_xy(shapely.Polygon(area.outline_en), ee, nn)
    ro = rg / OCC_OVER_GEN if ro is None else ro
    ar = AreaResult(area, east, north, inside, np.isfinite(rg),
                    {(SET, "general"): rg, (SET, "occupational"): ro})
    site = Site(name="synthetic", origin_lat=45.0, origin_lon=7.0, limits=(SET,), antennas=(),
                areas=(area,), zone_levels=tuple(zone_levels))
    return SiteResult(site, [], [ar], [], {}, {})


def _radial(east, north, centre, r0):
    """Exposure ratio (r0 / r)^2: a far-field inverse-square field with R = 1 at r0."""
    ee, nn = np.meshgrid(east, north)
    r = np.hypot(ee - centre[0], nn - centre[1])
    return (r0 / np.maximum(r, 1e-6)) ** 2


SQUARE = [[-9.5, -9.5], [9.5, -9.5], [9.5, 9.5], [-9.5, 9.5]]


def _by_kind(zones, kind, level=None):
    out = [z for z in zones if z.kind == kind and (level is None or z.level == level)]
    assert len(out) == 1, [(z.kind, z.level) for z in zones]
    return out[0]


def test_category_thresholds_of_1307b4():
    rg = np.array([0.2, 1.0, 1.0001, 5.0, 5.0001, 50.0, 50.0001, np.nan])
    cat = mitigation_category(rg, rg / OCC_OVER_GEN)
    assert cat.tolist() == [1, 1, 2, 2, 3, 3, 4, 0]
    assert [SIGN_WORDS[c] for c in (1, 2, 3, 4)] == ["INFORMATION", "NOTICE", "CAUTION", "WARNING"]
    assert CATEGORY_NAMES[4] == "Category Four"


def test_disc_zones_have_the_radius_of_the_level():
    """R = (r0/r)^2 exceeds a level L inside the disc r < r0 / sqrt(L)."""
    east = north = _axes()
    centre, r0 = (0.3, -0.2), 4.0
    res = _result(_radial(east, north, centre, r0), east, north, SQUARE)
    zones = compute_zones(res)
    gen = _by_kind(zones, "general-limit")
    occ = _by_kind(zones, "occupational-limit")
    ten = _by_kind(zones, "occupational-10x")
    for z, radius in ((gen, r0), (occ, r0 / math.sqrt(OCC_OVER_GEN)), (ten, r0 / math.sqrt(10 * OCC_OVER_GEN))):
        assert z.geometry.geom_type == "Polygon"
        assert z.area_m2 == pytest.approx(math.pi * radius**2, rel=5e-3)
        ring = np.asarray(z.geometry.exterior.coords)
        dist = np.hypot(ring[:, 0] - centre[0], ring[:, 1] - centre[1])
        assert np.all(np.abs(dist - radius) < 0.01)
    assert (gen.category, gen.sign_word) == (2, "NOTICE")
    assert (occ.category, occ.sign_word) == (3, "CAUTION")
    assert (ten.category, ten.sign_word) == (4, "WARNING")
    assert gen.population == "general" and occ.population == "occupational"
    assert not [z for z in zones if z.kind == "not-assessable"]


def test_annulus_gives_a_polygon_with_a_hole():
    """R = 2 exp(-(r-5)^2) >= 1 on the ring |r - 5| <= sqrt(ln 2)."""
    east = north = _axes()
    ee, nn = np.meshgrid(east, north)
    rg = 2.0 * np.exp(-((np.hypot(ee, nn) - 5.0) ** 2))
    z = _by_kind(compute_zones(_result(rg, east, north, SQUARE)), "general-limit")
    assert z.geometry.geom_type == "Polygon"
    assert len(z.geometry.interiors) == 1
    a = math.sqrt(math.log(2.0))
    assert z.area_m2 == pytest.approx(math.pi * ((5 + a) ** 2 - (5 - a) ** 2), rel=5e-3)
    hole = np.asarray(z.geometry.interiors[0].coords)
    assert np.allclose(np.hypot(hole[:, 0], hole[:, 1]), 5 - a, atol=0.01)


def test_zone_is_clipped_to_the_area_outline():
    east = north = _axes()
    outline = [[0.0, -9.5], [9.5, -9.5], [9.5, 9.5], [0.0, 9.5]]  # the disc's centre on the west edge
    res = _result(_radial(east, north, (0.0, 0.0), 3.0), east, north, outline)
    z = _by_kind(compute_zones(res), "general-limit")
    assert z.area_m2 == pytest.approx(0.5 * math.pi * 9.0, rel=5e-3)
    minx = z.geometry.bounds[0]
    assert minx >= -1e-9


def test_not_assessable_cells_are_inside_every_zone_and_marked():
    """NaN is never a pass: the unknown block joins each exceedance zone and has its own zone."""
    east = north = _axes()
    rg = _radial(east, north, (-4.0, 0.0), 2.0)
    block_e = (east > 4.0) & (east < 5.0)  # 10 x 10 cells far from the disc
    block_n = (north > 2.0) & (north < 3.0)
    rg[np.ix_(block_n, block_e)] = np.nan
    zones = compute_zones(_result(rg, east, north, SQUARE))
    from shapely.geometry import Point

    na = _by_kind(zones, "not-assessable")
    assert (na.category, na.sign_word) == (0, "")
    assert math.isnan(na.level)
    k = 10
    assert (k * RES) ** 2 < na.area_m2 < ((k + 2) * RES) ** 2
    for z in zones:
        assert z.geometry.contains(Point(4.5, 2.5)), z.kind
    gen = _by_kind(zones, "general-limit")
    assert gen.area_m2 == pytest.approx(math.pi * 4.0 + na.area_m2, rel=5e-3)
    assert gen.category == 2  # the category comes from the assessable cells


def test_extra_levels_refer_to_the_area_population():
    east = north = _axes()
    rg = _radial(east, north, (0.0, 0.0), 2.0)
    pub = compute_zones(_result(rg, east, north, SQUARE, zone_levels=(0.5,)))
    wrk = compute_zones(_result(rg, east, north, SQUARE, access="worker", zone_levels=(0.5,)))
    zp = _by_kind(pub, "extra", 0.5)
    zw = _by_kind(wrk, "extra", 0.5)
    assert zp.population == "general" and zw.population == "occupational"
    assert zp.area_m2 == pytest.approx(math.pi * 4.0 * 2.0, rel=5e-3)  # r < 2 sqrt(2)
    assert zw.area_m2 == pytest.approx(math.pi * 4.0 * 2.0 / OCC_OVER_GEN, rel=5e-3)
    assert zp.category == 1 and zw.category == 2  # 0.5 x occupational = 2.5 x general
    # an extra level equal to a standard one is not repeated
    dup = compute_zones(_result(rg, east, north, SQUARE, access="worker", zone_levels=(10.0,)))
    assert not [z for z in dup if z.kind == "extra"]


@pytest.mark.parametrize("k", [1.5, 3.0, 10.0])
def test_more_power_never_shrinks_a_zone(k):
    """Exposure ratios are linear in power: every zone at k P contains the zone at P."""
    east = north = _axes()
    rg = _radial(east, north, (1.0, 0.5), 2.5) + _radial(east, north, (-3.0, -2.0), 1.5)
    base = {(z.kind, z.level): z for z in compute_zones(_result(rg, east, north, SQUARE))}
    more = {(z.kind, z.level): z for z in compute_zones(_result(k * rg, east, north, SQUARE))}
    for key, z in base.items():
        assert more[key].area_m2 >= z.area_m2
        assert more[key].geometry.buffer(1e-6).contains(z.geometry)


def test_barrier_runs_round_the_zone_inside_public_areas_only():
    east = north = _axes()
    r0 = 3.0
    inside = _result(_radial(east, north, (1.0, 1.0), r0), east, north, SQUARE)
    b = barrier_length_m(inside, compute_zones(inside))
    assert b[SET]["total_m"] == pytest.approx(2 * math.pi * r0, rel=5e-3)
    assert b[SET]["by_area_m"] == {"Deck": pytest.approx(b[SET]["total_m"])}
    # centred on the west edge: only the half circle inside needs a barrier, not the edge
    outline = [[0.0, -9.5], [9.5, -9.5], [9.5, 9.5], [0.0, 9.5]]
    edge = _result(_radial(east, north, (0.0, 0.0), r0), east, north, outline)
    assert barrier_length_m(edge, compute_zones(edge))[SET]["total_m"] == pytest.approx(math.pi * r0, rel=5e-3)
    worker = _result(_radial(east, north, (1.0, 1.0), r0), east, north, SQUARE, access="worker")
    assert barrier_length_m(worker, compute_zones(worker))[SET]["total_m"] == 0.0


def test_an_area_below_every_level_has_no_zones():
    east = north = _axes()
    rg = 0.01 * np.ones((len(north), len(east)))
    assert compute_zones(_result(rg, east, north, SQUARE)) == []


def test_an_area_the_models_cannot_assess_at_all_is_one_keep_out_zone():
    east = north = _axes(-3.0, 3.0)
    rg = np.full((len(north), len(east)), np.nan)
    outline = [[-2.5, -2.5], [2.5, -2.5], [2.5, 2.5], [-2.5, 2.5]]
    zones = compute_zones(_result(rg, east, north, outline))
    assert {z.kind for z in zones} == {"general-limit", "occupational-limit", "occupational-10x",
                                       "not-assessable"}
    for z in zones:
        assert z.area_m2 == pytest.approx(25.0)  # the whole outline, in every zone
        assert (z.category, z.sign_word) == (0, "")  # no cell tells the category: unknown
