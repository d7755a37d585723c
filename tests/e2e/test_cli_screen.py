"""The `screen`, `point` and `batch` commands end to end: exit codes, fixed JSON keys, cautions."""

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
SITES = ROOT / "sample_sites"


def run(*args, cwd=None):
    env = {**os.environ, "COLUMNS": "140"}
    return subprocess.run([sys.executable, "-m", "siteexposure", *args], capture_output=True, text=True, cwd=cwd, env=env, timeout=600)


SMALL_SITE = """
[site]
name = "small test site"
origin = { lat = 40.0, lon = -100.0 }
limits = ["fcc-1310"]
averaging = { method = "vertical-line", bottom_m = 0.0, top_m = 2.0, points = 5 }
resolution_m = 1.0

[[area]]
name = "Deck"
access = "public"
floor_m = 0.0
outline = [[-10, -10], [10, -10], [10, 10], [-10, 10]]

[[point]]
name = "Window"
at = [5.0, 5.0, 8.0]
access = "public"

[[antenna]]
id = "T1"
operator = "Op"
position = [0.0, 0.0, 12.0]
azimuth_deg = 0
frequency_mhz = 1950
tx_power_w = 20.0
pattern = { model = "isotropic" }
model = "far-field"
"""


@pytest.fixture(scope="module")
def small_site(tmp_path_factory):
    path = tmp_path_factory.mktemp("site") / "small.toml"
    path.write_text(SMALL_SITE)
    return path


@pytest.fixture(scope="module")
def dish_json(small_site):
    return run("screen", str(small_site), "--json")


def test_screen_json_has_the_fixed_keys(dish_json):
    """20 W isotropic, 12 m up, S = P/(4 pi r^2) (OET-65 eq. 3) vs 10 W/m^2 (47 CFR 1.1310 Table 1 (B)).

    The worst line stands on the cell centre nearest the foot (0.5 m off in E and N); its
    ratio is the mean over the 5 evenly spaced heights 0..2 m.
    """
    import math

    assert dish_json.returncode == 0, dish_json.stderr
    d = json.loads(dish_json.stdout)
    hs = [0.0, 0.5, 1.0, 1.5, 2.0]
    expected = sum(20 / (4 * math.pi * ((12 - h) ** 2 + 0.5)) / 10 for h in hs) / len(hs)
    assert d["areas"][0]["max_exposure_ratio"] == pytest.approx(expected, rel=1e-5)
    for area in d["areas"]:
        assert {"name", "access", "max_exposure_ratio"} <= set(area)
    for ant in d["antennas"]:
        assert {"id", "keep_out_m"} <= set(ant)
        assert set(ant["keep_out_m"]) == {"general", "occupational"}
        assert {"front", "behind", "left", "right", "above", "below"} <= set(ant["keep_out_m"]["general"])
    for p in d["points"]:
        assert {"name", "antennas", "exposure"} <= set(p)
        assert all({"id", "power_density_w_m2"} <= set(a) for a in p["antennas"])
        assert all({"limits", "population", "exposure_ratio"} <= set(e) for e in p["exposure"])
    assert "not a measurement" in d["status"]


def test_screen_json_is_reproducible(dish_json, small_site):
    again = run("screen", str(small_site), "--json")
    assert again.stdout == dish_json.stdout


def test_screen_human_summary_carries_the_cautions(small_site):
    p = run("screen", str(small_site), "--no-progress")
    assert p.returncode == 0
    text = p.stdout
    assert "not a measurement" in text and "licensed professional" in text and "Local regulations" in text
    assert "Areas" in text and "Antennas" in text


@pytest.mark.slow
def test_screen_exits_1_where_a_limit_is_exceeded_where_people_can_reach():
    p = run("screen", str(SITES / "office_roof.toml"), "--json")
    assert p.returncode == 1, p.stderr
    d = json.loads(p.stdout)
    assert d["exceeded_where_reachable"] is True
    worker = [a for a in d["areas"] if a["access"] == "worker" and a["verdict"] == "exceeds"]
    assert worker, "the sample penthouse roof exceeds the occupational limit"
    none = [a for a in d["areas"] if a["access"] == "none"]
    assert none and all(a["max_exposure_ratio"] is None for a in none)
    for a in worker:
        for b in a["by_limits"]:
            if b["verdict"] == "exceeds":
                assert b["responsible_operators"]
                assert b["mitigation"]["uniform_reduction_db"] > 0


def test_point_json_keys_and_values():
    site = SITES / "parking_dish.toml"
    p = run("point", str(site), "--at", "5", "5", "12", "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    assert d["antennas"] and all("power_density_w_m2" in a for a in d["antennas"])
    assert {e["population"] for e in d["exposure"]} == {"general", "occupational"}
    assert d["assessable"] is True


def test_point_in_the_reactive_near_field_is_not_assessable():
    from siteexposure.readers.site_toml import read_site

    site = read_site(SITES / "parking_dish.toml")
    ant = site.antennas[0]
    e, n, z = (float(v) for v in ant.position_m)
    p = run("point", str(SITES / "parking_dish.toml"), "--at", str(e), str(n + 0.05), str(z), "--json")
    assert p.returncode == 0
    d = json.loads(p.stdout)
    assert d["assessable"] is False and "reactive" in d["reason"]
    assert all(x["exposure_ratio"] is None for x in d["exposure"])


def test_bad_site_file_is_one_line_exit_2(tmp_path):
    p = run("screen", str(tmp_path / "missing.toml"))
    assert p.returncode == 2
    assert p.stderr.startswith("Error: ") and "Traceback" not in p.stderr
    assert len(p.stderr.strip().splitlines()) == 1


def test_batch_over_processes_keeps_order_and_reports_bad_files(tmp_path, small_site):
    bad = tmp_path / "bad.toml"
    bad.write_text("[site]\nname = 3\n")
    p = run("batch", str(small_site), str(bad), "--workers", "2", "--json")
    assert p.returncode == 2
    rows = json.loads(p.stdout)["sites"]
    assert rows[0]["error"] is None and rows[0]["exceeded_where_reachable"] is False
    assert rows[1]["error"] and "bad.toml" in rows[1]["error"]


@pytest.mark.slow
def test_batch_on_a_local_dask_cluster_matches_the_local_run(small_site):
    pytest.importorskip("dask.distributed")
    from siteexposure.engine.batch import screen_many

    paths = [small_site, SITES / "parking_dish.toml"]
    local = screen_many(paths, workers=1)
    dask = screen_many(paths, workers=1, dask_address="local")
    assert dask == local
