"""`siteexposure limits` end to end: `python -m siteexposure limits ...` in a subprocess."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
IDS = ["fcc-1310", "hc-sc6-2015", "icnirp-1998", "icnirp-2020", "ieee-c95.1-2019"]
FIXED_KEYS = {"set", "population", "frequency_mhz", "s_w_m2", "e_v_m", "h_a_m", "averaging_min"}


def run(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "siteexposure", "limits", *args],
        capture_output=True,
        text=True,
        cwd=REPO,
        timeout=60,
        env={"PATH": "/usr/bin:/bin", "PYTHONIOENCODING": "utf-8", "COLUMNS": "100"},
    )


def test_without_options_lists_every_set_and_ends_with_the_caution() -> None:
    out = run()
    assert out.returncode == 0, out.stderr
    for set_id in IDS:
        assert set_id in out.stdout
    assert "47 CFR" in out.stdout and "Health Physics 118(5)" in out.stdout
    last = out.stdout.strip().splitlines()[-1]
    assert last.startswith("Caution:") and "regulator" in last


def test_json_rows_have_the_fixed_keys_and_published_values() -> None:
    """47 CFR 1.1310 Table 1 at 900 MHz: f/1500 = 0.6 mW/cm² (6 W/m²), 30 min, general;
    f/300 = 3 mW/cm² (30 W/m²), 6 min, occupational; no E or H above 300 MHz (null)."""
    out = run("--set", "fcc-1310", "--freq", "900", "--json")
    assert out.returncode == 0, out.stderr
    rows = json.loads(out.stdout)  # stdout is one JSON document and nothing else
    assert isinstance(rows, list) and len(rows) == 2
    for row in rows:
        assert FIXED_KEYS <= set(row)
        assert row["set"] == "fcc-1310" and row["frequency_mhz"] == 900.0
        assert row["e_v_m"] is None and row["h_a_m"] is None
    by_pop = {row["population"]: row for row in rows}
    assert by_pop["general"]["s_w_m2"] == pytest.approx(6.0)
    assert by_pop["general"]["averaging_min"] == 30.0
    assert by_pop["occupational"]["s_w_m2"] == pytest.approx(30.0)
    assert by_pop["occupational"]["averaging_min"] == 6.0


def test_json_without_freq_gives_band_edges_for_every_set_and_region() -> None:
    out = run("--json")
    assert out.returncode == 0, out.stderr
    rows = json.loads(out.stdout)
    assert {row["set"] for row in rows} == set(IDS)
    local = [r for r in rows if r["set"] == "icnirp-2020" and r["region"] == "local"]
    # ICNIRP 2020 Table 6 (retrieved copy): 300 GHz is its own row, 20 W/m² general public.
    at_300ghz = [r for r in local if r["frequency_mhz"] == 300000.0 and r["population"] == "general"]
    assert at_300ghz[0]["s_w_m2"] == 20.0
    assert any(r["s_w_m2"] is None for r in rows)  # e.g. ICNIRP 2020 below 30 MHz (NA)


def test_repeated_freq_without_set_covers_every_set_that_has_it() -> None:
    out = run("--freq", "150000", "--freq", "900", "--json")
    assert out.returncode == 0, out.stderr
    rows = json.loads(out.stdout)
    assert {r["set"] for r in rows} == set(IDS)
    assert not any(r["set"] == "fcc-1310" and r["frequency_mhz"] == 150000.0 for r in rows)


def test_human_rows_and_bands() -> None:
    out = run("--set", "icnirp-2020", "--freq", "2450")
    assert out.returncode == 0, out.stderr
    assert "local" in out.stdout and "whole-body" in out.stdout
    assert out.stdout.strip().splitlines()[-1].startswith("Caution:")
    bands = run("--set", "fcc-1310", "--bands")
    assert bands.returncode == 0, bands.stderr
    assert "824/f" in bands.stdout and "1842/f" in bands.stdout


@pytest.mark.parametrize(
    ("args", "needle"),
    [
        (("--set", "nope"), "expected one of fcc-1310, hc-sc6-2015"),
        (("--set", "fcc-1310", "--freq", "200000"), "covers 0.3 to 100000 MHz"),
        (("--freq", "1e7"), "outside every limit table"),
        (("--set", "icnirp-2020", "--freq", "0", "--json"), "not a positive finite number"),
    ],
)
def test_errors_are_one_line_with_exit_status_2(args, needle) -> None:
    out = run(*args)
    assert out.returncode == 2
    assert out.stdout == ""
    lines = out.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: ")
    assert needle in lines[0]
    assert "Traceback" not in out.stderr
