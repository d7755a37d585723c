"""Maps (siteexposure.writers.maps) and the elevation cut they draw (engine.sections).

The cut is checked against the far-field density of an isotropic source,
S = P / (4 pi r^2) (FCC OET Bulletin 65, Ed. 97-01, 1997, eq. (3) with G = 1), over the
47 CFR 1.1310 Table 1 (B) general-population limit of 1.0 mW/cm^2 = 10 W/m^2 at
1500-100000 MHz. The drawings are checked for what a reader relies on: the files exist
and are not blank, the SVG keeps its labels as text, the output is byte-identical from
run to run, north is up, and every azimuth arrow points along (sin az, cos az), i.e.
clockwise from north (the azimuth convention of the site file, SPEC 3.1).
"""

import math

import numpy as np
import pytest

from siteexposure.containers import Antenna, Area, Averaging, Receptor, Site
from siteexposure.engine.orchestrator import build_sources, evaluate_site
from siteexposure.engine.sections import adaptive_cut, cut_points_enu, elevation_cut
from siteexposure.engine.zones import compute_zones
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.writers import maps
from siteexposure.writers.bundle import GEOJSON_NAME, GRID_CSV_NAME, KML_NAME, output_names
from siteexposure.writers.cautions import ONE_LINE

L_GEN = 10.0  # W/m^2, 47 CFR 1.1310 Table 1 (B), 1500-100000 MHz


def _ant(aid, pos, az, p, tilt=0.0, pattern=None):
    return Antenna(id=aid, operator="Invented Op", position_m=np.array(pos, float), azimuth_deg=az,
                   mechanical_tilt_deg=tilt, electrical_tilt_deg=0.0, frequency_mhz=2000.0,
                   tx_power_w=p, pattern=pattern or parametric_pattern({"model": "isotropic"}),
                   model="far-field")


def _site():
    panel = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 15.0, "hpbw_h_deg": 65.0,
                                "hpbw_v_deg": 10.0, "front_to_back_db": 25.0})
    ants = (_ant("E1", (4.0, 3.0, 3.0), 90.0, 2000.0, tilt=4.0, pattern=panel),
            _ant("S1", (12.0, 9.0, 3.5), 200.0, 1500.0, pattern=panel),
            _ant("W1", (2.0, 10.0, 3.0), 290.0, 800.0, pattern=panel))
    deck = Area("Sun deck", "public", 0.0, np.array([[0, 0], [16, 0], [16, 12], [0, 12]], float))
    plant = Area("Plant room roof", "worker", 1.0, np.array([[17, 0], [24, 0], [24, 6], [17, 6]], float))
    return Site(name="Maps check (invented)", origin_lat=40.0, origin_lon=-105.0, limits=("fcc-1310",),
                antennas=ants, areas=(deck, plant), points=(Receptor("Window", np.array([20.0, 10.0, 2.0])),),
                averaging=Averaging("vertical-line", 0.0, 2.0, 3), resolution_m=0.25, zone_levels=(0.2,))


@pytest.fixture(scope="module")
def rendered(tmp_path_factory):
    site = _site()
    res = evaluate_site(site, mitigation=False)
    zones = compute_zones(res)
    a, b = tmp_path_factory.mktemp("maps_a"), tmp_path_factory.mktemp("maps_b")
    files_a = maps.render_maps(res, zones, a)
    files_b = maps.render_maps(res, zones, b, formats=("png", "svg"))
    return res, zones, files_a, files_b


def test_files_exist_with_the_announced_names(rendered):
    res, _, files, _ = rendered
    expected = [n for n in output_names(res.site) if n not in (GEOJSON_NAME, KML_NAME, GRID_CSV_NAME)]
    assert [p.name for p in files] == expected
    assert len(files) == 2 * (2 + 3)  # (2 plans + 3 cuts) x (png, svg)
    assert all(p.stat().st_size > 10_000 for p in files)


