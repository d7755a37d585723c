"""``siteexposure report SITE --out FILE.pdf [--with-maps]``: the PDF pre-survey report.

Evaluates the site, computes the zones, renders the maps (into a temporary folder, or
with ``--with-maps`` beside the PDF together with the GIS files) and writes the PDF
atomically. Exit status 0 once the PDF is written, whatever the verdict; bad input is
exit status 2 and no PDF.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from pathlib import Path

import typer

from siteexposure.cli.app import app


def check_output_path(out: Path, site) -> Path:
    """Refuse an output path that is not a ``.pdf`` file or that is one of the inputs.

    Raises
    ------
    OutputError
        With the path and what was expected.
    """
    from siteexposure.errors import OutputError

    out = Path(out)
    if out.suffix.lower() != ".pdf":
        raise OutputError(f"--out '{out}': expected a file name ending in .pdf")
    target = out.resolve()
    inputs = [Path(p) for p, _ in site.input_files]
    if site.source_path is not None:
        inputs.append(Path(site.source_path))
    for p in inputs:
        if p.resolve() == target:
            raise OutputError(f"--out '{out}': is an input file of the site ({p}); expected a "
                              "new file name for the report")
    if target.is_dir():
        raise OutputError(f"--out '{out}': is a folder; expected a file name ending in .pdf")
    parent = out.parent if str(out.parent) else Path(".")
    if parent.exists() and not parent.is_dir():
        raise OutputError(f"--out '{out}': its folder '{parent}' is a file; expected a writable folder")
    return out


@contextlib.contextmanager
def map_progress(enabled: bool) -> Iterator:
    """A progress bar on stderr (rich, when it is a terminal) fed by the map renderer's
    ``progress(done, total, label)`` callback; None when disabled."""
    if not enabled:
        yield None
        return
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn

    console = Console(stderr=True)
    with Progress(TextColumn("maps"), BarColumn(), MofNCompleteColumn(),
                  TextColumn("{task.description}"), console=console, transient=True,
                  disable=not console.is_terminal) as bar:
        task = bar.add_task("", total=None)

        def tick(done: int, total: int, label: str) -> None:
            bar.update(task, completed=done, total=total, description=label)

        yield tick


def build_report(res, out: Path, *, with_maps: bool, progress: bool = False) -> list[Path]:
    """Zones, maps (and GIS files with ``with_maps``) and the PDF of an evaluated site.

    Returns the files written: the PDF last.
    """
    import tempfile

    from siteexposure.engine.zones import compute_zones
    from siteexposure.writers.report_pdf import write_report

    zones = compute_zones(res)
    if with_maps:
        from siteexposure.writers.bundle import write_all_outputs

        with map_progress(progress) as tick:
            written = list(write_all_outputs(res, zones, out.parent, progress=tick))
        maps = [p for p in written if Path(p).suffix.lower() == ".png"]
        return [*written, write_report(res, zones, out, map_files=maps)]
    from siteexposure.writers.maps import render_maps

    with tempfile.TemporaryDirectory(prefix="siteexposure-maps-") as tmp:
        with map_progress(progress) as tick:
            maps = render_maps(res, zones, Path(tmp), formats=("png",), progress=tick)
        return [write_report(res, zones, out, map_files=maps)]


@app.command("report")
def report(
    site_file: Path = typer.Argument(..., help="Site description (TOML)."),
    out: Path = typer.Option(..., "--out", help="The PDF file to write."),
    with_maps: bool = typer.Option(
        False, "--with-maps", help="Also write the maps and GIS files beside the PDF."
    ),
    no_progress: bool = typer.Option(False, "--no-progress", help="No progress bar on stderr."),
) -> None:
    """Write the PDF pre-survey report of a site, for review by a licensed professional."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.readers.site_toml import read_site
    from siteexposure.writers.cautions import ONE_LINE

    site = read_site(site_file)
    check_output_path(out, site)
    res = evaluate_site(site, progress=not no_progress)
    written = build_report(res, out, with_maps=with_maps, progress=not no_progress)
    for p in written:
        typer.echo(f"wrote {p}")
    typer.echo(ONE_LINE)
