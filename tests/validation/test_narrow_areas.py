"""Every part of an area is judged, however narrow, and the zones agree with the verdict.

Cell centres alone miss the parts of an area narrower than a cell that no centre falls in
(the arm of an L, a ledge, a walkway); the engine also judges points on the outline and in
every cell the area covers in part (siteexposure.engine.grid). Checked against a closed form:

* far-field power density of an isotropic source, S = P / (4 pi r^2): FCC OET Bulletin 65,
  Ed. 97-01 (1997), eq. (3) with G = 1;
* 47 CFR 1.1310 Table 1 (B), general population, 1500-100000 MHz: 1.0 mW/cm^2 = 10 W/m^2
  (2000 MHz is used throughout).

The coverage law used for the lower bounds: every point p of an area lies in a grid cell of
side ``res`` that holds a judged point (its centre, if inside the area, or the point judged
in the part of that cell the area covers), so a judged point q lies within ``sqrt(2) res``
of p horizontally, and for an isotropic source s, |q - s| <= |p - s| + sqrt(2) res.
"""

import json
import math
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.containers import Antenna, Area, Averaging, Site
from siteexposure.engine.orchestrator import evaluate_point, evaluate_site
from siteexposure.engine.zones import compute_zones
from siteexposure.physics.patterns import parametric_pattern

L_GEN = 10.0  # W/m^2, 47 CFR 1.1310 Table 1 (B), general population, 1500-100000 MHz
ISO = parametric_pattern({"model": "isotropic"})


def _ratio(p_w: float, r2) -> np.ndarray:
    """Exposure ratio of an isotropic source at squared distance r2: OET-65 eq. (3) / limit."""
    return p_w / (4.0 * math.pi * np.asarray(r2, float)) / L_GEN


def _line_mean(p_w: float, rho: float, dz_top: float, heights) -> float:
    """Mean ratio over an averaging line at horizontal distance ``rho`` from the source foot;
    ``dz_top`` is the source height above the floor. [1]"""
    h = np.asarray(heights, float)
    return float(np.mean(_ratio(p_w, rho**2 + (dz_top - h) ** 2)))


def _ant(pos, p_w):
    return Antenna(id="S", operator="Op", position_m=np.array(pos, float), azimuth_deg=0.0,
                   mechanical_tilt_deg=0.0, electrical_tilt_deg=0.0, frequency_mhz=2000.0,
                   tx_power_w=p_w, pattern=ISO, model="far-field")


def _site(outline, ant, res, averaging, access="public"):
    area = Area("Strip", access, 0.0, np.asarray(outline, float))
    return Site(name="narrow", origin_lat=40.0, origin_lon=-100.0, limits=("fcc-1310",),
                antennas=(ant,), areas=(area,), averaging=averaging, resolution_m=res)


def _run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "siteexposure", *map(str, args)],
                          capture_output=True, text=True, timeout=300, cwd=cwd)


# ------------------------------------------------------------------------------------------
# the L-shaped area of the issue, through the command line
# ------------------------------------------------------------------------------------------

L_SITE = """
[site]
name = "L-shaped terrace (invented)"
origin = { lat = 40.0, lon = -100.0 }
limits = ["fcc-1310"]
averaging = { method = "vertical-line", bottom_m = 0.0, top_m = 2.0, points = 5 }
resolution_m = 1.0

[[area]]
name = "L terrace"
access = "public"
floor_m = 0.0
outline = [[0, 0.55], [10, 0.55], [10, 1.45], [1.45, 1.45], [1.45, 10], [0, 10]]

[[antenna]]
id = "S"
operator = "Invented Radio"
position = [6.0, 1.0, 2.5]
azimuth_deg = 0
frequency_mhz = 2000.0
tx_power_w = 500.0
pattern = { model = "isotropic" }
model = "far-field"
"""
L_HEIGHTS = np.linspace(0.0, 2.0, 5)


