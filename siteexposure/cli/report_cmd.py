"""``siteexposure report SITE --out FILE.pdf [--with-maps]``: the PDF pre-survey report.

Evaluates the site, computes the zones, renders the maps (into a temporary folder, or
with ``--with-maps`` into a folder of their own beside the PDF, ``FILE_maps/``, together
with the GIS files) and writes the PDF atomically. Exit status 0 once the PDF is written,
whatever the verdict; bad input, or an output (the PDF or any file of the maps folder)
that is an input of the run, is exit status 2 and no file.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from pathlib import Path

import typer

from siteexposure.cli.app import app


def check_output_path(out: Path, site, *, with_maps: bool = False) -> Path | None:
    """Refuse an output path that is not a ``.pdf`` file or that is one of the inputs, and
    (with ``with_maps``) a maps folder that is a file or whose files would replace an input.

    Nothing is written here. Returns the maps folder (``with_maps``) or None.

    Raises
    ------
    OutputError
        With the path and what was expected.
    """
    from siteexposure.errors import OutputError
    from siteexposure.output_guard import (
        check_output_folder,
        maps_folder_for,
        overwritten_input,
        protected_inputs,
    )
    from siteexposure.writers.bundle import output_names

    out = Path(out)
    if out.suffix.lower() != ".pdf":
        raise OutputError(f"--out '{out}': expected a file name ending in .pdf")
    hit = overwritten_input(out, protected_inputs(site))
    if hit is not None:
        raise OutputError(f"--out '{out}': is an input file of the site ({hit}); expected a "
                          "new file name for the report")
    if out.is_dir():
        raise OutputError(f"--out '{out}': is a folder; expected a file name ending in .pdf")
    parent = out.parent if str(out.parent) else Path(".")
    if parent.exists() and not parent.is_dir():
        raise OutputError(f"--out '{out}': its folder '{parent}' is a file; expected a writable folder")
    if not with_maps:
        return None
    return check_output_folder(maps_folder_for(out), site, output_names(site),
                               option="--with-maps", what="the maps beside the report")


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


def build_report(res, out: Path, *, maps_dir: Path | None = None, progress: bool = False) -> list[Path]:
    """Zones, maps and the PDF of an evaluated site; with ``maps_dir`` the maps and GIS
    files are kept in that folder, else the maps are drawn into a temporary folder.

    Returns the files written: the PDF last.
    """
    import tempfile

    from siteexposure.engine.zones import compute_zones
    from siteexposure.writers.report_pdf import write_report

    zones = compute_zones(res)
    if maps_dir is not None:
        from siteexposure.writers.bundle import write_all_outputs

        with map_progress(progress) as tick:
            written = list(write_all_outputs(res, zones, maps_dir, progress=tick))
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
        False, "--with-maps",
        help="Also write the maps and GIS files, into a folder of their own beside the PDF "
             "(FILE_maps/ for FILE.pdf).",
    ),
    no_progress: bool = typer.Option(False, "--no-progress", help="No progress bar on stderr."),
) -> None:
    """Write the PDF pre-survey report of a site, for review by a licensed professional."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.readers.site_toml import read_site
    from siteexposure.writers.cautions import ONE_LINE

    site = read_site(site_file)
    maps_dir = check_output_path(out, site, with_maps=with_maps)  # before anything is written
    res = evaluate_site(site, progress=not no_progress)
    written = build_report(res, out, maps_dir=maps_dir, progress=not no_progress)
    for p in written:
        typer.echo(f"wrote {p}")
    typer.echo(ONE_LINE)
