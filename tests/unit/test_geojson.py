"""GeoJSON output against the rules of RFC 7946 (IETF, August 2016).

Checked: §3.3 FeatureCollection with a "features" array; §3.2 each Feature has "type",
"geometry" and "properties"; §3.1.1 positions are [longitude, latitude] (no third
element: our heights are above the site's ground, not the ellipsoid); §4 WGS84 degrees,
longitude in [-180, 180] and latitude in [-90, 90], no "crs" member; §3.1.6 linear rings
closed with at least four positions, exterior rings counter-clockwise and holes clockwise;
§11.2 precision (7 decimals here); RFC 8259 §6: no NaN or Infinity in JSON numbers.
Positions are compared with pyproj.Geod forward geodesics from the site origin.
"""

import json
import math

import numpy as np
import pytest

from siteexposure.containers import Antenna, Area, Averaging, Receptor, Site
from siteexposure.engine.orchestrator import evaluate_site
from siteexposure.engine.zones import compute_zones
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.writers.geojson import feature_collection, write_geojson

LAT0, LON0 = -33.87, 151.21  # southern and eastern hemisphere: lon/lat swaps show up


def _site():
    iso = parametric_pattern({"model": "isotropic"})
    dipole = parametric_pattern({"model": "half-wave-dipole"})
    ants = (
        # a vertical dipole has a null straight down: its zone on the deck is a ring (a hole)
        Antenna(id="T1", operator="Op A", position_m=np.array([0.0, 0.0, 3.0]), azimuth_deg=90.0,
                mechanical_tilt_deg=0.0, electrical_tilt_deg=0.0, frequency_mhz=2000.0,
                tx_power_w=2500.0, pattern=dipole, model="far-field"),
        # a 2 m column standing on the yard's floor: its stand-off (not assessable) is on it
        Antenna(id="T2", operator="Op B", position_m=np.array([30.0, 20.0, 1.02]), azimuth_deg=0.0,
                mechanical_tilt_deg=0.0, electrical_tilt_deg=0.0, frequency_mhz=2000.0,
                tx_power_w=50.0, pattern=iso, model="far-field", aperture_height_m=2.0,
                aperture_width_m=0.6, aperture_depth_m=0.6),
    )
    deck = Area("Deck", "public", 0.0, np.array([[-8, -8], [8, -8], [8, 8], [-8, 8]], float))
    yard = Area("Yard", "worker", 0.0, np.array([[20, 10], [40, 10], [40, 30], [20, 30]], float))
    return Site(name="geojson check", origin_lat=LAT0, origin_lon=LON0, limits=("fcc-1310",),
                antennas=ants, areas=(deck, yard),
                points=(Receptor("Balcony", np.array([12.0, -3.0, 6.0])),),
                averaging=Averaging("peak", 0.0, 2.0, 3), resolution_m=0.2,
                zone_levels=(0.02,))


@pytest.fixture(scope="module")
def fc(tmp_path_factory):
    site = _site()
    res = evaluate_site(site, mitigation=False)
    zones = compute_zones(res)
    path = write_geojson(res, zones, tmp_path_factory.mktemp("gj") / "site.geojson")
    text = path.read_text(encoding="utf-8")
    return json.loads(text, parse_constant=lambda c: pytest.fail(f"non-JSON constant {c}")), res, zones


def _rings(geom):
    if geom["type"] == "Polygon":
        return [geom["coordinates"]]
    assert geom["type"] == "MultiPolygon"
    return geom["coordinates"]


def _signed_area(ring):
    r = np.asarray(ring, float)
    return 0.5 * float(np.sum(r[:-1, 0] * r[1:, 1] - r[1:, 0] * r[:-1, 1]))


def test_feature_collection_structure(fc):
    """RFC 7946 §3.3 and §3.2; §4: no "crs" member."""
    obj, res, zones = fc
    assert obj["type"] == "FeatureCollection"
    assert "crs" not in obj
    feats = obj["features"]
    for f in feats:
        assert f["type"] == "Feature"
        assert set(f) >= {"geometry", "properties"}
        assert "crs" not in f
    kinds = [f["properties"]["feature"] for f in feats]
    assert kinds.count("zone") == len(zones)
    assert kinds.count("area") == 2 and kinds.count("antenna") == 2 and kinds.count("receptor") == 1
    z = next(f for f in feats if f["properties"]["feature"] == "zone" and f["properties"]["kind"] == "general-limit")
    assert z["properties"]["limits"] == "fcc-1310" and z["properties"]["population"] == "general"
    assert z["properties"]["level"] == 1.0 and z["properties"]["sign_word"] == "NOTICE"
    na = [f for f in feats if f["properties"].get("kind") == "not-assessable"]
    assert na and all(f["properties"]["level"] is None for f in na)  # NaN -> null


def test_positions_are_lon_lat_in_range_with_7_decimals(fc):
    """RFC 7946 §3.1.1, §4, §11.2."""
    obj, _, _ = fc
    for f in obj["features"]:
        g = f["geometry"]
        positions = [g["coordinates"]] if g["type"] == "Point" else [
            p for poly in _rings(g) for ring in poly for p in ring]
        for lon, lat, *rest in positions:
            assert not rest
            assert -180 <= lon <= 180 and -90 <= lat <= 90
            assert round(lon, 7) == lon and round(lat, 7) == lat
            assert abs(lon - LON0) < 0.01 and abs(lat - LAT0) < 0.01


def test_antenna_point_matches_an_independent_geodesic(fc):
    """T2 at 30 m east, 20 m north: pyproj.Geod forward from the origin."""
    from pyproj import Geod

    obj, _, _ = fc
    t2 = next(f for f in obj["features"] if f["properties"].get("id") == "T2")
    lon, lat = t2["geometry"]["coordinates"]
    lon_ref, lat_ref, _ = Geod(ellps="WGS84").fwd(LON0, LAT0, math.degrees(math.atan2(30.0, 20.0)), math.hypot(30, 20))
    assert lon == pytest.approx(lon_ref, abs=2e-7) and lat == pytest.approx(lat_ref, abs=2e-7)
    assert t2["properties"]["height_m"] == 1.02 and t2["properties"]["frequency_mhz"] == 2000.0
    assert t2["properties"]["eirp_w"] == pytest.approx(50.0)


def test_rings_closed_and_right_hand_rule(fc):
    """RFC 7946 §3.1.6: closed, >= 4 positions, exterior counter-clockwise, holes clockwise."""
    obj, _, _ = fc
    n_holes = 0
    for f in obj["features"]:
        if f["geometry"]["type"] == "Point":
            continue
        for poly in _rings(f["geometry"]):
            for k, ring in enumerate(poly):
                assert len(ring) >= 4
                assert ring[0] == ring[-1]
                area = _signed_area(ring)
                assert (area > 0) if k == 0 else (area < 0)
                n_holes += k > 0
    assert n_holes >= 1  # the general-limit zone round the unassessable spot below T1


def test_no_nan_in_json_and_the_dict_matches_the_file(fc):
    obj, res, zones = fc
    again = json.loads(json.dumps(feature_collection(res, zones), allow_nan=False))
    assert again == obj
