"""``siteexposure map SITE --out DIR``: maps and GIS files of a site.

Evaluates the site, computes the keep-out zones and writes into ``DIR``, each file
atomically: a plan of every evaluated area and an elevation cut through every antenna
(PNG and SVG, one per limit set), the GeoJSON and KML of zones, areas, antennas and
receptors, and the CSV of grid values; then lists what it wrote. Exit status 0 once the
files are written, whatever the verdict; bad input, an unusable folder, or an output name
that is an input of the run (the site file, a pattern file, a limit table) is exit
status 2 with one ``Error:`` line and no files.
"""

from __future__ import annotations

from pathlib import Path

import typer

from siteexposure.cli.app import app


@app.command("map")
def map_command(
    site_file: Path = typer.Argument(..., help="Site description (TOML)."),
    out: Path = typer.Option(..., "--out", help="Folder for the maps and GIS files (created if needed)."),
    no_progress: bool = typer.Option(False, "--no-progress", help="No progress bar on stderr."),
) -> None:
    """Write plan and elevation maps (PNG, SVG), GeoJSON, KML and the grid CSV of a site."""
    from siteexposure.atomic import check_writable_dir
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.engine.zones import compute_zones
    from siteexposure.output_guard import check_output_folder
    from siteexposure.readers.site_toml import read_site
    from siteexposure.writers.bundle import output_names, write_all_outputs
    from siteexposure.writers.cautions import ONE_LINE

    site = read_site(site_file)
    check_output_folder(out, site, output_names(site))  # no output may replace an input
    check_writable_dir(out)
    res = evaluate_site(site, progress=not no_progress)
    zones = compute_zones(res)
    with _map_progress(not no_progress) as tick:
        written = write_all_outputs(res, zones, out, progress=tick)
    typer.echo(f"Wrote {len(written)} files to {out}:")
    for p in written:
        typer.echo(f"  {p}")
    typer.echo(ONE_LINE)


def _map_progress(enabled: bool):
    """A rich progress bar on stderr (when it is a terminal) fed by ``(done, total, label)``."""
    import contextlib

    @contextlib.contextmanager
    def bar():
        if not enabled:
            yield None
            return
        from rich.console import Console
        from rich.progress import BarColumn, Progress, TextColumn

        console = Console(stderr=True)
        with Progress(TextColumn("{task.description}"), BarColumn(), TextColumn("{task.completed}/{task.total}"),
                      console=console, transient=True, disable=not console.is_terminal) as prog:
            task = prog.add_task("Drawing maps", total=None)

            def tick(done: int, total: int, label: str) -> None:
                prog.update(task, completed=done, total=total, description=f"Drawing {label}")

            yield tick

    return bar()
