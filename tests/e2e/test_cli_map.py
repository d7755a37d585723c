"""``siteexposure map SITE --out DIR`` end to end, as a user runs it (a subprocess).

Exit status 0 once the files are written, whatever the verdict (SPEC §6); every file it
lists exists; the GeoJSON is RFC 7946-shaped (FeatureCollection, lon/lat in range,
closed rings); bad input is exit status 2 with one ``Error:`` line and no files; an
output folder that is an input file, or that cannot be created, is refused the same way.
The site is an invented demo scenario.
"""

import json
import subprocess
import sys
from pathlib import Path

import pytest

SITE = """
[site]
name = "Harbour kiosk roof (invented)"
origin = { lat = 53.55, lon = 9.99 }
limits = ["fcc-1310"]
averaging = { method = "vertical-line", bottom_m = 0.0, top_m = 2.0, points = 3 }
resolution_m = 0.5
zone_levels = [0.5]

[[area]]
name = "Kiosk roof"
access = "public"
floor_m = 6.0
outline = [[0, 0], [14, 0], [14, 9], [0, 9]]

[[point]]
name = "Office window"
at = [20.0, 4.0, 7.0]

[[antenna]]
id = "K1"
operator = "Invented Radio"
position = [5.0, 4.0, 8.5]
azimuth_deg = 75
frequency_mhz = 1900.0
tx_power_w = 400.0
carriers = 2
pattern = { model = "3gpp-panel", gain_dbi = 15.0, hpbw_h_deg = 65, hpbw_v_deg = 10, front_to_back_db = 25 }
model = "far-field"

[[antenna]]
id = "K2"
operator = "Invented Radio"
position = [11.0, 7.0, 8.0]
azimuth_deg = 0
frequency_mhz = 2600.0
tx_power_w = 60.0
pattern = { model = "isotropic" }
model = "far-field"
"""


def _run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "siteexposure", *args], capture_output=True,
                          text=True, timeout=300, cwd=cwd)


@pytest.fixture()
def site_file(tmp_path):
    p = tmp_path / "kiosk.toml"
    p.write_text(SITE, encoding="utf-8")
    return p


def test_map_writes_and_lists_every_file(site_file, tmp_path):
    out = tmp_path / "maps"
    r = _run("map", str(site_file), "--out", str(out), "--no-progress")
    assert r.returncode == 0, r.stderr
    listed = [Path(line.strip()) for line in r.stdout.splitlines() if line.startswith("  ")]
    names = sorted(p.name for p in listed)
    assert names == sorted(p.name for p in out.iterdir())
    assert {"site.geojson", "site.kml", "grid_values.csv"} <= set(names)
    assert "plan_01_kiosk-roof_fcc-1310.png" in names and "plan_01_kiosk-roof_fcc-1310.svg" in names
    assert "elevation_02_k2_fcc-1310.svg" in names
    assert f"Wrote {len(listed)} files" in r.stdout
    assert "not a measurement" in r.stdout
    assert not list(out.glob(".*.part"))  # no temporary files left

    fc = json.loads((out / "site.geojson").read_text(encoding="utf-8"))
    assert fc["type"] == "FeatureCollection"
    for f in fc["features"]:
        g = f["geometry"]
        if g["type"] == "Point":
            lon, lat = g["coordinates"]
            assert abs(lon - 9.99) < 0.01 and abs(lat - 53.55) < 0.01  # lon first (RFC 7946 §3.1.1)
            continue
        polys = [g["coordinates"]] if g["type"] == "Polygon" else g["coordinates"]
        for poly in polys:
            for ring in poly:
                assert ring[0] == ring[-1] and len(ring) >= 4  # RFC 7946 §3.1.6
    header = (out / "grid_values.csv").read_text(encoding="utf-8").splitlines()[0]
    assert header == "east_m,north_m,floor_m,area,point,ratio_fcc-1310_general,ratio_fcc-1310_occupational"


def test_bad_input_exits_2_and_writes_nothing(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text(SITE.replace('access = "public"', 'access = "everyone"'), encoding="utf-8")
    out = tmp_path / "maps"
    r = _run("map", str(bad), "--out", str(out), "--no-progress")
    assert r.returncode == 2
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error:") and "access" in lines[0]
    assert not out.exists()


def test_output_folder_that_is_the_input_file_is_refused(site_file):
    before = site_file.read_bytes()
    r = _run("map", str(site_file), "--out", str(site_file), "--no-progress")
    assert r.returncode == 2 and r.stderr.startswith("Error:") and "input file" in r.stderr
    assert site_file.read_bytes() == before


def test_unwritable_output_folder_is_an_error(site_file, tmp_path):
    blocker = tmp_path / "a_file"
    blocker.write_text("not a folder")
    r = _run("map", str(site_file), "--out", str(blocker / "maps"), "--no-progress")
    assert r.returncode == 2 and r.stderr.startswith("Error:")
    assert "output folder" in r.stderr
