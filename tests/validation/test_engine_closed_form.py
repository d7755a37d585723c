"""The site engine against closed forms and the laws of the problem.

Far-field density of an isotropic source, S = P / (4 pi r^2): FCC OET Bulletin 65,
Ed. 97-01 (1997), eq. (3) with G = 1. Limits: 47 CFR 1.1310 Table 1: general
population at 1500-100000 MHz is 1.0 mW/cm^2 = 10 W/m^2; occupational 5 mW/cm^2 = 50 W/m^2.
"""

import math

import numpy as np
import pytest

from siteexposure.containers import Antenna, Area, Averaging, Receptor, Site
from siteexposure.engine.orchestrator import evaluate_point, evaluate_site
from siteexposure.physics.patterns import parametric_pattern

ISO = parametric_pattern({"model": "isotropic"})
L_GEN = 10.0  # W/m^2, 47 CFR 1.1310 Table 1 (B), 1500-100000 MHz
L_OCC = 50.0  # W/m^2, 47 CFR 1.1310 Table 1 (A), 1500-100000 MHz


def _ant(aid="T1", op="OpA", pos=(0.0, 0.0, 6.0), p=400.0, f=2000.0, az=0.0):
    return Antenna(
        id=aid, operator=op, position_m=np.array(pos, float), azimuth_deg=az, mechanical_tilt_deg=0.0,
        electrical_tilt_deg=0.0, frequency_mhz=f, tx_power_w=p, pattern=ISO, model="far-field",
    )


def _site(antennas, areas=None, points=(), averaging=None, res=0.25, limits=("fcc-1310",)):
    if areas is None:
        areas = (Area("Deck", "public", 0.0, np.array([[-10, -10], [10, -10], [10, 10], [-10, 10]], float)),)
    return Site(
        name="closed form", origin_lat=45.0, origin_lon=7.0, limits=tuple(limits), antennas=tuple(antennas),
        areas=tuple(areas), points=tuple(points), averaging=averaging or Averaging("peak", 0.0, 2.0, 5),
        resolution_m=res,
    )


def test_isotropic_source_over_a_plane_peak_ratio():
    """Max ratio on a deck 6 m below an isotropic 400 W source, peak over 0..2 m: r_min = 4 m."""
    site = _site([_ant()], res=0.5)
    res = evaluate_site(site)
    s = res.areas[0].summaries[0]
    expected = 400.0 / (4 * math.pi * 4.0**2) / L_GEN
    # the cell centres nearest the foot are 0.25 m off in E and N (lattice at (k+1/2)*res)
    r2 = 4.0**2 + 2 * 0.25**2
    expected_grid = 400.0 / (4 * math.pi * r2) / L_GEN
    assert s.max_exposure_ratio == pytest.approx(expected_grid, rel=1e-9)
    assert expected_grid < expected
    assert s.verdict == ("exceeds" if expected_grid > 1 else "complies")


def test_isotropic_keep_out_radius_on_the_floor():
    """Boundary of ratio 1 at head height: r_ko = sqrt(P / (4 pi L)); the grid cells inside it exceed."""
    p = 4000.0
    site = _site([_ant(p=p, pos=(0, 0, 3.0))], res=0.1, averaging=Averaging("peak", 0.0, 2.0, 2))
    res = evaluate_site(site, mitigation=False)
    g = res.areas[0].ratio[("fcc-1310", "general")]
    r_ko = math.sqrt(p / (4 * math.pi * L_GEN))
    horiz = math.sqrt(r_ko**2 - (3.0 - 2.0) ** 2)  # the peak sits at the top of the line (2 m)
    ee, nn = np.meshgrid(res.areas[0].east_m, res.areas[0].north_m)
    rho = np.hypot(ee, nn)
    inside = res.areas[0].inside
    assert np.all(g[inside & (rho < horiz - 0.01)] > 1.0)
    assert np.all(g[inside & (rho > horiz + 0.01)] < 1.0)
    # exceedance area against the closed-form disc, within the grid's discretisation
    cell = 0.1**2
    assert (g[inside] > 1).sum() * cell == pytest.approx(math.pi * horiz**2, rel=0.03)


def test_superposition_two_antennas_equal_the_two_single_sites():
    a1 = _ant("T1", "OpA", (-3, 0, 5), 300.0, 2000.0)
    a2 = _ant("T2", "OpB", (4, 2, 7), 200.0, 900.0)  # FCC general at 900 MHz: f/1500 mW/cm^2
    both = evaluate_site(_site([a1, a2]), mitigation=False)
    one = evaluate_site(_site([a1]), mitigation=False)
    two = evaluate_site(_site([a2]), mitigation=False)
    key = ("fcc-1310", "general")
    assert np.allclose(both.areas[0].ratio[key], one.areas[0].ratio[key] + two.areas[0].ratio[key], equal_nan=True)


