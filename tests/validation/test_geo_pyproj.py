"""The local site frame (siteexposure.geo) against pyproj.Geod geodesics on WGS84.

Reference library: pyproj ``Geod(ellps="WGS84")``, whose ``inv``/``fwd`` solve the
geodesic problems with C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87
(2013) 43-55 (accurate to about 15 nm). The frame must put a point given as
``(east, north) = (d sin az, d cos az)`` at geodesic distance ``d`` and forward azimuth
``az`` (clockwise from TRUE north) from the origin.

Tolerances: 1 micrometre on distances and on the sideways offset ``d * d_az``; both are
far above the geodesic solver's 15 nm and far below anything that matters on a site.
They do catch the usual mistakes; measured with pyproj 3.7 while writing these tests: a
spherical azimuthal-equidistant frame (R = 6371008.8 m) is off by 0.6-6 m at 1 km
(latitudes 0-70), and a Transverse Mercator frame on a meridian 0.25 deg away turns
true north by 0.18-0.23 deg through grid convergence (about 3-4 m sideways at 1 km).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.errors import InputError
from siteexposure.geo import LocalFrame

pyproj = pytest.importorskip("pyproj")

LATITUDES = (0.0, 45.0, 60.0, -33.0, 70.0)
LONGITUDE = 17.25  # any longitude; the frame is centred on it
DISTANCES_M = np.array([1.0, 12.5, 80.0, 333.0, 1000.0, 4000.0])
AZIMUTHS_DEG = np.array([0.0, 30.0, 90.0, 147.5, 180.0, 225.0, 270.0, 312.0, 359.0])
TOL_M = 1.0e-6
#: mean Earth radius R1 of WGS84 (common practice: (2a + b) / 3, about 6371.0088 km)
R_MEAN_M = 6371008.8


@pytest.fixture(scope="module")
def geod():
    return pyproj.Geod(ellps="WGS84")


def _grid():
    d, az = np.meshgrid(DISTANCES_M, AZIMUTHS_DEG, indexing="ij")
    return d.ravel(), az.ravel()


@pytest.mark.parametrize("lat0", LATITUDES)
def test_distance_and_azimuth_from_origin_match_geodesic_inverse(geod, lat0):
    """pyproj.Geod.inv from the origin to each converted point gives back (d, az)."""
    frame = LocalFrame(lat0, LONGITUDE)
    d, az = _grid()
    east, north = d * np.sin(np.radians(az)), d * np.cos(np.radians(az))
    lon, lat = frame.to_lonlat(east, north)
    fwd_az, _back_az, dist = geod.inv(
        np.full_like(lon, LONGITUDE), np.full_like(lat, lat0), lon, lat
    )
    np.testing.assert_allclose(dist, d, rtol=0.0, atol=TOL_M)
    d_az = np.radians((np.asarray(fwd_az) - az + 180.0) % 360.0 - 180.0)
    assert np.max(np.abs(d * d_az)) < TOL_M


@pytest.mark.parametrize("lat0", LATITUDES)
def test_geodesic_forward_points_land_at_d_sin_az_d_cos_az(geod, lat0):
    """pyproj.Geod.fwd from the origin by (az, d) lands at east/north (d sin az, d cos az)."""
    frame = LocalFrame(lat0, LONGITUDE)
    d, az = _grid()
    lon, lat, _ = geod.fwd(np.full_like(d, LONGITUDE), np.full_like(d, lat0), az, d)
    east, north = frame.from_lonlat(lon, lat)
    np.testing.assert_allclose(east, d * np.sin(np.radians(az)), rtol=0.0, atol=TOL_M)
    np.testing.assert_allclose(north, d * np.cos(np.radians(az)), rtol=0.0, atol=TOL_M)


@pytest.mark.parametrize("lat0", LATITUDES)
def test_north_axis_is_the_meridian_of_the_origin(lat0):
    """A point straight 'north' in the frame keeps the origin's longitude (true north)."""
    frame = LocalFrame(lat0, LONGITUDE)
    lon, lat = frame.to_lonlat(np.zeros(3), np.array([-500.0, 10.0, 900.0]))
    np.testing.assert_allclose(lon, LONGITUDE, rtol=0.0, atol=1e-12)
    assert np.all(np.diff(lat) > 0.0)


@pytest.mark.parametrize("lat0", LATITUDES)
@pytest.mark.parametrize("radius_m", [1000.0, 10000.0])
def test_distortion_between_points_away_from_origin(geod, lat0, radius_m):
    """Stated distortion: point-to-point distances at radius d are off by ~ (d/R)^2 / 6.

    Source of the bound: J. P. Snyder, USGS Professional Paper 1395 (1987), ch. 25, the
    spherical azimuthal-equidistant scale across the radius k' = c / sin c
    ~ 1 + c^2 / 6 with c = d / R; the ellipsoid changes it by a few per cent at most
    (allowance 50 %). At 1 km that is about 4e-9, at 10 km about 4e-7.
    """
    frame = LocalFrame(lat0, LONGITUDE)
    rng = np.random.default_rng(20240)
    az = rng.uniform(0.0, 360.0, size=(2, 300))
    east, north = radius_m * np.sin(np.radians(az)), radius_m * np.cos(np.radians(az))
    lon, lat = frame.to_lonlat(east, north)
    _, _, chord_geodesic = geod.inv(lon[0], lat[0], lon[1], lat[1])
    chord_frame = np.hypot(east[0] - east[1], north[0] - north[1])
    keep = chord_geodesic > 10.0
    rel = np.abs(chord_frame[keep] - chord_geodesic[keep]) / chord_geodesic[keep]
    bound = 1.5 * (radius_m / R_MEAN_M) ** 2 / 6.0
    assert np.max(rel) < bound
    # the distortion is real, not zero: the frame is a projection, not the geodesic
    assert np.max(rel) > 0.3 * (radius_m / R_MEAN_M) ** 2 / 6.0


