"""End to end: the PDF pre-survey report (``siteexposure report``) and ``siteexposure demo``.

The reference for every number is the JSON output of ``siteexposure screen --json`` on
the same site file: the report must print exactly those values (the JSON form rounds to
6 significant figures, keep-out distances and dB values to 4; the plain-words summary
rounds the same values to 3). Text is extracted with pypdf.

The site is a copy of the invented sample ``parking_dish.toml`` (two dishes; fast to
evaluate); invented data is used here only as input, never as a check value.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pypdf
import pytest

from siteexposure import resources

ROOT = Path(__file__).resolve().parents[2]
RUN_DATE = re.compile(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ")
#: the section headings the report must carry, in order (issue 6, "Contents")
HEADINGS = (
    "Summary of findings",
    "Inputs",
    "Method and assumptions",
    "Results",
    "Mitigation",
    "Cautions and deferral",
    "Reviewer sign-off",
    "Traceability",
)


def cli(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "siteexposure", *args], capture_output=True,
                          text=True, cwd=cwd, timeout=600)


def pages_text(pdf: Path) -> list[str]:
    return [p.extract_text() for p in pypdf.PdfReader(str(pdf)).pages]


def flat(text: str) -> str:
    """Whitespace collapsed, so that wrapped lines read as one."""
    return " ".join(text.split())


def has_number(text: str, token: str) -> bool:
    """``token`` occurs in ``text`` as a whole number (not inside a longer one)."""
    return re.search(rf"(?<![\d.]){re.escape(token)}(?![\d])", text) is not None


def tok(x) -> str:
    """A JSON number exactly as ``screen --json`` prints it."""
    return json.dumps(x)


@pytest.fixture(scope="module")
def work(tmp_path_factory) -> dict:
    """A copy of the sample site; its screen JSON; its report, written twice."""
    base = tmp_path_factory.mktemp("report")
    sites = base / "sites"
    shutil.copytree(resources.sample_sites_dir(), sites)
    site = sites / "parking_dish.toml"
    screen = cli("screen", str(site), "--json", "--no-progress")
    assert screen.returncode in (0, 1), screen.stderr
    first = cli("report", str(site), "--out", str(base / "first.pdf"), "--no-progress")
    second = cli("report", str(site), "--out", str(base / "second.pdf"), "--no-progress")
    return {"base": base, "site": site, "json": json.loads(screen.stdout), "first": first,
            "second": second, "pdf": base / "first.pdf", "pdf2": base / "second.pdf"}


def test_report_exits_0_and_writes_the_pdf_whatever_the_verdict(work):
    """SPEC 6: ``report`` answers 0 once its file is written, whatever the verdict."""
    assert work["first"].returncode == 0, work["first"].stderr
    assert work["pdf"].is_file() and work["pdf"].read_bytes()[:5] == b"%PDF-"
    assert str(work["pdf"]) in work["first"].stdout
    leftovers = [p.name for p in work["base"].iterdir() if p.name.endswith(".part")]
    assert leftovers == []


def test_every_section_heading_is_present_in_order_after_the_cover(work):
    pages = [flat(t) for t in pages_text(work["pdf"])]
    found = []
    for h in HEADINGS:
        n = next((i for i, t in enumerate(pages) if i > 0 and re.search(rf"\b\d {h}\b", t)), None)
        assert n is not None, f"section '{h}' missing"
        found.append(n)
    assert found == sorted(found)
    cover = pages[0]
    for h in HEADINGS:  # the contents list on the cover
        assert h in cover


def test_every_page_has_the_running_header_and_page_n_of_m(work):
    from siteexposure.writers.cautions import ONE_LINE

    pages = [flat(t) for t in pages_text(work["pdf"])]
    name = work["json"]["site"]["name"]
    for n, t in enumerate(pages, start=1):
        assert f"page {n} of {len(pages)}" in t
        assert name in t
        assert flat(ONE_LINE) in t


def test_cover_names_site_location_date_preparer_status_and_limit_sets(work):
    from siteexposure.readers.site_toml import read_site
    from siteexposure.writers.cautions import STATUS_LINE

    site = read_site(work["site"])
    cover = flat(pages_text(work["pdf"])[0])
    assert site.name in cover and site.address in cover and site.preparer in cover
    assert f"latitude {site.origin_lat:.6f}°" in cover
    assert f"longitude {site.origin_lon:.6f}°" in cover
    assert RUN_DATE.search(cover)
    assert flat(STATUS_LINE) in cover
    for sid in work["json"]["site"]["limits"]:
        assert sid in cover


def test_area_numbers_equal_those_of_screen_json(work):
    text = flat(" ".join(pages_text(work["pdf"])))
    checked = 0
    for area in work["json"]["areas"]:
        for b in area["by_limits"]:
            r = b["max_exposure_ratio"]
            if r is None:
                continue
            assert has_number(text, tok(r)), (area["name"], b["limits"], r)
            assert has_number(text, tok(b["percent_of_limit"]))
            # the plain-words summary rounds the same value to 3 significant figures
            assert f"{r:.3g} times the limit" in text
            for v in b["at_m"]:
                assert has_number(text, tok(v))
            shares = [v for v in b["antenna_share"].values() if v]
            for v in shares:  # antennas at >= 1 % of the total are listed one by one
                if v >= 0.01 * sum(shares):
                    assert has_number(text, tok(v))
            checked += 1
    assert checked >= 2


def test_antenna_and_keep_out_numbers_equal_those_of_screen_json(work):
    text = flat(" ".join(pages_text(work["pdf"])))
    for a in work["json"]["antennas"]:
        for key in ("frequency_mhz", "net_power_w", "peak_gain_dbi", "eirp_w", "erp_w",
                    "azimuth_deg", "standoff_m"):
            assert has_number(text, tok(a[key])), (a["id"], key, a[key])
        for row in a["keep_out_by_limits"]:
            assert has_number(text, tok(row["limit_w_m2"]))
            for v in row["distance_m"].values():
                assert has_number(text, tok(v))
        assert a["model"]["id"] in text


def test_receptor_numbers_equal_those_of_screen_json(work):
    text = flat(" ".join(pages_text(work["pdf"])))
    assert work["json"]["points"], "the sample site names receptors"
    for p in work["json"]["points"]:
        assert p["name"] in text
        for e in p["exposure"]:
            if e["exposure_ratio"] is not None:
                assert has_number(text, tok(e["exposure_ratio"]))
                assert has_number(text, tok(e["percent_of_limit"]))
        for a in p["antennas"]:
            if a["power_density_w_m2"] is not None:
                assert has_number(text, tok(a["power_density_w_m2"]))


def test_report_carries_the_cautions_and_defers_to_regulation_and_licensed_review(work):
    """SPEC 8: screening estimate, not a measurement, local regulations govern, licensed review."""
    from siteexposure.writers.cautions import CAUTIONS

    text = flat(" ".join(pages_text(work["pdf"])))
    for c in CAUTIONS:
        assert flat(c) in text
    for words in ("Reviewer name", "Licence / registration number", "Signature",
                  "Findings accepted as presented", "Findings amended"):
        assert words in text


def test_traceability_lists_the_input_and_limit_table_hashes(work):
    """The SHA-256 of the site file is recomputed here with hashlib (FIPS 180-4)."""
    import hashlib

    text = flat(" ".join(pages_text(work["pdf"])))
    digest = hashlib.sha256(work["site"].read_bytes()).hexdigest()
    # long hashes may wrap inside their cell: compare with the spaces removed
    squeezed = text.replace(" ", "")
    assert digest in squeezed
    for src in work["json"]["limit_sources"].values():
        assert src["sha256"] in squeezed
    assert work["json"]["tool"]["version"] in text


def test_same_input_gives_the_same_text_except_the_run_date(work):
    assert work["second"].returncode == 0, work["second"].stderr
    a = [RUN_DATE.sub("<run date>", t) for t in pages_text(work["pdf"])]
    b = [RUN_DATE.sub("<run date>", t) for t in pages_text(work["pdf2"])]
    assert a == b
    assert sum(len(RUN_DATE.findall(t)) for t in pages_text(work["pdf"])) >= 2


def test_the_same_result_gives_a_byte_identical_pdf(tmp_path, work):
    """reportlab invariant mode: no creation date or random document id in the file."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.engine.zones import compute_zones
    from siteexposure.readers.site_toml import read_site
    from siteexposure.writers.report_pdf import write_report

    res = evaluate_site(read_site(work["site"]))
    zones = compute_zones(res)
    one = write_report(res, zones, tmp_path / "one.pdf")
    two = write_report(res, zones, tmp_path / "two.pdf")
    assert one.read_bytes() == two.read_bytes()


