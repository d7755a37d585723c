"""KML output parsed with xml.etree against OGC KML 2.2 (OGC 07-147r2).

Checked: the kml root in the KML 2.2 namespace with one Document; Placemarks for every
zone, area, antenna and receptor with ExtendedData; ``<coordinates>`` as white-space
separated ``lon,lat[,alt]`` tuples (KML 2.2 §16.9, kml:coordinates), WGS84 degrees in
range; Polygon rings closed (first = last, KML 2.2 §10.8 kml:LinearRing needs at least
four tuples) with ``outerBoundaryIs`` / ``innerBoundaryIs``; ``altitudeMode``
relativeToGround with the floor or antenna height as altitude. Outer rings
counter-clockwise (KML reference: "coordinates for polygons must be specified in
counterclockwise order", from memory). Positions agree with pyproj.Geod forward
geodesics from the site origin.
"""

import math
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from siteexposure.containers import Antenna, Area, Averaging, Receptor, Site
from siteexposure.engine.orchestrator import evaluate_site
from siteexposure.engine.zones import compute_zones
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.writers.kml import KML_NS, write_kml

NS = {"k": KML_NS}
LAT0, LON0 = 51.5, -0.12


@pytest.fixture(scope="module")
def parsed(tmp_path_factory):
    dipole = parametric_pattern({"model": "half-wave-dipole"})
    ant = Antenna(id="D1", operator="Op", position_m=np.array([5.0, -4.0, 13.0]), azimuth_deg=0.0,
                  mechanical_tilt_deg=0.0, electrical_tilt_deg=0.0, frequency_mhz=2000.0,
                  tx_power_w=2500.0, pattern=dipole, model="far-field")
    deck = Area("Deck", "public", 10.0, np.array([[-4, -13], [14, -13], [14, 5], [-4, 5]], float))
    site = Site(name="kml check", origin_lat=LAT0, origin_lon=LON0, limits=("fcc-1310",),
                antennas=(ant,), areas=(deck,), points=(Receptor("Window", np.array([20.0, 0.0, 12.0])),),
                averaging=Averaging("peak", 0.0, 2.0, 3), resolution_m=0.2)
    res = evaluate_site(site, mitigation=False)
    zones = compute_zones(res)
    path = write_kml(res, zones, tmp_path_factory.mktemp("kml") / "site.kml")
    return ET.parse(path).getroot(), res, zones


def _tuples(text):
    out = []
    for tup in text.split():
        parts = [float(v) for v in tup.split(",")]
        assert len(parts) in (2, 3)
        out.append(parts)
    return out


def test_document_and_placemarks(parsed):
    root, res, zones = parsed
    assert root.tag == f"{{{KML_NS}}}kml"
    docs = root.findall("k:Document", NS)
    assert len(docs) == 1
    pms = root.findall(".//k:Placemark", NS)
    assert len(pms) == len(zones) + len(res.site.areas) + len(res.antennas) + len(res.points)
    for pm in pms:
        assert pm.find("k:name", NS).text
        assert pm.find("k:ExtendedData", NS) is not None
    data = {d.get("name"): d.find("k:value", NS).text
            for d in pms[0].findall("k:ExtendedData/k:Data", NS)}
    assert data["feature"] == "zone" and data["limits"] == "fcc-1310"


def test_coordinates_are_lon_lat_alt_with_closed_ccw_outer_rings(parsed):
    root, _, _ = parsed
    n_inner = 0
    for pg in root.iter(f"{{{KML_NS}}}Polygon"):
        assert pg.find("k:altitudeMode", NS).text == "relativeToGround"
        outer = pg.find("k:outerBoundaryIs/k:LinearRing/k:coordinates", NS)
        rings = [(outer, True)] + [(c, False) for c in pg.findall("k:innerBoundaryIs/k:LinearRing/k:coordinates", NS)]
        for coords, is_outer in rings:
            t = np.array(_tuples(coords.text))
            assert len(t) >= 4 and np.all(t[0] == t[-1])
            assert np.all(np.abs(t[:, 0]) <= 180) and np.all(np.abs(t[:, 1]) <= 90)
            assert np.all(np.abs(t[:, 0] - LON0) < 0.01) and np.all(np.abs(t[:, 1] - LAT0) < 0.01)
            assert np.allclose(t[:, 2], 10.0)  # the floor height
            area = 0.5 * np.sum(t[:-1, 0] * t[1:, 1] - t[1:, 0] * t[:-1, 1])
            assert (area > 0) if is_outer else (area < 0)
            n_inner += not is_outer
    assert n_inner >= 1  # the dipole's null straight down leaves a hole in its zone


def test_antenna_point_position_and_height(parsed):
    from pyproj import Geod

    root, _, _ = parsed
    pm = next(p for p in root.iter(f"{{{KML_NS}}}Placemark") if p.find("k:name", NS).text == "D1")
    (lon, lat, alt), = _tuples(pm.find("k:Point/k:coordinates", NS).text)
    lon_ref, lat_ref, _ = Geod(ellps="WGS84").fwd(LON0, LAT0, math.degrees(math.atan2(5.0, -4.0)), math.hypot(5, 4))
    assert lon == pytest.approx(lon_ref, abs=2e-7) and lat == pytest.approx(lat_ref, abs=2e-7)
    assert alt == pytest.approx(13.0)
