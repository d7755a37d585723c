"""Laws that hold for any site, as property tests over random small sites.

Random sites: one rectangular area on a 1 m or 0.5 m lattice, one to three antennas
(isotropic or 3GPP TR 38.901 element-pattern panels, far-field model) at random positions,
azimuths, tilts, frequencies and powers above it, one receptor; one or two limit sets.

Sources of the laws
-------------------
* Power density is proportional to the power fed to the antenna: S = P G / (4 pi R^2),
  FCC OET Bulletin 65, Ed. 97-01, eq. (3) (the far-field model used here).
* Exposure ratios of several sources add: sum_i S_i / S_limit(f_i) <= 1, 47 CFR 1.1310
  (fractions of the limit summed over transmitters; OET-65 Ed. 97-01, "multiple-transmitter
  sites", from memory for the section) and ICNIRP 2020 (simultaneous exposure, summation
  of exposure ratios; from memory for the equation number). Each term is >= 0, so adding a
  source or raising its power can only raise the sum.
* Rotating or translating the whole site moves every field point with it: the models depend
  only on the vector from the antenna to the point in the antenna's own frame -- common
  practice (invariance of free-space propagation under rigid motions). The grid lattice is
  anchored at the origin with cell centres at (k + 1/2) * resolution (engine/grid.py), which
  a quarter turn about the origin or a shift by whole cells maps onto itself.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import sitegen
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

LAWS = settings(max_examples=30, deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow])
RTOL = 1e-9


@st.composite
def random_sites(draw):
    """A site document (for sitegen.dump_toml) of a small random site."""
    res = draw(st.sampled_from([1.0, 0.5]))
    x0 = draw(st.integers(-8, 2)) * res
    y0 = draw(st.integers(-8, 2)) * res
    x1 = x0 + draw(st.integers(3, 12)) * res
    y1 = y0 + draw(st.integers(3, 12)) * res
    floor = draw(st.sampled_from([0.0, 1.5, 3.0]))
    antennas = []
    for n in range(draw(st.integers(1, 3))):
        if draw(st.booleans()):
            pattern = {"model": "isotropic"}
        else:
            pattern = {"model": "3gpp-panel",
                       "gain_dbi": draw(st.floats(8.0, 18.0)),
                       "hpbw_h_deg": draw(st.floats(45.0, 90.0)),
                       "hpbw_v_deg": draw(st.floats(6.0, 20.0)),
                       "front_to_back_db": draw(st.floats(15.0, 30.0))}
        antennas.append({
            "id": f"A{n}", "operator": draw(st.sampled_from(["Op A", "Op B"])),
            "position": [draw(st.floats(x0 - 2.0, x1 + 2.0)), draw(st.floats(y0 - 2.0, y1 + 2.0)),
                         floor + draw(st.floats(2.3, 6.0))],
            "azimuth_deg": draw(st.floats(0.0, 359.0)),
            "mechanical_tilt_deg": draw(st.floats(0.0, 10.0)),
            "frequency_mhz": draw(st.sampled_from([900.0, 1950.0, 3500.0])),
            "tx_power_w": 10.0 ** draw(st.floats(0.0, 2.6)),
            "pattern": pattern, "model": "far-field"})
    return {
        "site": {"name": "law site", "origin": {"lat": 45.0, "lon": 7.0},
                 "limits": draw(st.sampled_from([["fcc-1310"], ["fcc-1310", "icnirp-2020"]])),
                 "averaging": {"method": draw(st.sampled_from(["vertical-line", "peak"])),
                               "bottom_m": 0.0, "top_m": 2.0, "points": 3},
                 "resolution_m": res, "zone_levels": [0.003, 0.03, 0.3]},
        "area": [{"name": "Roof", "access": "public", "floor_m": floor,
                  "outline": [[x0, y0], [x1, y0], [x1, y1], [x0, y1]]}],
        "point": [{"name": "P", "at": [draw(st.floats(-12.0, 12.0)), draw(st.floats(-12.0, 12.0)),
                                       floor + draw(st.floats(0.0, 2.0))]}],
        "antenna": antennas,
    }


def _read(tmp_path_factory, doc):
    from siteexposure.readers.site_toml import read_site

    folder = tmp_path_factory.mktemp("law")
    with sitegen.soft_warnings_ignored():
        return read_site(sitegen.write_site(folder, doc))


def _evaluate(site):
    from siteexposure.engine.orchestrator import evaluate_site

    with sitegen.soft_warnings_ignored():
        return evaluate_site(site, mitigation=False)


def _point_ratios(result) -> dict:
    return {(p.name, e.set_id, e.population): e.exposure_ratio
            for p in result.points for e in p.exposure}


def _scaled(site, factor: float, ids=None):
    ants = tuple(dataclasses.replace(a, tx_power_w=a.tx_power_w * factor)
                 if ids is None or a.id in ids else a for a in site.antennas)
    return dataclasses.replace(site, antennas=ants)


def _cells(ar) -> dict:
    """{(east, north): {key: ratio}} of the inside cells of an area result."""
    out = {}
    for j, i in zip(*np.nonzero(ar.inside), strict=True):
        out[(float(ar.east_m[i]), float(ar.north_m[j]))] = {k: float(g[j, i])
                                                            for k, g in ar.ratio.items()}
    return out


def _same(a: float, b: float) -> bool:
    if math.isnan(a) or math.isnan(b):
        return math.isnan(a) and math.isnan(b)
    return math.isclose(a, b, rel_tol=RTOL, abs_tol=1e-300)


# --------------------------------------------------------------------------------------


@LAWS
@given(doc=random_sites(), factor=st.floats(1.0, 20.0), which=st.integers(0, 2))
def test_more_power_never_shrinks_a_zone(tmp_path_factory, doc, factor, which):
    """Raising one antenna's power raises no ratio less than before, every cell above a level
    stays above it, and every keep-out zone polygon (engine.zones) keeps covering what it
    covered (OET-65 eq. (3): S proportional to P; all terms of the sum are >= 0)."""
    from siteexposure.engine.zones import compute_zones

    site = _read(tmp_path_factory, doc)
    ids = {site.antennas[which % len(site.antennas)].id}
    before, after = _evaluate(site), _evaluate(_scaled(site, factor, ids))
    for a0, a1 in zip(before.areas, after.areas, strict=True):
        for key, g0 in a0.ratio.items():
            g1 = a1.ratio[key]
            ok = np.isfinite(g0) & np.isfinite(g1)
            assert np.all(g1[ok] >= g0[ok] * (1 - RTOL))
            for level in (1.0, *site.zone_levels):
                assert np.all(~(a0.inside & (g0 > level)) | (g1 > level))
    zones1 = {(z.area, z.set_id, z.kind, z.level): z for z in compute_zones(after)}
    for z0 in compute_zones(before):
        if z0.kind == "not-assessable":
            continue
        z1 = zones1[(z0.area, z0.set_id, z0.kind, z0.level)]
        assert z1.area_m2 >= z0.area_m2 * (1 - 1e-9) - 1e-9
        assert z1.geometry.buffer(1e-6).covers(z0.geometry)


@LAWS
@given(doc=random_sites(), extra=random_sites())
def test_adding_an_antenna_never_lowers_a_ratio(tmp_path_factory, doc, extra):
    """Every area cell and receptor ratio with one more antenna is at least the ratio without
    it (47 CFR 1.1310: the fractions of the limit of all transmitters add)."""
    site = _read(tmp_path_factory, doc)
    added = {**extra["antenna"][0], "id": "NEW"}
    e, n, z = added["position"]  # as high above this site's floor as above its own
    added["position"] = [e, n, z - extra["area"][0]["floor_m"] + doc["area"][0]["floor_m"]]
    new = _read(tmp_path_factory, {**doc, "antenna": [added]}).antennas[0]
    more = dataclasses.replace(site, antennas=(*site.antennas, new))
    before, after = _evaluate(site), _evaluate(more)
    for a0, a1 in zip(before.areas, after.areas, strict=True):
        for key, g0 in a0.ratio.items():
            g1 = a1.ratio[key]
            ok = np.isfinite(g0) & np.isfinite(g1)
            assert np.all(g1[ok] >= g0[ok] * (1 - RTOL))
            # a cell never turns from "not assessable" into a number by adding a source
            assert not np.any(a0.inside & np.isnan(g0) & np.isfinite(g1))
    r1 = _point_ratios(after)
    for key, v0 in _point_ratios(before).items():
        if v0 is not None and r1[key] is not None:
            assert r1[key] >= v0 * (1 - RTOL)


@LAWS
@given(doc=random_sites(), k=st.floats(1e-3, 1e3))
def test_scaling_every_power_scales_every_ratio(tmp_path_factory, doc, k):
    """All powers times k: every area-cell and receptor ratio times k, to 1e-9 relative
    (OET-65 eq. (3) is linear in P, and so is the sum of 47 CFR 1.1310)."""
    site = _read(tmp_path_factory, doc)
    before, after = _evaluate(site), _evaluate(_scaled(site, k))
    for a0, a1 in zip(before.areas, after.areas, strict=True):
        for key, g0 in a0.ratio.items():
            np.testing.assert_allclose(a1.ratio[key], k * g0, rtol=RTOL, atol=0, equal_nan=True)
        for s0, s1 in zip(a0.summaries, a1.summaries, strict=True):
            assert _same(s1.max_exposure_ratio, k * s0.max_exposure_ratio)
    r1 = _point_ratios(after)
    for key, v0 in _point_ratios(before).items():
        assert (v0 is None) == (r1[key] is None)
        if v0 is not None:
            assert math.isclose(r1[key], k * v0, rel_tol=RTOL, abs_tol=1e-300)


def _moved(site, turn: int, de: float, dn: float):
    """The site turned ``turn`` quarter turns clockwise about the origin, then shifted."""

    def move(e, n):
        for _ in range(turn):
            e, n = n, -e  # a quarter turn clockwise seen from above: north -> east
        return e + de, n + dn

    def point3(p):
        e, n = move(float(p[0]), float(p[1]))
        return np.array([e, n, float(p[2])])

    areas = tuple(dataclasses.replace(a, outline_en=np.array([move(*v) for v in a.outline_en]))
                  for a in site.areas)
    ants = tuple(dataclasses.replace(a, position_m=point3(a.position_m),
                                     azimuth_deg=(a.azimuth_deg + 90.0 * turn) % 360.0)
                 for a in site.antennas)
    points = tuple(dataclasses.replace(p, at_m=point3(p.at_m)) for p in site.points)
    return dataclasses.replace(site, areas=areas, antennas=ants, points=points), move


@LAWS
@given(doc=random_sites(), turn=st.integers(0, 3), shift=st.tuples(st.integers(-6, 6),
                                                                   st.integers(-6, 6)))
def test_turning_or_shifting_the_site_moves_the_result_with_it(tmp_path_factory, doc, turn,
                                                               shift):
    """A quarter turn (or two, or three) about the origin and a shift by whole cells move
    every area cell's ratio and every receptor's ratio with the site (common practice:
    free-space fields are invariant under rigid motions), to 1e-9 relative."""
    site = _read(tmp_path_factory, doc)
    de, dn = shift[0] * site.resolution_m, shift[1] * site.resolution_m
    moved, move = _moved(site, turn, de, dn)
    before, after = _evaluate(site), _evaluate(moved)
    for a0, a1 in zip(before.areas, after.areas, strict=True):
        c0, c1 = _cells(a0), _cells(a1)
        assert len(c0) == len(c1)
        for (e, n), ratios in c0.items():
            target = move(e, n)
            match = c1.get(target)
            if match is None:  # the same lattice point, up to the last bit of the shift
                match = next(v for (e1, n1), v in c1.items()
                             if abs(e1 - target[0]) < 1e-9 and abs(n1 - target[1]) < 1e-9)
            for key, v in ratios.items():
                assert _same(match[key], v), (key, (e, n), v, match[key])
    r1 = _point_ratios(after)
    for key, v0 in _point_ratios(before).items():
        assert (v0 is None) == (r1[key] is None)
        if v0 is not None:
            assert math.isclose(r1[key], v0, rel_tol=RTOL, abs_tol=1e-300)
