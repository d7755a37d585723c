"""Keep-out zones of the engine against closed forms, in real-world coordinates.

Sources:
* far-field power density of an isotropic source, S = P / (4 pi r^2): FCC OET Bulletin 65,
  Edition 97-01 (1997), eq. (3) with G = 1; the boundary S = S_lim is the sphere of radius
  r_ko = sqrt(P / (4 pi S_lim)), which cuts a horizontal plane dh below the source in a
  circle of radius sqrt(r_ko^2 - dh^2) around the foot of the source;
* limits: 47 CFR 1.1310 Table 1 (B), general population / uncontrolled exposure:
  f/1500 mW/cm^2 for 300-1500 MHz (900 MHz: 0.6 mW/cm^2 = 6 W/m^2), 1.0 mW/cm^2 for
  1500-100000 MHz (10 W/m^2); multiple sources add as the sum of S_i / S_lim(f_i)
  (47 CFR 1.1310; OET-65 Ed. 97-01, section on multiple-transmitter sites);
* geodesic areas, distances and forward positions on the WGS84 ellipsoid: pyproj.Geod
  (Karney's algorithms, GeographicLib), independent of the site's local frame.
"""

import math

import numpy as np
import pytest

from siteexposure.containers import Antenna, Area, Averaging, Site
from siteexposure.engine.orchestrator import evaluate_site
from siteexposure.engine.zones import compute_zones
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.writers.geojson import geometry_dict

ISO = parametric_pattern({"model": "isotropic"})
LAT0, LON0 = 59.91, 10.75  # an invented site origin at high latitude (large meridian convergence)
L_GEN_2000 = 10.0  # W/m^2, 47 CFR 1.1310 Table 1 (B) at 1500-100000 MHz
L_GEN_900 = 900.0 / 1500.0 * 10.0  # W/m^2, f/1500 mW/cm^2 at 900 MHz
HEAD = 1.5  # the single evaluation height above the floor (peak of one point) [m]


def _ant(aid, pos, p, f):
    return Antenna(id=aid, operator="Op", position_m=np.array(pos, float), azimuth_deg=0.0,
                   mechanical_tilt_deg=0.0, electrical_tilt_deg=0.0, frequency_mhz=f, tx_power_w=p,
                   pattern=ISO, model="far-field")


def _site(antennas, centre, half=12.0, floor=5.0, res=0.1):
    cx, cy = centre
    outline = np.array([[cx - half, cy - half], [cx + half, cy - half], [cx + half, cy + half],
                        [cx - half, cy + half]])
    return Site(name="geodesic check", origin_lat=LAT0, origin_lon=LON0, limits=("fcc-1310",),
                antennas=tuple(antennas), areas=(Area("Deck", "public", floor, outline),),
                averaging=Averaging("peak", HEAD, HEAD, 1), resolution_m=res)


def _lonlat_polygon(site, geom):
    from shapely.geometry import Polygon

    from siteexposure.geo import LocalFrame

    g = geometry_dict(LocalFrame(site.origin_lat, site.origin_lon), geom)
    assert g["type"] == "Polygon"
    return Polygon(g["coordinates"][0], g["coordinates"][1:])


def test_isotropic_zone_geodesic_area_and_centre():
    """Geodesic area of the ratio-1 zone within 2 % of pi (r_ko^2 - dh^2); centre at the foot."""
    from pyproj import Geod

    foot = (140.0, -60.0)
    p, z_ant, floor = 3141.6, 8.0, 5.0
    site = _site([_ant("T1", (*foot, z_ant), p, 2000.0)], foot, floor=floor)
    res = evaluate_site(site, mitigation=False)
    zone = next(z for z in compute_zones(res) if z.kind == "general-limit")

    r_ko = math.sqrt(p / (4 * math.pi * L_GEN_2000))  # OET-65 eq. (3) solved for r
    dh = z_ant - (floor + HEAD)
    closed_area = math.pi * (r_ko**2 - dh**2)
    geod = Geod(ellps="WGS84")
    poly_ll = _lonlat_polygon(site, zone.geometry)
    area, perimeter = geod.geometry_area_perimeter(poly_ll)
    assert area > 0  # counter-clockwise exterior (RFC 7946 right-hand rule)
    assert area == pytest.approx(closed_area, rel=0.02)
    assert perimeter == pytest.approx(2 * math.pi * math.sqrt(r_ko**2 - dh**2), rel=0.02)
    assert zone.area_m2 == pytest.approx(area, rel=1e-4)  # local-frame area = geodesic area

    # the foot, placed independently: geodesic forward from the origin (the local frame
    # is azimuthal equidistant, so distance and azimuth from the origin are exact)
    az = math.degrees(math.atan2(foot[0], foot[1]))
    lon_f, lat_f, _ = geod.fwd(LON0, LAT0, az, math.hypot(*foot))
    c = poly_ll.centroid
    _, _, miss = geod.inv(c.x, c.y, lon_f, lat_f)
    assert miss < 0.02  # m: the disc is centred on the foot
    assert zone.category == 2 and zone.sign_word == "NOTICE"


def test_two_sources_contour_follows_the_independent_sum():
    """The ratio-1 boundary of two sources at 2000 and 900 MHz lies where sum S_i/S_lim,i = 1."""
    a1 = ((-2.0, 0.0, 6.0), 1500.0, 2000.0)
    a2 = ((3.0, 1.0, 7.0), 1800.0, 900.0)
    site = _site([_ant("T1", *a1), _ant("T2", *a2)], (0.0, 0.0), floor=3.0, res=0.1)
    res = evaluate_site(site, mitigation=False)
    zone = next(z for z in compute_zones(res) if z.kind == "general-limit")
    z_eval = 3.0 + HEAD

    def ratio_sum(e, n):
        out = 0.0
        for (x, y, zc), p, f in (a1, a2):
            r2 = (e - x) ** 2 + (n - y) ** 2 + (z_eval - zc) ** 2
            out = out + p / (4 * math.pi * r2) / (L_GEN_2000 if f >= 1500 else L_GEN_900)
        return out

    import shapely

    outline = shapely.Polygon(site.areas[0].outline_en)
    rings = [zone.geometry.exterior, *zone.geometry.interiors] if zone.geometry.geom_type == "Polygon" \
        else [r for g in zone.geometry.geoms for r in (g.exterior, *g.interiors)]
    pts = np.vstack([np.asarray(r.coords) for r in rings])
    on_edge = shapely.distance(outline.boundary, shapely.points(pts)) < 1e-6
    pts = pts[~on_edge]
    assert len(pts) > 50
    assert np.max(np.abs(ratio_sum(pts[:, 0], pts[:, 1]) - 1.0)) < 5e-3
    # and the zone holds what exceeds, and only that (random points off the boundary)
    rng = np.random.default_rng(7)
    q = rng.uniform(-11.9, 11.9, size=(4000, 2))
    r = ratio_sum(q[:, 0], q[:, 1])
    inside = shapely.contains_xy(zone.geometry, q[:, 0], q[:, 1])
    assert np.all(inside[r > 1.01]) and not np.any(inside[r < 0.99])