@pytest.mark.parametrize("lat0", LATITUDES)
def test_round_trip_local_lonlat_local(lat0):
    """east/north -> lon/lat -> east/north returns the input to 1 micrometre (and back)."""
    frame = LocalFrame(lat0, LONGITUDE)
    rng = np.random.default_rng(7)
    en = rng.uniform(-2500.0, 2500.0, size=(2, 4, 5))
    lon, lat = frame.to_lonlat(en[0], en[1])
    assert lon.shape == (4, 5) and lat.shape == (4, 5)
    east, north = frame.from_lonlat(lon, lat)
    np.testing.assert_allclose(east, en[0], rtol=0.0, atol=TOL_M)
    np.testing.assert_allclose(north, en[1], rtol=0.0, atol=TOL_M)
    lon2, lat2 = frame.to_lonlat(east, north)
    np.testing.assert_allclose(lon2, lon, rtol=0.0, atol=1e-11)
    np.testing.assert_allclose(lat2, lat, rtol=0.0, atol=1e-11)


@settings(max_examples=60, deadline=None)
@given(
    lat0=st.floats(-85.0, 85.0),
    lon0=st.floats(-180.0, 180.0),
    east=st.floats(-5000.0, 5000.0),
    north=st.floats(-5000.0, 5000.0),
)
def test_any_origin_and_offset_round_trip_and_match_the_geodesic(lat0, lon0, east, north):
    """For any origin and any offset within 5 km: round trip to 1 um, and the geodesic
    distance from the origin (pyproj.Geod.inv) equals hypot(east, north) to 1 um."""
    frame = LocalFrame(lat0, lon0)
    lon, lat = frame.to_lonlat(east, north)
    e2, n2 = frame.from_lonlat(lon, lat)
    assert abs(e2 - east) < TOL_M and abs(n2 - north) < TOL_M
    _, _, dist = pyproj.Geod(ellps="WGS84").inv(lon0, lat0, lon, lat)
    assert abs(dist - math.hypot(east, north)) < TOL_M


def test_scalars_give_floats_and_origin_maps_to_zero():
    frame = LocalFrame(-33.0, 151.0)
    east, north = frame.from_lonlat(151.0, -33.0)
    assert isinstance(east, float) and isinstance(north, float)
    assert math.hypot(east, north) < 1e-9
    lon, lat = frame.to_lonlat(0.0, 0.0)
    assert (round(lon, 12), round(lat, 12)) == (151.0, -33.0)


def test_broadcasting_of_a_scalar_against_an_array():
    frame = LocalFrame(60.0, 5.0)
    lon, lat = frame.to_lonlat(np.array([0.0, 100.0, 200.0]), 50.0)
    assert lon.shape == (3,) and np.all(np.diff(lon) > 0.0)
    np.testing.assert_allclose(lat[0], lat[2], rtol=0.0, atol=1e-6)


@pytest.mark.parametrize(
    ("lat", "lon", "word"),
    [(90.5, 0.0, "lat"), (-91.0, 0.0, "lat"), (0.0, 180.5, "lon"), (0.0, -200.0, "lon"),
     (float("nan"), 0.0, "lat"), (0.0, float("inf"), "lon"), ("north", 0.0, "lat")],
)
def test_origin_out_of_range_is_an_input_error(lat, lon, word):
    with pytest.raises(InputError, match=word):
        LocalFrame(lat, lon)


def test_import_of_the_module_does_not_load_pyproj():
    """``import siteexposure.geo`` stays light; pyproj loads on first conversion only."""
    import subprocess
    import sys

    code = "import sys, siteexposure.geo; print('pyproj' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


@pytest.mark.parametrize("lat0", [0.0, 45.0, -70.0, 85.0])
@pytest.mark.parametrize("east, north", [(1e-5, -2e-5), (9e-4, 0.0), (1.1e-3, 3e-4)])
def test_sub_millimetre_offsets_survive_the_round_trip(lat0, east, north):
    """PROJ's aeqd snaps points within ~1e-10 earth radii of the centre onto it; the frame
    keeps them (local linear map there). Checked against pyproj.Geod.inv to 0.1 um."""
    frame = LocalFrame(lat0, 10.0)
    lon, lat = frame.to_lonlat(east, north)
    e2, n2 = frame.from_lonlat(lon, lat)
    assert abs(e2 - east) < 1e-9 and abs(n2 - north) < 1e-9
    _, _, dist = pyproj.Geod(ellps="WGS84").inv(10.0, lat0, lon, lat)
    assert abs(dist - math.hypot(east, north)) < 1e-7
