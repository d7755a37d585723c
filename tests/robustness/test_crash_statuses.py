"""Issue 13, items 3-8: a crash never looks like a verdict, work is bounded, outputs parse for
any name, and nothing but a pattern file is ever echoed.

Exit statuses (README "Exit statuses"): 0 done, 1 a limit exceeded where people can reach,
2 bad input or command line, 70 unexpected internal error (sysexits EX_SOFTWARE), 74 a file
the system could not write or read (EX_IOERR), 130 interrupted (128 + SIGINT). The sysexits
values are common practice (BSD sysexits.h).
"""

from __future__ import annotations

import os
import subprocess
import sys
import xml.etree.ElementTree as ET

import pytest
import sitegen

from siteexposure.writers.grid_csv import csv_text
from siteexposure.writers.kml import xml_text
from siteexposure.writers.maps import MAX_SLUG, map_file_stem


def _site(tmp_path):
    return sitegen.write_site(tmp_path, sitegen.base_site())


def _one_line(run, code):
    assert run.code == code, (run.code, run.stderr[-2000:])
    assert "Traceback" not in run.stderr
    lines = run.stderr.strip("\n").splitlines()
    assert len(lines) == 1 and lines[0].startswith("Error: "), run.stderr[-2000:]
    return lines[0]


def test_an_unexpected_error_is_one_line_and_exit_70_never_1(tmp_path, monkeypatch):
    from siteexposure.engine import orchestrator

    def boom(*a, **k):
        raise ZeroDivisionError("an invented fault")

    monkeypatch.setattr(orchestrator, "evaluate_site", boom)
    line = _one_line(sitegen.run_cli(["screen", _site(tmp_path), "--no-progress"]), 70)
    assert "internal error" in line and "ZeroDivisionError" in line and "--debug" in line


