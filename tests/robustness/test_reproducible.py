"""Reproducibility: the same input gives the same outputs.

Two runs of each command on the invented deck, in separate processes with different
``PYTHONHASHSEED`` values (so that nothing may depend on set or dict ordering of strings):

* ``screen --json``: identical bytes;
* ``map --out``: identical bytes of every file (PNG, SVG, GeoJSON, KML, CSV);
* ``report --out``: identical extracted text, apart from the line with the run date (the
  run's UTC time, which is meant to differ).
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest
import sitegen

RUN_DATE = re.compile(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ")


def _run_twice(args_for) -> list[subprocess.CompletedProcess]:
    """Start both runs at once (one per core), with different hash seeds."""
    procs = []
    for seed in ("1", "2"):
        env = {**os.environ, "COLUMNS": "120", "PYTHONHASHSEED": seed}
        procs.append(subprocess.Popen([sys.executable, "-m", "siteexposure",
                                       *map(str, args_for(seed))], env=env,
                                      stdout=subprocess.PIPE, stderr=subprocess.PIPE))
    done = []
    for proc in procs:
        out, err = proc.communicate(timeout=300)
        done.append(subprocess.CompletedProcess(proc.args, proc.returncode, out, err))
    return done


@pytest.fixture(scope="module")
def deck(tmp_path_factory):
    folder = tmp_path_factory.mktemp("repro")
    return folder, sitegen.write_site(folder / "site", sitegen.base_site())


def test_screen_json_is_identical(deck):
    _, site = deck
    a, b = _run_twice(lambda seed: ["screen", site, "--json", "--no-progress"])
    assert a.returncode == b.returncode == 0, a.stderr
    assert a.stdout == b.stdout and a.stdout.startswith(b"{")


def test_map_files_are_identical(deck):
    folder, site = deck
    a, b = _run_twice(lambda seed: ["map", site, "--out", folder / f"maps{seed}", "--no-progress"])
    assert a.returncode == b.returncode == 0, a.stderr
    one, two = folder / "maps1", folder / "maps2"
    names = sorted(p.name for p in one.iterdir())
    assert names == sorted(p.name for p in two.iterdir())
    assert {Path(n).suffix for n in names} >= {".png", ".svg", ".geojson", ".kml", ".csv"}
    different = [n for n in names if (one / n).read_bytes() != (two / n).read_bytes()]
    assert different == []


def _pdf_lines(path: Path) -> list[str]:
    from pypdf import PdfReader

    return "\n".join(page.extract_text() for page in PdfReader(path).pages).splitlines()


def test_report_differs_only_in_its_run_date(deck):
    folder, site = deck
    runs = _run_twice(lambda seed: ["report", site, "--out", folder / f"r{seed}.pdf",
                                    "--no-progress"])
    assert all(p.returncode == 0 for p in runs), runs[0].stderr
    a, b = _pdf_lines(folder / "r1.pdf"), _pdf_lines(folder / "r2.pdf")
    assert len(a) == len(b)
    dated = [i for i, line in enumerate(a) if RUN_DATE.search(line)]
    assert dated, "the report prints its run date"
    assert [x for i, x in enumerate(a) if i not in dated] == [
        x for i, x in enumerate(b) if i not in dated]
