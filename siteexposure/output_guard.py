"""Outputs never replace inputs.

Every command that writes files hands the full list of paths it is about to write to
:func:`refuse_input_overwrite`, before the evaluation and before the first file, so that a
refused run leaves nothing behind. The writers that take a path check again (a Python
caller may skip the command line).

Two paths are the same file when they resolve to the same path (symlinks and ``..``
followed) or when an existing output path is the same file as an input (same device and
inode: this also catches hard links and names that differ only in case on a file system
that ignores case).
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Sequence
from pathlib import Path

from siteexposure.errors import OutputError

__all__ = ["check_output_folder", "maps_folder_for", "overwritten_input", "protected_inputs",
           "refuse_input_overwrite"]


def protected_inputs(site=None) -> list[Path]:
    """Files a run reads and must never write: the site file and every pattern file it
    names (``site.input_files``), and the limit tables shipped with the package."""
    from siteexposure.resources import limits_tables_dir

    paths: list[Path] = []
    if site is not None:
        paths += [Path(p) for p, _ in site.input_files]
        if site.source_path is not None:
            paths.append(Path(site.source_path))
    try:
        paths += sorted(limits_tables_dir().glob("*.toml"))
    except OSError:  # an unreadable package folder: the evaluation reports it
        pass
    return paths


def _identity(path: Path) -> tuple[int, int] | None:
    """(device, inode) of the file ``path`` leads to, None if there is none."""
    try:
        st = os.stat(path)
    except (OSError, ValueError):
        return None
    return st.st_dev, st.st_ino


def _resolved(path: Path) -> str:
    """``path`` with symlinks and ``..`` followed as far as they exist (a loop stops it)."""
    try:
        return os.path.normcase(str(Path(path).resolve()))
    except (OSError, RuntimeError):  # a symlink loop
        return os.path.normcase(os.path.abspath(path))


def overwritten_input(output: Path | str, inputs: Sequence[Path | str]) -> Path | None:
    """The input that writing ``output`` would replace, or None."""
    out = Path(output)
    ident, where = _identity(out), _resolved(out)
    for p in inputs:
        path = Path(p)
        if where == _resolved(path) or (ident is not None and ident == _identity(path)):
            return path
    return None


def refuse_input_overwrite(outputs: Iterable[Path | str], inputs: Sequence[Path | str],
                           *, option: str = "--out") -> None:
    """Raise :class:`OutputError` if writing any of ``outputs`` would replace an input.

    Parameters
    ----------
    outputs : iterable of path
        Every file the command is about to write.
    inputs : sequence of path
        Every file it read (:func:`protected_inputs`).
    option : str
        The option that named the outputs, for the message.

    Raises
    ------
    OutputError
        One line naming the output and the input it would overwrite.
    """
    inputs = list(inputs)
    for out in outputs:
        hit = overwritten_input(out, inputs)
        if hit is not None:
            raise OutputError(
                f"{option}: writing '{out}' would overwrite the input file '{hit}'; "
                "expected an output name or folder that holds no input of the run")


def check_output_folder(folder: Path, site, names: Sequence[str], *, option: str = "--out",
                        what: str = "the maps") -> Path:
    """Refuse a folder that is an input or a file, or outputs in it that are inputs.

    Nothing is created here; the writer creates the folder once every check has passed.

    Raises
    ------
    OutputError
        With the path and what was expected.
    """
    folder = Path(folder)
    inputs = protected_inputs(site)
    if overwritten_input(folder, inputs) is not None:
        raise OutputError(f"{option} '{folder}': is an input file of the site; expected a "
                          f"folder for {what}")
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"{option} '{folder}': is a file; expected a folder for {what}")
    refuse_input_overwrite([folder / n for n in names], inputs, option=option)
    return folder


def maps_folder_for(pdf: Path) -> Path:
    """The folder of its own that ``report --with-maps`` writes the maps into: beside the
    PDF, named after it (``site_report.pdf`` -> ``site_report_maps/``)."""
    pdf = Path(pdf)
    return pdf.with_name(f"{pdf.stem}_maps")