def _bad_site(folder: Path, src: Path) -> Path:
    text = src.read_text(encoding="utf-8")
    bad, n = re.subn(r"(?m)^frequency_mhz = .*$", "frequency_mhz = -1.0", text, count=1)
    assert n == 1
    path = folder / "bad_site.toml"
    path.write_text(bad, encoding="utf-8")
    return path


def test_bad_input_exits_2_with_one_error_line_and_writes_no_pdf(tmp_path, work):
    bad = _bad_site(work["site"].parent, work["site"])
    out = tmp_path / "bad.pdf"
    r = cli("report", str(bad), "--out", str(out), "--no-progress")
    assert r.returncode == 2
    lines = [x for x in r.stderr.splitlines() if x.strip()]
    assert len(lines) == 1 and lines[0].startswith("Error: ") and "frequency_mhz" in lines[0]
    assert not out.exists()
    assert list(tmp_path.iterdir()) == []


def test_report_refuses_to_overwrite_its_own_input(work):
    """A site file that happens to end in .pdf is still an input: refused, left untouched."""
    twin = work["site"].with_name("parking_twin.pdf")
    shutil.copyfile(work["site"], twin)
    before = twin.read_bytes()
    r = cli("report", str(twin), "--out", str(twin), "--no-progress")
    assert r.returncode == 2 and r.stderr.startswith("Error: ")
    assert "input file" in r.stderr
    assert twin.read_bytes() == before
    r = cli("report", str(work["site"]), "--out", str(work["site"]), "--no-progress")
    assert r.returncode == 2 and r.stderr.startswith("Error: ")


