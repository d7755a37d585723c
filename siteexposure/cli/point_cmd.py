"""``siteexposure point SITE --at E N Z``: exposure exactly at one point, no averaging."""

from __future__ import annotations

from pathlib import Path

import typer

from siteexposure.cli.app import app


@app.command("point")
def point(
    site_file: Path = typer.Argument(..., help="Site description (TOML)."),
    at: tuple[float, float, float] = typer.Option(..., "--at", help="East, north, height above site ground (m)."),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object to stdout."),
) -> None:
    """Power density of every antenna and the exposure ratios at one point."""
    import math

    from siteexposure.engine.orchestrator import evaluate_point
    from siteexposure.errors import InputError
    from siteexposure.readers.site_model import MAX_REACH_M
    from siteexposure.readers.site_toml import read_site

    if not all(math.isfinite(v) for v in at):
        raise InputError(f"--at: value {list(at)} is not finite; expected three numbers E N Z in metres")
    if not all(abs(v) <= MAX_REACH_M for v in at):
        raise InputError(f"--at: value {list(at)} is too far from the site origin; expected three "
                         f"numbers E N Z in metres within {MAX_REACH_M:g} m of it (as in the site file)")
    site = read_site(site_file)
    res = evaluate_point(site, at, name="point")
    if as_json:
        from siteexposure.writers.cautions import CAUTIONS, STATUS_LINE
        from siteexposure.writers.json_out import dumps, point_dict

        obj = point_dict(res)
        obj["site"] = site.name
        obj["status"] = STATUS_LINE
        obj["cautions"] = list(CAUTIONS)
        typer.echo(dumps(obj), nl=False)
        return
    from siteexposure.writers.summary import make_console, print_point

    print_point(res, make_console())
