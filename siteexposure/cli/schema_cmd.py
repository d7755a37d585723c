"""The `schema` command: print the JSON Schema of the site file.

Editors with JSON Schema support for TOML can use it for completion and checks of
site files; the full checks are those of ``siteexposure screen`` and the others.
"""

from __future__ import annotations

import json
from pathlib import Path

import typer

from siteexposure.cli.app import app


@app.command("schema")
def schema_command(
    out: Path | None = typer.Option(
        None, "--out", help="Write the schema to this file instead of standard output."
    ),
) -> None:
    """Print the JSON Schema (draft 2020-12) of the site file as one JSON object."""
    from siteexposure.readers.site_toml import site_json_schema

    text = json.dumps(site_json_schema(), indent=2, ensure_ascii=False) + "\n"
    if out is None:
        typer.echo(text, nl=False)
        return
    from siteexposure.atomic import write_text
    from siteexposure.errors import OutputError
    from siteexposure.output_guard import protected_inputs, refuse_input_overwrite

    if out.is_dir():
        raise OutputError(f"--out '{out}': is a folder; expected a file name for the schema")
    refuse_input_overwrite([out], protected_inputs())  # e.g. a shipped limit table
    write_text(out, text)
    typer.echo(f"Wrote {out}", err=True)