def test_report_with_maps_writes_maps_and_gis_files_into_a_folder_beside_the_pdf(tmp_path, work):
    """``--with-maps`` writes into ``site_maps/`` beside ``site.pdf``, nothing else loose."""
    pytest.importorskip("siteexposure.writers.bundle")
    out = tmp_path / "with_maps" / "site.pdf"
    r = cli("report", str(work["site"]), "--out", str(out), "--with-maps", "--no-progress")
    assert r.returncode == 0, r.stderr
    assert out.is_file()
    assert sorted(p.name for p in out.parent.iterdir()) == ["site.pdf", "site_maps"]
    names = [p.name for p in (out.parent / "site_maps").iterdir()]
    assert any(n.endswith(".png") for n in names) and any(n.endswith(".geojson") for n in names)
    assert any(n.endswith(".kml") for n in names)


def test_accuracy_statement_agrees_with_the_validation_table():
    """The package's copy the report quotes equals tests/data/nec/accuracy.md (both written by
    the method-of-moments validation, tests/validation/nec_accuracy.py), row for row."""
    from siteexposure.writers import accuracy

    md = (ROOT / accuracy.SOURCE).read_text(encoding="utf-8")
    blocks = re.split(r"\n### ", md)

    def rows(block: str) -> list[tuple[str, ...]]:
        out = [tuple(c.strip() for c in line.strip().strip("|").split("|"))
               for line in block.splitlines() if line.startswith("|")
               and not line.startswith("|---")]
        return out[1:]

    titles = {b.splitlines()[0]: rows(b) for b in blocks}

    def block(prefix: str) -> list:
        return titles[next(k for k in titles if k.startswith(prefix))]

    assert list(accuracy.CASES) == rows(blocks[0])
    assert list(accuracy.AUTO_BY_CASE) == block("`auto` per reference case (pattern cuts")
    assert list(accuracy.AUTO_BY_CASE_3D) == block("`auto` per reference case (pattern file")
    assert list(accuracy.BY_MODEL_REGION) == block("Every model")
    assert list(accuracy.BOUND_MARGINS) == block("Envelope bound")


def _panel_site():
    """One line-source panel (``auto`` chooses array synthesis) over a small public deck."""
    import numpy as np

    from siteexposure.containers import Antenna, Area, Averaging, Site
    from siteexposure.physics.patterns import parametric_pattern

    spec = {"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65, "hpbw_v_deg": 8,
            "front_to_back_db": 30}
    ant = Antenna(id="P1", operator="Op", position_m=np.array([0.0, 0.0, 3.0]), azimuth_deg=90.0,
                  mechanical_tilt_deg=0.0, electrical_tilt_deg=4.0, frequency_mhz=1900.0,
                  tx_power_w=20.0, pattern=parametric_pattern(spec), aperture_height_m=1.2,
                  aperture_width_m=0.3, pattern_source="inline 3gpp-panel")
    deck = Area("Deck", "public", 0.0, np.array([[2.0, -4], [10, -4], [10, 4], [2, 4]]))
    return Site(name="panel check", origin_lat=45.0, origin_lon=7.0, limits=("fcc-1310",),
                antennas=(ant,), areas=(deck,), averaging=Averaging("vertical-line", 0, 2, 5),
                resolution_m=1.0)


