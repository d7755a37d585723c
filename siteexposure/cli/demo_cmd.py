"""``siteexposure demo [--out DIR]``: the bundled sample site, end to end.

Reads the invented sample site ``office_roof.toml`` shipped with the package, prints the
screening summary, writes the maps, the GIS files and the PDF report into ``DIR``
(default ``./demo_output``) and prints where they are. Exit status 0 once the files are
written, whatever the verdict.
"""

from __future__ import annotations

from pathlib import Path

import typer

from siteexposure.cli.app import app

DEMO_SITE = "office_roof.toml"
DEMO_REPORT = "office_roof_report.pdf"


@app.command("demo")
def demo(
    out: Path = typer.Option(Path("demo_output"), "--out", help="Folder for the demo files."),
    no_progress: bool = typer.Option(False, "--no-progress", help="No progress bar on stderr."),
) -> None:
    """Run the bundled invented sample site end to end: summary, maps, GIS files, PDF."""
    from siteexposure import resources
    from siteexposure.atomic import check_writable_dir
    from siteexposure.cli.report_cmd import build_report
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.output_guard import check_output_folder
    from siteexposure.readers.site_toml import read_site
    from siteexposure.writers.bundle import output_names
    from siteexposure.writers.summary import make_console, print_site

    console = make_console()
    site_path = resources.sample_sites_dir() / DEMO_SITE
    site = read_site(site_path)
    # the demo's own folder holds the report and the maps; none of them may replace an input
    check_output_folder(out, site, [DEMO_REPORT, *output_names(site)], what="the demo files")
    check_writable_dir(out)
    console.print(f"Demo: the invented sample site {site_path}", soft_wrap=True)
    res = evaluate_site(site, progress=not no_progress)
    print_site(res, console)
    written = build_report(res, out / DEMO_REPORT, maps_dir=out, progress=not no_progress)
    console.print()
    console.print(f"Demo files in {out.resolve()}", soft_wrap=True, style="bold", markup=False)
    maps = [p for p in written if p.suffix.lower() in (".png", ".svg")]
    for p in written:
        if p not in maps:
            console.print(f"  {p.name}", soft_wrap=True, highlight=False)
    plans = sum(1 for p in maps if p.name.startswith("plan"))
    console.print(f"  {len(maps)} map files (PNG and SVG: {plans} plans, "
                  f"{len(maps) - plans} elevation cuts)", highlight=False)
    console.print(f"Open the report: {(out / DEMO_REPORT).resolve()}", soft_wrap=True)