def test_the_arm_of_an_l_narrower_than_a_cell_is_judged(tmp_path):
    """The 0.9 m arm (north 0.55-1.45 m) holds no cell centre of the 1 m grid (centres at
    k + 0.5); the source stands 2.5 m above its middle. Before outline sampling the area was
    judged "complies" (max 0.0094) while ``point`` gave 1.77 in the arm."""
    site = tmp_path / "l.toml"
    site.write_text(L_SITE, encoding="utf-8")
    # the point of the issue: 1.5 m below the source, S = 500 / (4 pi 1.5^2) = 17.68 W/m^2
    r = _run("point", site, "--at", 6, 1, 1, "--json")
    assert r.returncode == 0, r.stderr
    exp = {(e["limits"], e["population"]): e["exposure_ratio"] for e in json.loads(r.stdout)["exposure"]}
    assert exp[("fcc-1310", "general")] == pytest.approx(float(_ratio(500.0, 1.5**2)), rel=1e-5)

    r = _run("screen", site, "--json", "--no-progress")
    assert r.returncode == 1, r.stderr  # a limit is exceeded where people can reach
    b = json.loads(r.stdout)["areas"][0]["by_limits"][0]
    assert b["verdict"] == "exceeds"
    # lower bound from the coverage law: a judged point within sqrt(2) m of the source foot
    bound = _line_mean(500.0, math.sqrt(2.0), 2.5, L_HEIGHTS)
    assert bound > 1.0  # 1.035: the law alone proves the exceedance
    assert b["max_exposure_ratio"] >= bound
    # the worst point lies in the arm, and its value is the hand value there
    east, north, floor = b["at_m"]
    assert 1.45 < east <= 10.0 and 0.55 <= north <= 1.45 and floor == 0.0
    rho = math.hypot(east - 6.0, north - 1.0)
    assert b["max_exposure_ratio"] == pytest.approx(_line_mean(500.0, rho, 2.5, L_HEIGHTS), rel=1e-5)
    assert b["note"] is None  # the leg holds cell centres: judged on the grid and the outline


def test_the_map_of_the_l_draws_the_zone_where_the_verdict_is(tmp_path):
    """``map`` of the same site: the general-limit zone in the GeoJSON holds the worst point
    of ``screen``, and the grid CSV lists the outline samples with their ratios."""
    from shapely.geometry import Point, shape

    from siteexposure.geo import LocalFrame

    site = tmp_path / "l.toml"
    site.write_text(L_SITE, encoding="utf-8")
    b = json.loads(_run("screen", site, "--json", "--no-progress").stdout)["areas"][0]["by_limits"][0]
    out = tmp_path / "maps"
    r = _run("map", site, "--out", out, "--no-progress")
    assert r.returncode == 0, r.stderr
    fc = json.loads((out / "site.geojson").read_text(encoding="utf-8"))
    zones = [f for f in fc["features"] if f["properties"].get("kind") == "general-limit"]
    assert len(zones) == 1
    lon, lat = LocalFrame(40.0, -100.0).to_lonlat(np.array([b["at_m"][0]]), np.array([b["at_m"][1]]))
    # GeoJSON positions are rounded to 1e-7 degrees (writers.geojson.DECIMALS, about 1 cm)
    assert shape(zones[0]["geometry"]).buffer(1e-7).covers(Point(float(lon[0]), float(lat[0])))
    rows = (out / "grid_values.csv").read_text(encoding="utf-8").splitlines()
    outline_rows = [row.split(",") for row in rows[1:] if ",outline," in row]
    assert outline_rows
    top = max(float(row[5]) for row in outline_rows)
    assert top == pytest.approx(b["max_exposure_ratio"], rel=1e-5)


# ------------------------------------------------------------------------------------------
# a ledge and a walkway with no cell centre at all
# ------------------------------------------------------------------------------------------


