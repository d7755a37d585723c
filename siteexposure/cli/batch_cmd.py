"""``siteexposure batch SITE...``: re-screen many independent sites in parallel.

Local worker processes by default; ``--dask ADDRESS`` hands the sites to a running
Dask scheduler (or ``--dask local`` for a local cluster). Exit status 1 when any site
exceeds a limit where people can reach, 2 when any site could not be read.
"""

from __future__ import annotations

from pathlib import Path

import typer

from siteexposure.cli.app import app


@app.command("batch")
def batch(
    site_files: list[Path] = typer.Argument(..., help="Site descriptions (TOML)."),
    workers: int = typer.Option(0, "--workers", min=0, help="Worker processes (0 = one per CPU; at most the CPU count)."),
    dask: str = typer.Option(None, "--dask", help="Dask scheduler address, or 'local'."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object to stdout."),
    confine: bool = typer.Option(False, "--confine-patterns",
                                 help="Refuse pattern paths outside each site file's folder."),
) -> None:
    """Screen many sites; one summary row per site."""
    from siteexposure.engine.batch import max_workers, screen_many
    from siteexposure.writers.cautions import CAUTIONS, ONE_LINE, STATUS_LINE

    if workers > max_workers():
        import sys

        print(f"Warning: --workers {workers} is more than the {max_workers()} CPUs here; "
              f"using {max_workers()}", file=sys.stderr)
    rows = screen_many(site_files, workers=workers or None, dask_address=dask,
                       confine_patterns=confine)
    if as_json:
        from siteexposure.writers.json_out import dumps

        typer.echo(dumps({"status": STATUS_LINE, "cautions": list(CAUTIONS), "sites": rows}), nl=False)
    else:
        from rich.console import Console
        from rich.table import Table

        from siteexposure.writers.summary import term

        t = Table(title="Batch screening")
        for col in ("site file", "site", "worst area", "max ratio", "verdict"):
            t.add_column(col)
        for r in rows:
            if r["error"]:
                t.add_row(term(r["path"]), "-", "-", "-", term(f"input error: {r['error']}"))
                continue
            worst = max(r["areas"], key=lambda a: a["max_exposure_ratio"] or 0.0, default=None)
            t.add_row(term(r["path"]), term(r["site"]), term(worst["name"]) if worst else "-",
                      f"{worst['max_exposure_ratio']:.3g}" if worst and worst["max_exposure_ratio"] is not None else "-",
                      "exceeds where reachable" if r["exceeded_where_reachable"] else "complies")
        Console(markup=False).print(t)
        Console(markup=False).print(ONE_LINE)
    if any(r["error"] for r in rows):
        raise typer.Exit(2)
    if any(r["exceeded_where_reachable"] for r in rows):
        raise typer.Exit(1)
