"""No command writes over one of its inputs (the site file, a pattern file, a limit table).

Every command that writes checks every output path against every input before it writes
anything (siteexposure.output_guard); a refused run is one ``Error:`` line, exit status 2,
and leaves the folder exactly as it was. ``report --with-maps`` writes the maps into a
folder of their own beside the PDF (``NAME_maps/``), never loose beside it. Paths are
compared after following symlinks and ``..``, and by file identity (device and inode).
The sites are the invented robustness deck of ``sitegen``.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest
import sitegen

from siteexposure.errors import OutputError


def _small_site(pattern: str = sitegen.PATTERN_NAME) -> dict:
    """The deck with one area and one antenna that reads a pattern file (fast to draw)."""
    doc = sitegen.base_site()
    doc["area"] = doc["area"][:1]
    doc["point"] = []
    doc["antenna"] = [{**doc["antenna"][2], "pattern": pattern}]
    return doc


def _write(folder: Path, site_name: str, pattern_name: str) -> Path:
    """A site file ``site_name`` reading the invented pattern file ``pattern_name``."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / pattern_name).parent.mkdir(parents=True, exist_ok=True)
    (folder / pattern_name).write_text(sitegen.pattern_text(), encoding="utf-8")
    site = folder / site_name
    site.write_text(sitegen.dump_toml(_small_site(pattern_name)), encoding="utf-8")
    return site


def _snapshot(folder: Path) -> dict[str, bytes | str]:
    """Every entry under ``folder``: file bytes, or where a symlink points, or 'dir'."""
    out: dict[str, bytes | str] = {}
    for p in sorted(folder.rglob("*")):
        key = str(p.relative_to(folder))
        if p.is_symlink():
            out[key] = "-> " + os.readlink(p)
        elif p.is_dir():
            out[key] = "dir"
        else:
            out[key] = p.read_bytes()
    return out


def _refused(args: list, folder: Path, *needles: str) -> str:
    before = _snapshot(folder)
    run = sitegen.run_cli(args)
    line = sitegen.assert_one_line_error(run)
    for needle in needles:
        assert needle in line, line
    assert _snapshot(folder) == before, "a refused run wrote something"
    return line


# ------------------------------------------------------------------------------------------
# the two cases of the issue: a pattern named grid_values.csv, a site named site.kml
# ------------------------------------------------------------------------------------------


def test_report_with_maps_writes_a_maps_folder_and_keeps_inputs_named_like_outputs(tmp_path, monkeypatch):
    """The site file is ``site.kml`` and the pattern ``grid_values.csv``, both in the current
    folder: ``report --with-maps`` used to replace both (exit 0). Now the maps and GIS files
    go to ``survey_maps/`` and the inputs are byte for byte what they were."""
    monkeypatch.chdir(tmp_path)
    _write(tmp_path, "site.kml", "grid_values.csv")
    inputs = {n: (tmp_path / n).read_bytes() for n in ("site.kml", "grid_values.csv")}
    run = sitegen.run_cli(["report", "site.kml", "--out", "survey.pdf", "--with-maps", "--no-progress"])
    assert run.code in (0, 1) and "Traceback" not in run.stderr, run.stderr
    assert run.code == 0, run.stderr
    assert {n: (tmp_path / n).read_bytes() for n in inputs} == inputs
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(
        [*inputs, "survey.pdf", "survey_maps"])
    maps = {p.name for p in (tmp_path / "survey_maps").iterdir()}
    assert {"site.kml", "site.geojson", "grid_values.csv"} <= maps
    assert any(n.startswith("plan_") and n.endswith(".png") for n in maps)
    assert f"wrote {Path('survey_maps') / 'site.kml'}" in run.stdout


@pytest.mark.parametrize(("site_name", "pattern_name", "clash"), [
    ("site.kml", "panel.csv", "site.kml"),
    ("deck.toml", "grid_values.csv", "grid_values.csv"),
])
def test_map_into_the_folder_of_its_inputs_is_refused_when_a_name_clashes(
        tmp_path, monkeypatch, site_name, pattern_name, clash):
    monkeypatch.chdir(tmp_path)
    _write(tmp_path, site_name, pattern_name)
    line = _refused(["map", site_name, "--out", ".", "--no-progress"], tmp_path,
                    f"writing '{clash}' would overwrite the input file", f"'{clash}'")
    assert line.startswith("Error: --out: ")


def test_report_with_maps_refuses_a_maps_folder_that_holds_an_input(tmp_path):
    """The pattern file lives in the very folder the maps would go to: nothing is written,
    not even the PDF."""
    site = _write(tmp_path, "deck.toml", "survey_maps/grid_values.csv")
    _refused(["report", site, "--out", tmp_path / "survey.pdf", "--with-maps", "--no-progress"],
             tmp_path, "--with-maps: writing", "would overwrite the input file",
             str(Path("survey_maps") / "grid_values.csv"))


