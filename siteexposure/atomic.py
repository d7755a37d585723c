"""Atomic output: write to a temporary file in the target folder, then rename.

A run killed mid-way leaves either the old file or nothing, never a partial file.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Iterator
from pathlib import Path

from siteexposure.errors import OutputError


def check_writable_dir(folder: Path) -> Path:
    """Create ``folder`` if needed and check that it can be written; raise OutputError if not."""
    folder = Path(folder)
    for up in (folder, *folder.parents):
        if up.exists() and not up.is_dir():
            raise OutputError(f"output folder '{folder}': '{up}' is a file, not a folder; "
                              "expected a writable folder")
        if up.exists():
            break
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"output folder '{folder}': cannot be created ({exc.strerror}); expected a writable folder") from exc
    if not folder.is_dir() or not os.access(folder, os.W_OK):
        raise OutputError(f"output folder '{folder}': is not a writable folder")
    return folder


@contextlib.contextmanager
def atomic_path(target: Path | str) -> Iterator[Path]:
    """Yield a temporary path beside ``target``; rename it onto ``target`` on success.

    On any exception the temporary file is removed and ``target`` is left untouched.
    """
    target = Path(target)
    check_writable_dir(target.parent if str(target.parent) else Path("."))
    if target.is_dir():
        raise OutputError(f"output file '{target}': a folder is in the way; expected a file path "
                          "that can be replaced (remove or rename the folder)")
    fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    os.close(fd)
    tmp = Path(tmp_name)
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o666 & ~umask)  # mkstemp creates 0600; give the file the usual mode
    try:
        yield tmp
        try:
            os.replace(tmp, target)
        except OSError as exc:
            raise OutputError(f"output file '{target}': cannot be written ({exc.strerror}); "
                              "expected a writable file path") from exc
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise


def write_text(target: Path | str, text: str) -> Path:
    """Write ``text`` (UTF-8) to ``target`` atomically and return the path."""
    with atomic_path(target) as tmp:
        tmp.write_text(text, encoding="utf-8")
    return Path(target)


def write_bytes(target: Path | str, data: bytes) -> Path:
    """Write ``data`` to ``target`` atomically and return the path."""
    with atomic_path(target) as tmp:
        tmp.write_bytes(data)
    return Path(target)