def test_pdf_quotes_the_validated_accuracy_of_the_model_that_ran(tmp_path):
    """The method section prints the validation rows (accuracy.md) of array synthesis when
    that model ran, and says "not available" for a model outside the validation."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.writers import accuracy
    from siteexposure.writers.report_pdf import write_report

    res = evaluate_site(_panel_site())
    assert res.antennas[0].model.model_id == "array-synthesis"
    pdf = write_report(res, [], tmp_path / "panel.pdf")
    text = flat(" ".join(pages_text(pdf)))
    rows = accuracy.rows_for("array-synthesis")
    assert len(rows) == 3
    for r in rows:
        assert f"{r[4]} to {r[5]}" in text  # 5th to 95th percentile, dB
        assert r[8] in text  # share within -1.5..+3 dB
    assert "not part of the method-of-moments validation" not in text


def test_pdf_quotes_the_validated_accuracy_of_the_dish_model(work):
    """The dish model is now validated against a uniform circular aperture (direct aperture
    integral, tests/data/nec/dish_reference.py): the report quotes its rows and its known
    limit (conservative by design)."""
    from siteexposure.writers import accuracy

    text = flat(" ".join(pages_text(work["pdf"])))
    assert {a["model"]["id"] for a in work["json"]["antennas"]} == {"circular-aperture"}
    assert "not part of the method-of-moments validation" not in text
    for row in accuracy.rows_for("circular-aperture"):
        assert flat(row[0].split(", ", 1)[1]) in text
    assert "conservative by design" in text
    assert flat(accuracy.KNOWN_LIMITS["circular-aperture"]) in text


def test_demo_runs_end_to_end_and_writes_its_files(tmp_path, monkeypatch):
    """``demo --out DIR``: summary on stdout, maps, GIS files and the PDF in DIR, exit 0.

    For speed the bundled folder is replaced by a copy whose ``office_roof.toml`` is the
    small two-dish sample; the command, its outputs and its messages are the real ones.
    """
    pytest.importorskip("siteexposure.writers.bundle")
    from typer.testing import CliRunner

    from siteexposure.cli import demo_cmd
    from siteexposure.cli.app import _register, app

    sites = tmp_path / "bundled"
    shutil.copytree(resources.sample_sites_dir(), sites)
    shutil.copyfile(sites / "parking_dish.toml", sites / demo_cmd.DEMO_SITE)
    monkeypatch.setattr(resources, "sample_sites_dir", lambda: sites)
    _register()
    out = tmp_path / "demo_output"
    r = CliRunner().invoke(app, ["demo", "--out", str(out), "--no-progress"])
    assert r.exit_code == 0, r.output
    pdf = out / demo_cmd.DEMO_REPORT
    assert pdf.is_file()
    names = [p.name for p in out.iterdir()]
    assert any(n.endswith(".png") for n in names) and any(n.endswith(".svg") for n in names)
    assert any(n.endswith(".geojson") for n in names) and any(n.endswith(".kml") for n in names)
    text = flat(r.output)
    assert "Cautions" in text and str(out.resolve()) in text and demo_cmd.DEMO_REPORT in text
    assert "Station Street car park" in flat(pages_text(pdf)[0])


def test_overall_finding_matches_the_verdicts_of_screen_json(work):
    """The plain-words finding on the cover follows the JSON verdicts (areas and receptors)."""
    data = work["json"]
    verdicts = {b["verdict"] for a in data["areas"] if a["access"] != "none"
                for b in a["by_limits"]}
    exceeded = "exceeds" in verdicts
    unknown = "not assessable" in verdicts
    cover = flat(pages_text(work["pdf"])[0])
    assert data["exceeded_where_reachable"] == (exceeded or unknown or any(
        e["exposure_ratio"] is None or e["exposure_ratio"] > 1 for p in data["points"]
        for e in p["exposure"]
        if e["population"] == {"public": "general", "worker": "occupational"}.get(p["access"])))
    if exceeded:
        assert "a limit is exceeded somewhere people can reach" in cover
    elif unknown:
        assert "no exceedance was found, but some places people can reach could not be" in cover
    else:
        assert "no limit is exceeded anywhere people can reach" in cover


def test_names_with_markup_characters_and_long_names_print_as_given(tmp_path):
    """Site and operator names are text, not markup; a long site name is shortened in the
    running header only (with an ellipsis), never run off the page."""
    import dataclasses

    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.writers.report_pdf import write_report

    base = _panel_site()
    name = "Roof <A> & Sons — Ø 12 ü " + "very long site name " * 8
    ant = dataclasses.replace(base.antennas[0], operator="Op <B> & Co")
    site = dataclasses.replace(base, name=name.strip(), antennas=(ant,))
    pdf = write_report(evaluate_site(site), [], tmp_path / "names.pdf")
    pages = [flat(t) for t in pages_text(pdf)]
    assert flat(name) in pages[0]  # the cover prints it whole
    assert "Op <B> & Co" in " ".join(pages)
    assert all("Roof <A> & Sons — Ø 12 ü very long" in t and "…" in t for t in pages)