def test_a_ledge_0_3_m_wide_is_judged_and_says_how():
    """A public ledge 0.3 m x 8 m (north 0.6-0.9 m) at a 1 m grid: no cell centre inside.
    600 W isotropic 1 m above head height (peak of one point at 1 m above the floor)."""
    ant = _ant((4.0, 0.75, 2.0), 600.0)
    site = _site([[0, 0.6], [8, 0.6], [8, 0.9], [0, 0.9]], ant, 1.0, Averaging("peak", 1.0, 1.0, 1))
    s = evaluate_site(site, mitigation=False).areas[0].summaries[0]
    assert s.n_points > 0 and s.n_not_assessable == 0
    assert "narrower than the 1 m grid" in s.note and f"judged on {s.n_points} points" in s.note
    bound = float(_ratio(600.0, 2.0 + 1.0))  # rho <= sqrt(2) m, 1 m below the source
    assert bound > 1.0 and s.max_exposure_ratio >= bound and s.verdict == "exceeds"
    e, n, _ = s.at_m
    assert 0.6 <= n <= 0.9
    assert s.max_exposure_ratio == pytest.approx(float(_ratio(600.0, (e - 4) ** 2 + (n - 0.75) ** 2 + 1)),
                                                 rel=1e-9)


WALKWAY_SITE = """
[site]
name = "Catwalk (invented)"
origin = { lat = 40.0, lon = -100.0 }
limits = ["fcc-1310"]
averaging = { method = "vertical-line", bottom_m = 0.0, top_m = 2.0, points = 5 }
resolution_m = 0.5

[[area]]
name = "Catwalk"
access = "public"
floor_m = 0.0
outline = [[-5, 1.0], [5, 1.0], [5, 1.1], [-5, 1.1]]

[[antenna]]
id = "S"
operator = "Invented Radio"
position = [0.0, 1.05, 3.0]
azimuth_deg = 0
frequency_mhz = 2000.0
tx_power_w = 600.0
pattern = { model = "isotropic" }
model = "far-field"
"""


def test_a_walkway_0_1_m_wide_at_0_5_m_gets_points_and_a_reason(tmp_path):
    """0.1 m x 10 m (north 1.0-1.1 m; centres at 0.75 and 1.25 m): judged, with a note in
    the JSON and the terminal summary instead of "0 points"."""
    site = tmp_path / "walk.toml"
    site.write_text(WALKWAY_SITE, encoding="utf-8")
    r = _run("screen", site, "--json", "--no-progress")
    assert r.returncode == 1, r.stderr
    b = json.loads(r.stdout)["areas"][0]["by_limits"][0]
    assert b["points"] > 0 and b["points_not_assessable"] == 0
    assert "narrower than the 0.5 m grid" in b["note"]
    bound = _line_mean(600.0, math.sqrt(2.0) * 0.5, 3.0, L_HEIGHTS)
    assert bound > 1.0 and b["max_exposure_ratio"] >= bound and b["verdict"] == "exceeds"
    r = _run("screen", site, "--no-progress")
    assert "Note on Catwalk: narrower than the 0.5 m grid" in r.stdout.replace("\n", " ")


def test_an_outline_without_surface_gets_a_reason_not_a_pass():
    """A Python user may build an area whose outline is a line (the site reader refuses
    it): nothing can be judged, the verdict is "not assessable" and the note says why."""
    from siteexposure.writers.json_out import site_dict

    site = _site([[0, 0], [2, 0], [4, 0]], _ant((1.0, 0.0, 3.0), 10.0), 0.5,
                 Averaging("peak", 0.0, 2.0, 3))
    res = evaluate_site(site, mitigation=False)
    s = res.areas[0].summaries[0]
    assert (s.n_points, s.verdict) == (0, "not assessable")
    assert s.note.startswith("its outline encloses no surface")
    assert res.exceeded_where_reachable
    b = site_dict(res)["areas"][0]["by_limits"][0]
    assert b["note"] == s.note and b["points"] == 0


# ------------------------------------------------------------------------------------------
# property: no interior point is hotter than the area's maximum allows
# ------------------------------------------------------------------------------------------


def _strip(x0, y0, length, width, angle):
    u = np.array([math.cos(angle), math.sin(angle)])
    v = np.array([-u[1], u[0]])
    o = np.array([x0, y0])
    return o, u, v, [o, o + length * u, o + length * u + width * v, o + width * v]