def test_png_maps_are_not_blank(rendered):
    import matplotlib.image as mpimg

    _, _, files, _ = rendered
    for p in (f for f in files if f.suffix == ".png"):
        img = mpimg.imread(p)[..., :3]
        assert img.shape[0] > 600 and img.shape[1] > 1200
        assert float(img.var()) > 0.01, p.name
        rgb = (img.reshape(-1, 3) * 255).astype(np.uint32)
        colours = np.unique((rgb[:, 0] << 16) | (rgb[:, 1] << 8) | rgb[:, 2])
        assert len(colours) > 200, p.name  # a continuous colour field, not a few flat tones


def test_svg_keeps_labels_as_text(rendered):
    _, _, files, _ = rendered
    plan = next(p for p in files if p.name.startswith("plan_01") and p.suffix == ".svg").read_text()
    for text in ("Maps check (invented)", "Sun deck", "general limit", "E1", "S1", ">N<",
                 "fcc-1310", "exposure ratio to the general-public limit [dB]", ONE_LINE[:40]):
        assert text in plan, text
    cut = next(p for p in files if p.name.startswith("elevation_01") and p.suffix == ".svg").read_text()
    for text in ("Elevation cut through E1", "height above site ground [m]", "Sun deck (public)"):
        assert text in cut, text


def test_output_is_byte_identical_from_run_to_run(rendered):
    _, _, files_a, files_b = rendered
    for a, b in zip(files_a, files_b, strict=True):
        assert a.name == b.name and a.read_bytes() == b.read_bytes(), a.name


def test_azimuth_unit_is_clockwise_from_north():
    for az, (e, n) in ((0, (0, 1)), (90, (1, 0)), (180, (0, -1)), (270, (-1, 0))):
        assert np.allclose(maps.azimuth_unit(az), (e, n), atol=1e-12)


def _arrows(ax):
    return [t for t in ax.texts if getattr(t, "arrow_patch", None) is not None and t.get_text() == ""]


def test_plan_north_up_and_arrows_along_azimuth(rendered):
    from matplotlib.patches import FancyArrowPatch

    res, zones, _, _ = rendered
    fig = maps._plan_figure(res, zones, res.areas[0], "fcc-1310")
    ax = fig.axes[0]
    y0, y1 = ax.get_ylim()
    assert y1 > y0  # north (increasing north_m) is up
    (north,) = [p for p in fig.patches if isinstance(p, FancyArrowPatch)]
    (xa, ya), (xb, yb) = north._posA_posB
    assert xa == pytest.approx(xb) and yb > ya
    arrows = _arrows(ax)
    assert len(arrows) == len(res.site.antennas)
    for arrow, ant in zip(arrows, res.site.antennas, strict=True):
        d = np.subtract(arrow.xy, arrow.xyann)
        assert np.allclose(d / np.hypot(*d), maps.azimuth_unit(ant.azimuth_deg), atol=1e-9)
        assert np.allclose(arrow.xyann, ant.position_m[:2])
    assert "dB" in fig.axes[1].get_ylabel()  # the colour bar


def test_elevation_arrow_points_in_front_and_down_by_the_tilt(rendered):
    res, _, _, _ = rendered
    site = res.site
    cut = adaptive_cut(res, build_sources(site)[0], "E1")
    fig = maps._elevation_figure(res, "E1", "fcc-1310", cut)
    (arrow,) = _arrows(fig.axes[0])
    d = np.subtract(arrow.xy, arrow.xyann)
    t = math.radians(4.0)
    assert np.allclose(d / np.hypot(*d), (math.cos(t), -math.sin(t)), atol=1e-9)