def test_interrupted_is_one_line_and_exit_130(tmp_path, monkeypatch):
    from siteexposure.engine import orchestrator

    def stop(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(orchestrator, "evaluate_site", stop)
    assert "interrupted" in _one_line(sitegen.run_cli(["screen", _site(tmp_path)]), 130)


@pytest.mark.parametrize("args, word", [
    (["limits", "--freq", "1,950"], "--freq"),
    (["limits", "--set", "icnirp-2020", "--freq", "nan"], "--freq"),
    (["point", "SITE", "--at", "1", "two", "3"], "--at"),
    (["screen"], "site_file"),
    (["no-such-command"], "no-such-command"),
])
def test_command_line_errors_are_one_line_naming_the_option(tmp_path, args, word):
    args = [str(_site(tmp_path)) if a == "SITE" else a for a in args]
    line = _one_line(sitegen.run_cli(args), 2)
    assert word in line and "np.float64" not in line


def test_a_long_unknown_key_gives_a_bounded_message(tmp_path):
    doc = sitegen.base_site()
    doc["site"]["k" * 100_000] = 1
    run = sitegen.run_cli(["screen", sitegen.write_site(tmp_path, doc), "--json"])
    assert run.code == 2 and len(run.stderr) < 2_000


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_site_files_that_are_devices_pipes_huge_or_deep_are_refused_up_front(tmp_path):
    assert "not a regular file" in _one_line(sitegen.run_cli(["screen", "/dev/zero"]), 2)
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    assert "not a regular file" in _one_line(sitegen.run_cli(["screen", fifo]), 2)
    big = tmp_path / "big.toml"
    with open(big, "wb") as f:
        f.truncate(2**31)  # sparse: no disk used
    assert "MiB" in _one_line(sitegen.run_cli(["screen", big]), 2)
    deep = tmp_path / "deep.toml"
    deep.write_text("a = " + "[" * 3000 + "]" * 3000 + "\n")
    assert "nested too deeply" in _one_line(sitegen.run_cli(["screen", deep]), 2)


def test_a_file_that_is_not_a_pattern_file_is_never_echoed(tmp_path):
    secret = tmp_path / "secret.txt"
    secret.write_text("root:x:0:0:a line that must not be shown\n")
    doc = sitegen.base_site()
    doc["antenna"][0]["pattern"] = str(secret)
    line = _one_line(sitegen.run_cli(["screen", sitegen.write_site(tmp_path, doc)]), 2)
    assert "does not look like a pattern file" in line and "root:" not in line


def test_confined_pattern_paths_refuse_a_path_outside_the_site_folder(tmp_path):
    outside = tmp_path / "elsewhere"
    outside.mkdir()
    (outside / "p.csv").write_text(sitegen.pattern_text())
    doc = sitegen.base_site()
    doc["antenna"][0]["pattern"] = "../elsewhere/p.csv"
    site = sitegen.write_site(tmp_path / "site", doc)
    from siteexposure.engine.batch import screen_one

    assert screen_one(str(site))["error"] is None
    row = screen_one(str(site), confine_patterns=True)
    assert "outside the site file's folder" in row["error"]


def test_batch_caps_workers_and_turns_a_bad_dask_address_into_exit_2(tmp_path):
    site = _site(tmp_path)
    r = subprocess.run([sys.executable, "-m", "siteexposure", "batch", str(site), str(site),
                        "--workers", "2000000000", "--json"], capture_output=True, text=True,
                       timeout=600)
    assert r.returncode in (0, 1), r.stderr[-2000:]
    assert f"using {os.cpu_count()}" in r.stderr
    pytest.importorskip("distributed")
    line = _one_line(sitegen.run_cli(["batch", site, "--dask", "tcp://nonsense:::"]), 2)
    assert "--dask" in line


def test_one_site_that_crashes_is_a_row_not_the_end_of_the_batch(tmp_path, monkeypatch):
    from siteexposure.engine import batch, orchestrator

    def boom(*a, **k):
        raise RuntimeError("an invented fault")

    monkeypatch.setattr(orchestrator, "evaluate_site", boom)
    rows = batch.screen_many([_site(tmp_path)], workers=1)
    assert "internal error" in rows[0]["error"]


def test_names_with_terminal_markup_print_as_given(tmp_path):
    doc = sitegen.base_site()
    doc["area"][0]["name"] = "Deck [/bold] [red]x[/] \x1b[31m"
    run = sitegen.run_cli(["screen", sitegen.write_site(tmp_path, doc), "--no-progress"])
    assert run.code in (0, 1), run.stderr[-2000:]
    assert "[/bold] [red]x[/]" in run.stdout and "\x1b[31m" not in run.stdout
    assert "\\x1b[31m" in run.stdout


def test_screen_json_into_a_full_disk_is_exit_74(tmp_path):
    if not os.path.exists("/dev/full"):
        pytest.skip("needs /dev/full")
    site = _site(tmp_path)
    with open("/dev/full", "w") as full:
        r = subprocess.run([sys.executable, "-m", "siteexposure", "screen", str(site), "--json",
                            "--no-progress"], stdout=full, stderr=subprocess.PIPE, text=True,
                           timeout=600)
    assert r.returncode == 74, r.stderr[-2000:]
    assert r.stderr.startswith("Error: ") and "Traceback" not in r.stderr


@pytest.mark.parametrize("name", ["ok", "ctl \x01\x0b\x00 end", "\ufffe\uffff", "emoji \U0001f4e1",
                                  "<tag> & 'q' \"d\"", "\ud800 lone"])
def test_kml_text_is_well_formed_xml_for_any_name(name):
    doc = ET.Element("kml")
    el = ET.SubElement(doc, "name")
    el.text = xml_text(name)
    back = ET.fromstring(ET.tostring(doc, encoding="utf-8"))
    assert back.find("name").text == xml_text(name)


@pytest.mark.parametrize("name, cell", [("=SUM(A1)", "'=SUM(A1)"), ("+1", "'+1"), ("-x", "'-x"),
                                        ("@a", "'@a"), ("Roof", "Roof"), ("a=b", "a=b")])
def test_csv_names_are_never_spreadsheet_formulas(name, cell):
    """OWASP, "CSV Injection" (common practice): a leading = + - @ makes a formula."""
    assert csv_text(name) == cell


def test_map_file_names_stay_short_and_distinct_for_long_names():
    a = map_file_stem("plan", 1, "L" * 5000, "fcc-1310")
    b = map_file_stem("plan", 1, "L" * 4999, "fcc-1310")
    assert a != b and len(a) <= MAX_SLUG + 30


@pytest.mark.parametrize("key", ["hpbw_v_deg", "hpbw_h_deg"])
def test_absurd_beamwidths_are_refused_with_the_key(key):
    from siteexposure.errors import PatternError
    from siteexposure.physics.patterns import parametric_pattern

    spec = {"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0, "hpbw_v_deg": 7.0}
    spec[key] = 1e-300
    with pytest.raises(PatternError, match=f"{key}' = 1e-300.*physical beamwidth"):
        parametric_pattern(spec)


def test_sigterm_leaves_no_temporary_folder_and_exits_143(tmp_path):
    import signal
    import time

    site = _site(tmp_path)
    tmp = tmp_path / "tmp"
    tmp.mkdir()
    env = dict(os.environ, TMPDIR=str(tmp))
    p = subprocess.Popen([sys.executable, "-m", "siteexposure", "report", str(site), "--out",
                          str(tmp_path / "r.pdf"), "--no-progress"], env=env,
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 120
    while not any(tmp.glob("siteexposure-maps-*")) and p.poll() is None:
        assert time.monotonic() < deadline
        time.sleep(0.05)
    if p.poll() is not None:
        pytest.skip("the report finished before it could be terminated")
    p.send_signal(signal.SIGTERM)
    _, err = p.communicate(timeout=120)
    assert p.returncode == 143, err[-2000:]
    assert "terminated" in err and "Traceback" not in err
    assert not any(tmp.iterdir()), list(tmp.iterdir())
    assert not (tmp_path / "r.pdf").exists()


def test_a_30000_character_name_is_one_line_exit_2(tmp_path):
    doc = sitegen.base_site()
    doc["site"]["name"] = "N" * 30_000
    line = _one_line(sitegen.run_cli(["screen", sitegen.write_site(tmp_path, doc)]), 2)
    assert "at most 200 characters" in line and len(line) < 1_000


def test_a_duplicate_key_is_named(tmp_path):
    site = tmp_path / "dup.toml"
    site.write_text('[site]\nname = "a"\nname = "b"\n')
    line = _one_line(sitegen.run_cli(["screen", site]), 2)
    assert "'name' is given twice" in line and "line 3" in line


def test_a_closed_stdout_is_exit_74_not_a_lost_result(tmp_path):
    r = subprocess.run([sys.executable, "-m", "siteexposure", "limits"],
                       preexec_fn=lambda: os.close(1), stderr=subprocess.PIPE, text=True,
                       timeout=120)
    assert r.returncode == 74 and "standard output is closed" in r.stderr


def test_names_survive_a_stdout_that_cannot_encode_them(tmp_path):
    import json

    doc = sitegen.base_site()
    doc["area"][0]["name"] = "Deck \u4e2d \U0001f4e1"
    site = sitegen.write_site(tmp_path, doc)
    env = dict(os.environ, PYTHONIOENCODING="cp1252")
    for args, check in ((["--json"], "json"), ([], "text")):
        r = subprocess.run([sys.executable, "-m", "siteexposure", "screen", str(site),
                            "--no-progress", *args], capture_output=True, env=env, timeout=600)
        assert r.returncode in (0, 1), r.stderr[-2000:]
        out = r.stdout.decode("cp1252")
        if check == "json":
            assert json.loads(out)["areas"][0]["name"] == "Deck \u4e2d \U0001f4e1"
        else:
            assert "Deck \\u4e2d \\U0001f4e1" in out


def test_antennas_times_points_is_bounded_up_front(tmp_path, monkeypatch):
    """5 000 antennas over 19 M points (issue 13) is ~1e11 evaluations, hours: refused before
    anything is computed; here the bound is lowered to the sample site's size."""
    from siteexposure.engine import orchestrator

    monkeypatch.setattr(orchestrator, "MAX_EVALUATIONS", 10.0)
    line = _one_line(sitegen.run_cli(["screen", _site(tmp_path), "--no-progress"]), 2)
    assert "field evaluations" in line and "resolution_m" in line
