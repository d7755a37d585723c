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


def _loop_pattern_file(path):
    """A small loop with horizontal axis (C. A. Balanis, Antenna Theory, 4th ed., Wiley, 2016,
    sec. 5.2: G = 1.5 sin^2 of the angle from the loop axis, here the antenna's y axis) as a
    pattern file with a 5 deg full-sphere 3-D table; returns the file's lines."""
    import numpy as np

    from siteexposure.readers.pattern_csv import write_pattern_csv

    def db(a_deg, e_deg):
        a, e = np.deg2rad(a_deg), np.deg2rad(e_deg)
        return np.maximum(10 * np.log10(np.maximum(1.5 * (1 - (np.cos(e) * np.sin(a)) ** 2),
                                                   1e-30)), -60.0)

    az, el = np.arange(0.0, 360.0, 5.0), np.arange(-90.0, 90.001, 5.0)
    write_pattern_csv(path, peak_gain_dbi=float(db(0.0, 0.0)), h_angle_deg=az,
                      h_gain_dbi=db(az, 0.0), v_front_elev_deg=el, v_front_gain_dbi=db(0.0, el),
                      v_back_elev_deg=el, v_back_gain_dbi=db(180.0, el),
                      sphere=(az, el, db(az[:, None], el[None, :])), metadata={"name": "loop"})
    return path.read_text().splitlines()


def test_a_pattern_file_with_a_3d_table_screens_and_a_bad_table_is_one_line_exit_2(tmp_path):
    """The window of SMALL_SITE is 45 deg clockwise of the antenna's boresight and
    atan(4 / sqrt(50)) = 29.5 deg below it: the loop's gain there is
    1.5 (1 - cos^2(29.5 deg) sin^2(45 deg)) = 0.932, so S = P G / (4 pi r^2) (OET-65 eq. (3),
    equation number from memory) = 20 W x 0.932 / (4 pi x 66 m^2); a synthesis from the cuts
    would give 1.5 cos^2(45 deg) = 0.75 there."""
    import math

    lines = _loop_pattern_file(tmp_path / "loop.csv")
    site = tmp_path / "loop_site.toml"
    site.write_text(SMALL_SITE.replace('pattern = { model = "isotropic" }', 'pattern = "loop.csv"'))
    p = run("screen", str(site), "--json")
    assert p.returncode == 0, p.stderr
    d = json.loads(p.stdout)
    assert "full-sphere table" in d["antennas"][0]["model"]["reason"]
    el = math.atan2(4.0, math.sqrt(50.0))
    gain = 1.5 * (1.0 - math.cos(el) ** 2 * 0.5)
    window = d["points"][0]["antennas"][0]["power_density_w_m2"]
    assert window == pytest.approx(20.0 * gain / (4.0 * math.pi * 66.0), rel=0.01)
    # the same file with one cell of its 3-D table not a number
    n = lines.index("azimuth_deg,elevation_deg,gain_dbi") + 40
    lines[n - 1] = lines[n - 1].rsplit(",", 1)[0] + ",nan"
    (tmp_path / "loop.csv").write_text("\n".join(lines) + "\n")
    p = run("screen", str(site))
    assert p.returncode == 2 and p.stdout == ""
    err = p.stderr.strip().splitlines()
    assert len(err) == 1 and "Traceback" not in p.stderr
    assert err[0].startswith(f"Error: {site}: antenna \"T1\" > pattern: pattern file "
                             f"'{tmp_path / 'loop.csv'}', line {n}: gain_dbi = 'nan'; expected "
                             "a finite gain in dBi")


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
