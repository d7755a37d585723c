"""The command-line application: one typer app, one module per command.

Package errors are caught here, in one place, and printed as a single ``Error: ...``
line on stderr with exit status 2; a traceback is shown only with ``--debug``.
"""

from __future__ import annotations

import sys

import typer

from siteexposure.errors import SiteExposureError

app = typer.Typer(
    name="siteexposure",
    help=(
        "Screening estimates of RF exposure around antenna sites. Results are estimates, "
        "not measurements; local regulations govern and a licensed professional must "
        "review them before anyone relies on them."
    ),
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
)

_DEBUG = {"on": False}


@app.callback()
def _root(
    debug: bool = typer.Option(False, "--debug", help="Show full tracebacks on errors."),
) -> None:
    _DEBUG["on"] = debug


def _register() -> None:
    """Import the command modules; each adds its command to ``app``."""
    from siteexposure.cli import commands  # noqa: F401


def _one_line_warnings() -> None:
    """Print the package's soft problems as one ``Warning: ...`` line on stderr each."""
    import warnings

    from siteexposure.errors import SiteExposureWarning

    default = warnings.showwarning

    def show(message, category, filename, lineno, file=None, line=None):
        if issubclass(category, SiteExposureWarning):
            print(f"Warning: {message}", file=sys.stderr)
        else:
            default(message, category, filename, lineno, file, line)

    warnings.showwarning = show


def main(argv: list[str] | None = None) -> None:
    """Run the command line and exit with its status (0 done, 1 limit exceeded, 2 error).

    typer handles usage errors itself (exit 2); package errors reach this one handler.
    """
    _register()
    _one_line_warnings()
    args = sys.argv[1:] if argv is None else list(argv)
    _DEBUG["on"] = "--debug" in args
    try:
        app(args=args, prog_name="siteexposure")
    except SiteExposureError as exc:
        if _DEBUG["on"]:
            raise
        print(f"Error: {exc}", file=sys.stderr)
        sys.exit(2)
    except KeyboardInterrupt:
        print("Error: interrupted", file=sys.stderr)
        sys.exit(2)