@st.composite
def thin_shapes(draw):
    """A thin rotated rectangle, or an L of two thin arms, with points inside it."""
    res = draw(st.sampled_from([0.5, 1.0]))
    width = draw(st.floats(0.02, 0.9)) * res
    length = draw(st.floats(1.0, 8.0))
    angle = draw(st.floats(0.0, 2 * math.pi))
    x0, y0 = draw(st.floats(-3.0, 3.0)), draw(st.floats(-3.0, 3.0))
    o, u, v, rect = _strip(x0, y0, length, width, angle)
    if draw(st.booleans()):
        outline = rect
        fracs = draw(st.lists(st.tuples(st.floats(0.0, 1.0), st.floats(0.0, 1.0)), min_size=3, max_size=3))
        inner = [o + a * length * u + b * width * v for a, b in fracs]
    else:  # an L: a second arm of the same width along v from the first arm's start
        leg = draw(st.floats(1.0, 6.0))
        outline = [o, o + length * u, o + length * u + width * v, o + width * (u + v),
                   o + width * u + leg * v, o + leg * v]
        fracs = draw(st.lists(st.tuples(st.booleans(), st.floats(0.0, 1.0), st.floats(0.0, 1.0)),
                              min_size=3, max_size=3))
        inner = [o + a * length * u + b * width * v if arm else o + b * width * u + a * leg * v
                 for arm, a, b in fracs]
    foot = inner[0] + np.array([draw(st.floats(-1.0, 1.0)), draw(st.floats(-1.0, 1.0))])
    height = draw(st.floats(0.5, 3.0))  # source above the evaluation height
    power = draw(st.floats(20.0, 2000.0))
    return res, np.array(outline, float), [np.asarray(p, float) for p in inner], foot, height, power


@settings(max_examples=40, deadline=None)
@given(shape=thin_shapes())
def test_area_max_is_never_below_what_point_finds_inside_and_zones_hold_the_verdict(shape):
    """For any interior point p (``evaluate_point``, exactly at p, no averaging), the area's
    maximum -- one averaging point at the same height, so the same rule -- satisfies
    max >= R(p) d^2 / (d + sqrt(2) res)^2 with d = |p - s| (coverage law, module docstring).
    And the zones of the same result agree with the verdict: the general-limit zone holds
    the worst point when the area exceeds and does not exist when it complies; a zone of
    any level exists exactly when a judged point is above that level."""
    import shapely
    from shapely.geometry import Point

    res, outline, inner, foot, height, power = shape
    h_eval = 1.0
    ant = _ant((foot[0], foot[1], h_eval + height), power)
    site = _site(outline, ant, res, Averaging("peak", h_eval, h_eval, 1))
    result = evaluate_site(site, mitigation=False)
    ar = result.areas[0]
    s = ar.summaries[0]
    assert s.n_points > 0 and s.n_not_assessable == 0
    for p in inner:
        r_p = next(e.exposure_ratio for e in evaluate_point(site, (p[0], p[1], h_eval)).exposure
                   if e.population == "general")
        d = math.dist((p[0], p[1], h_eval), tuple(ant.position_m))
        assert s.max_exposure_ratio >= r_p * d**2 / (d + math.sqrt(2.0) * res) ** 2 * (1 - 1e-12)

    zones = compute_zones(result)
    general = [z for z in zones if z.kind == "general-limit"]
    if s.verdict == "exceeds":
        assert len(general) == 1
        assert shapely.dwithin(general[0].geometry, Point(s.at_m[:2]), 1e-6)
    else:
        assert s.verdict == "complies" and not general
    for pop, level in (("general", 1.0), ("occupational", 1.0), ("occupational", 10.0)):
        _, values = ar.judged(("fcc-1310", pop))
        has_zone = any(z.population == pop and z.level == level for z in zones)
        assert has_zone == bool(np.any(values > level)), (pop, level)
