"""The command-line application: one typer app, one module per command.

Every error is caught here, in one place, and printed as a single ``Error: ...`` line on
stderr: exit status 2 for the input or the command line, 74 for a file the system could not
write or read, 70 for an unexpected internal error (never 1, which means "limit exceeded"),
130 when interrupted, 143 when terminated; a traceback is shown only with ``--debug``.
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


#: exit statuses besides 0 (done), 1 (a limit exceeded) and 2 (bad input): an output or input
#: the system could not write or read (sysexits EX_IOERR), an unexpected internal error
#: (EX_SOFTWARE), interrupted (128 + SIGINT)
EXIT_IO = 74
EXIT_INTERNAL = 70
EXIT_INTERRUPTED = 130
EXIT_TERMINATED = 143
#: longest message printed (a 100 k-character key must not give a 100 k-character line)
MAX_MESSAGE = 600


def one_line(text: object) -> str:
    """``text`` on one line, control characters shown as escapes, at most MAX_MESSAGE long."""
    from siteexposure.writers.summary import term

    out = term(" ".join(str(text).split()))
    return out if len(out) <= MAX_MESSAGE else out[: MAX_MESSAGE - 30] + f" ... ({len(out)} chars)"


def _say(message: str) -> None:
    """One ``Error:`` line on stderr, whatever stderr can encode (and not at all if closed)."""
    try:
        enc = getattr(sys.stderr, "encoding", None) or "utf-8"
        line = f"Error: {one_line(message)}".encode(enc, "backslashreplace").decode(enc)
        print(line, file=sys.stderr, flush=True)
    except (OSError, ValueError, AttributeError):
        pass


def _flush_stdout() -> None:
    """Flush stdout so that a write failure (a full disk, a closed pipe) is seen here."""
    if sys.stdout is not None and not sys.stdout.closed:
        sys.stdout.flush()


def main(argv: list[str] | None = None) -> None:
    """Run the command line and exit with its status (0 done, 1 limit exceeded, 2 error in
    the input or the command line, 70 unexpected internal error, 74 an output or input the
    system could not write or read, 130 interrupted).

    Every failure is one ``Error:`` line on stderr; ``--debug`` shows the traceback.
    """
    _register()
    _one_line_warnings()
    args = sys.argv[1:] if argv is None else list(argv)
    _DEBUG["on"] = "--debug" in args
    if sys.stdout is None:  # started with its standard output closed: the result would be lost
        _say("standard output is closed; nothing could be written (run with a stdout)")
        sys.exit(EXIT_IO)
    for stream in (sys.stdout, sys.stderr):  # a name the terminal's encoding cannot show
        try:
            stream.reconfigure(errors="backslashreplace")
        except (AttributeError, ValueError, OSError):
            pass
    _terminate_cleanly()
    status = _run(args)
    sys.exit(status)


class _Terminated(SystemExit):
    """SIGTERM, raised in the main thread so that temporary folders and partial outputs are
    removed on the way out (context managers run), exit 143 (128 + SIGTERM)."""


def _terminate_cleanly() -> None:
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        return

    def handler(signum, frame):
        raise _Terminated(EXIT_TERMINATED)

    try:
        signal.signal(signal.SIGTERM, handler)
    except (ValueError, OSError):  # not allowed here (embedded interpreters)
        pass


def _run(args: list[str]) -> int:
    from typer._click import exceptions as cx
    from typer.exceptions import Abort

    try:
        rv = app(args=args, prog_name="siteexposure", standalone_mode=False)
        if rv == EXIT_INTERRUPTED:  # typer's own handling of Ctrl-C
            _say("interrupted; no output was written unless its path was printed")
            return rv
        _flush_stdout()
        return rv if isinstance(rv, int) else 0
    except _Terminated:
        _say("terminated (SIGTERM); temporary files removed, no output was written unless its "
             "path was printed")
        return EXIT_TERMINATED
    except SystemExit as exc:  # a command's own status
        code = exc.code
        return code if isinstance(code, int) else (0 if code is None else 2)
    except SiteExposureError as exc:
        if _DEBUG["on"]:
            raise
        _say(str(exc))
        return 2
    except cx.UsageError as exc:  # the command line itself (typer's parse errors)
        where = f" (command {exc.ctx.command_path})" if getattr(exc, "ctx", None) else ""
        _say(f"{exc.format_message()}{where}; see --help")
        return 2
    except cx.ClickException as exc:
        _say(exc.format_message())
        return 2
    except (KeyboardInterrupt, Abort):
        _say("interrupted; no output was written unless its path was printed")
        return EXIT_INTERRUPTED
    except RecursionError:
        if _DEBUG["on"]:
            raise
        _say("input nested too deeply to read (recursion limit); expected a flat site file")
        return 2
    except MemoryError:
        _say("out of memory; reduce the grid (resolution_m, area sizes) or the number of "
             "antennas")
        return EXIT_INTERNAL
    except OSError as exc:
        if _DEBUG["on"]:
            raise
        name = f" {exc.filename!r}" if getattr(exc, "filename", None) else " (standard output)"
        _say(f"could not write or read{name}: {exc.strerror or exc}")
        return EXIT_IO
    except Exception as exc:  # noqa: BLE001 - the one place that turns a crash into a status
        if _DEBUG["on"]:
            raise
        _say(f"internal error ({type(exc).__name__}: {exc}); nothing was judged. Rerun with "
             "--debug for the traceback and report it")
        return EXIT_INTERNAL