def test_elevation_cut_equals_the_isotropic_closed_form():
    """OET-65 eq. (3): the cut holds point values P / (4 pi r^2) / S_lim, no averaging."""
    p, pos = 900.0, (3.0, -2.0, 6.0)
    site = Site(name="cut", origin_lat=0.0, origin_lon=0.0, limits=("fcc-1310",),
                antennas=(_ant("T1", pos, 60.0, p),), areas=(), resolution_m=0.5)
    sources, _ = build_sources(site)
    dist, z, ratio = elevation_cut(site, sources, "T1", half_width_m=8.0, height_range_m=(0.0, 10.0),
                                   resolution_m=0.4)
    assert dist[0] == pytest.approx(-8.0) and dist[-1] == pytest.approx(8.0) and z[-1] == pytest.approx(10.0)
    pts = cut_points_enu(site, "T1", dist, z)
    # the plane runs along the azimuth: +d is 60 deg clockwise from north
    step = pts[0, 1] - pts[0, 0]
    assert np.allclose(step[:2] / np.hypot(*step[:2]), maps.azimuth_unit(60.0))
    r2 = np.sum((pts - np.array(pos)) ** 2, axis=-1)
    g = ratio[("fcc-1310", "general")]
    ok = np.isfinite(g)
    assert ok.sum() > 0.99 * g.size  # only the reactive sphere (lambda / 2 pi) is unassessable
    assert np.allclose(g[ok], p / (4 * math.pi * r2[ok]) / L_GEN, rtol=1e-9)
    occ = ratio[("fcc-1310", "occupational")]
    assert np.allclose(g[ok], 5.0 * occ[ok], rtol=1e-9)  # 5 mW/cm^2 over 1 mW/cm^2


def test_bad_format_is_an_output_error(rendered, tmp_path):
    from siteexposure.errors import OutputError

    res, zones, _, _ = rendered
    with pytest.raises(OutputError, match="expected png or svg"):
        maps.render_maps(res, zones, tmp_path, formats=("jpg",))


def test_plan_of_a_narrow_arm_draws_the_zone_of_the_verdict():
    """The L of issue 13 (a 0.9 m arm between the centres of a 1 m grid, 500 W isotropic
    2.5 m above it): the plan's dashed general-limit line is the boundary of the zone that
    holds the worst point, and the cell holding the worst point is coloured at least at its
    ratio (0 dB and up), not with the lower value at the cell centre outside the arm."""
    import shapely

    outline = np.array([[0, 0.55], [10, 0.55], [10, 1.45], [1.45, 1.45], [1.45, 10], [0, 10]], float)
    site = Site(name="L (invented)", origin_lat=40.0, origin_lon=-100.0, limits=("fcc-1310",),
                antennas=(_ant("S", (6.0, 1.0, 2.5), 0.0, 500.0),),
                areas=(Area("L terrace", "public", 0.0, outline),),
                averaging=Averaging("vertical-line", 0.0, 2.0, 5), resolution_m=1.0)
    res = evaluate_site(site, mitigation=False)
    ar, s = res.areas[0], res.areas[0].summaries[0]
    assert s.verdict == "exceeds"
    zones = compute_zones(res)
    (zone,) = [z for z in zones if z.kind == "general-limit"]
    assert shapely.dwithin(zone.geometry, shapely.Point(s.at_m[:2]), 1e-9)
    fig = maps._plan_figure(res, zones, ar, "fcc-1310")
    dashed = [ln for ln in fig.axes[0].get_lines() if ln.get_linestyle() == "--"]
    assert dashed
    for ln in dashed:
        xy = np.column_stack([ln.get_xdata(), ln.get_ydata()])
        assert np.all(shapely.distance(zone.geometry.boundary, shapely.points(xy)) < 1e-9)
    shown = ar.cell_max(("fcc-1310", "general"))
    i = int(np.argmin(np.abs(ar.east_m - s.at_m[0])))
    j = int(np.argmin(np.abs(ar.north_m - s.at_m[1])))
    assert shown[j, i] >= s.max_exposure_ratio > ar.ratio[("fcc-1310", "general")][j, i]