# ------------------------------------------------------------------------------------------
# the same file under another name: symlinks, '..', the PDF on the site file
# ------------------------------------------------------------------------------------------


def test_a_symlinked_pattern_file_is_still_an_input(tmp_path):
    """The site reads ``panel.csv``, a symlink to ``real/grid_values.csv``; ``map --out real``
    would replace the pattern through its real name."""
    (tmp_path / "real").mkdir()
    (tmp_path / "real" / "grid_values.csv").write_text(sitegen.pattern_text(), encoding="utf-8")
    (tmp_path / "panel.csv").symlink_to(Path("real") / "grid_values.csv")
    site = tmp_path / "deck.toml"
    site.write_text(sitegen.dump_toml(_small_site("panel.csv")), encoding="utf-8")
    _refused(["map", site, "--out", tmp_path / "real", "--no-progress"], tmp_path,
             "grid_values.csv' would overwrite the input file", "panel.csv")


def test_an_output_name_that_is_a_symlink_to_the_site_file_is_refused(tmp_path):
    site = _write(tmp_path, "deck.toml", "panel.csv")
    (tmp_path / "maps").mkdir()
    (tmp_path / "maps" / "site.geojson").symlink_to(Path("..") / "deck.toml")
    _refused(["map", site, "--out", tmp_path / "maps", "--no-progress"], tmp_path,
             "site.geojson' would overwrite the input file", "deck.toml")


@pytest.mark.parametrize("how", ["same", "dotdot", "symlink", "hardlink"])
def test_the_pdf_path_equal_to_the_site_path_is_refused(tmp_path, how):
    """A site file that happens to be named ``.pdf``, reached as itself, through ``..``,
    through a symlink, or through a hard link."""
    site = _write(tmp_path, "deck.pdf", "panel.csv")
    (tmp_path / "sub").mkdir()
    out = {"same": site, "dotdot": tmp_path / "sub" / ".." / "deck.pdf",
           "symlink": tmp_path / "link.pdf", "hardlink": tmp_path / "hard.pdf"}[how]
    if how == "symlink":
        out.symlink_to("deck.pdf")
    if how == "hardlink":
        os.link(site, out)
    _refused(["report", site, "--out", out, "--no-progress"], tmp_path,
             f"--out '{out}': is an input file of the site ({site})")


def test_demo_into_the_folder_of_its_own_inputs_is_refused(tmp_path, monkeypatch):
    """The demo's bundled site replaced by one whose pattern file is named grid_values.csv,
    and ``--out`` that very folder."""
    from siteexposure import resources
    from siteexposure.cli import demo_cmd

    bundled = tmp_path / "bundled"
    _write(bundled, demo_cmd.DEMO_SITE, "grid_values.csv")
    monkeypatch.setattr(resources, "sample_sites_dir", lambda: bundled)
    _refused(["demo", "--out", bundled, "--no-progress"], tmp_path,
             "grid_values.csv' would overwrite the input file")


def test_schema_out_refuses_a_shipped_limit_table(tmp_path, monkeypatch):
    """The limit tables are read by every run; ``schema --out`` may not replace one (a
    copy of the folder stands in for the package's own)."""
    import shutil

    from siteexposure import resources

    tables = tmp_path / "limits_tables"
    shutil.copytree(resources.limits_tables_dir(), tables)
    monkeypatch.setattr(resources, "limits_tables_dir", lambda: tables)
    _refused(["schema", "--out", tables / "fcc-1310.toml"], tmp_path,
             "would overwrite the input file", "fcc-1310.toml")


def test_the_writers_refuse_too_when_called_from_python(tmp_path):
    """A Python caller that skips the command line: every writer checks its own path."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.engine.zones import compute_zones
    from siteexposure.readers.site_toml import read_site
    from siteexposure.writers.bundle import write_all_outputs
    from siteexposure.writers.geojson import write_geojson
    from siteexposure.writers.grid_csv import write_grid_csv
    from siteexposure.writers.kml import write_kml
    from siteexposure.writers.report_pdf import write_report

    site_path = _write(tmp_path, "site.kml", "grid_values.csv")
    with sitegen.soft_warnings_ignored():
        res = evaluate_site(read_site(site_path), mitigation=False)
    zones = compute_zones(res)
    before = _snapshot(tmp_path)
    for write in (lambda: write_geojson(res, zones, site_path),
                  lambda: write_kml(res, zones, site_path),
                  lambda: write_grid_csv(res, tmp_path / "grid_values.csv"),
                  lambda: write_report(res, zones, site_path),
                  lambda: write_all_outputs(res, zones, tmp_path)):
        with pytest.raises(OutputError, match="would overwrite the input file"):
            write()
    assert _snapshot(tmp_path) == before