def test_rotating_the_whole_site_rotates_the_result():
    a1 = _ant("T1", "OpA", (-3, 1, 5), 300.0, 2000.0)
    a2 = _ant("T2", "OpB", (4, 2, 7), 200.0, 2000.0)
    outline = np.array([[-8, -6], [9, -6], [9, 7], [-8, 7]], float)

    def rot(v):  # 90 degrees clockwise seen from above: (e, n) -> (n, -e)
        v = np.asarray(v, float)
        out = v.copy()
        out[..., 0], out[..., 1] = v[..., 1], -v[..., 0]
        return out

    base = evaluate_site(_site([a1, a2], [Area("D", "public", 0.0, outline)]), mitigation=False)
    r1 = Antenna(**{**a1.__dict__, "position_m": rot(a1.position_m), "azimuth_deg": 90.0})
    r2 = Antenna(**{**a2.__dict__, "position_m": rot(a2.position_m), "azimuth_deg": 90.0})
    turned = evaluate_site(_site([r1, r2], [Area("D", "public", 0.0, rot(outline))]), mitigation=False)
    s0, s1 = base.areas[0].summaries[0], turned.areas[0].summaries[0]
    assert s1.max_exposure_ratio == pytest.approx(s0.max_exposure_ratio, rel=1e-12)
    assert np.allclose(rot(np.array(s0.at_m[:2])), s1.at_m[:2])


def test_vertical_line_average_is_the_mean_of_its_points():
    """SPEC 3.1: points evenly spaced incl. both ends; vertical-line takes their mean."""
    ant = _ant(pos=(0.3, 0.2, 4.0))
    av = Averaging("vertical-line", 0.0, 2.0, 10)
    area = Area("Deck", "public", 1.0, np.array([[-2, -2], [2, -2], [2, 2], [-2, 2]], float))
    site = _site([ant], [area], averaging=av, res=0.5)
    res = evaluate_site(site, mitigation=False)
    ar = res.areas[0]
    j, i = 4, 5
    col = [evaluate_point(site, (ar.east_m[i], ar.north_m[j], 1.0 + h)).exposure[0].exposure_ratio for h in av.heights_m()]
    assert ar.ratio[("fcc-1310", "general")][j, i] == pytest.approx(np.mean(col), rel=1e-12)


def test_contributions_sum_to_the_total_and_the_five_percent_rule():
    """47 CFR 1.1307(b)(5): operators above 5 % of their limit where it is exceeded share responsibility."""
    big = _ant("T1", "Big", (0, 0, 4.0), 2000.0, 2000.0)
    small = _ant("T2", "Small", (1, 0, 4.0), 60.0, 2000.0)  # about 3 % at the worst point
    tiny = _ant("T3", "Tiny", (15, 15, 30.0), 5.0, 2000.0)
    res = evaluate_site(_site([big, small, tiny]), mitigation=False)
    s = res.areas[0].summaries[0]
    assert sum(s.antenna_share.values()) == pytest.approx(s.max_exposure_ratio, rel=1e-9)
    assert sum(s.operator_share.values()) == pytest.approx(s.max_exposure_ratio, rel=1e-9)
    assert s.max_exposure_ratio > 1
    assert "Big" in s.responsible_operators
    assert "Tiny" not in s.responsible_operators
    for op, share in s.operator_share.items():
        assert (op in s.responsible_operators) == (share >= 0.05)


def test_population_mapping_public_general_worker_occupational_none_skipped():
    ant = _ant(p=2000.0)
    out = np.array([[-3, -3], [3, -3], [3, 3], [-3, 3]], float)
    areas = (Area("P", "public", 0.0, out), Area("W", "worker", 0.0, out), Area("N", "none", 0.0, out))
    res = evaluate_site(_site([ant], areas, res=0.5), mitigation=False)
    p, w, n = res.areas
    assert p.summaries[0].population == "general" and w.summaries[0].population == "occupational"
    assert not n.summaries
    # same fields, limits 10 vs 50 W/m^2 above 1500 MHz
    assert p.summaries[0].max_exposure_ratio == pytest.approx(5 * w.summaries[0].max_exposure_ratio, rel=1e-9)


def test_receptor_is_evaluated_exactly_at_its_point():
    ant = _ant(p=100.0, pos=(0, 0, 10))
    rec = Receptor("Window", np.array([6.0, 8.0, 10.0]), "public")
    res = evaluate_site(_site([ant], points=[rec]), mitigation=False)
    e = res.points[0].exposure[0]
    assert e.population == "general"
    assert e.exposure_ratio == pytest.approx(100.0 / (4 * math.pi * 100.0) / L_GEN, rel=1e-12)


def test_mitigation_power_reduction_brings_the_area_to_the_limit():
    ant = _ant(p=2000.0, pos=(0, 0, 5.0))
    site = _site([ant], res=0.5)
    res = evaluate_site(site)
    s = res.areas[0].summaries[0]
    assert s.verdict == "exceeds"
    m = s.mitigation
    assert m.uniform_reduction_db == pytest.approx(10 * math.log10(s.max_exposure_ratio), rel=1e-9)
    reduced = _ant(p=2000.0 / s.max_exposure_ratio, pos=(0, 0, 5.0))
    again = evaluate_site(_site([reduced], res=0.5), mitigation=False).areas[0].summaries[0]
    assert again.max_exposure_ratio == pytest.approx(1.0, rel=1e-9)
    # height remedy: raising by the found height makes it comply, half a step less does not
    assert m.extra_height_m is not None
    up = _ant(p=2000.0, pos=(0, 0, 5.0 + m.extra_height_m))
    assert evaluate_site(_site([up], res=0.5), mitigation=False).areas[0].summaries[0].max_exposure_ratio <= 1.0
