"""``siteexposure screen SITE``: every area, receptor and antenna of a site.

Exit status 1 when a limit is exceeded (or cannot be assessed) somewhere people can reach.
"""

from __future__ import annotations

from pathlib import Path

import typer

from siteexposure.cli.app import app


@app.command("screen")
def screen(
    site_file: Path = typer.Argument(..., help="Site description (TOML)."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object to stdout."),
    no_progress: bool = typer.Option(False, "--no-progress", help="No progress bar on stderr."),
) -> None:
    """Screen a site: areas, receptors, antennas, contributors, mitigation."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.readers.site_toml import read_site

    site = read_site(site_file)
    res = evaluate_site(site, progress=not no_progress)
    if as_json:
        from siteexposure.writers.json_out import dumps, site_dict

        typer.echo(dumps(site_dict(res)), nl=False)
    else:
        from siteexposure.writers.summary import make_console, print_site

        print_site(res, make_console())
    if res.exceeded_where_reachable:
        raise typer.Exit(1)
