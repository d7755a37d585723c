"""Reading an input file the user named: only regular files, only up to a size.

A site file that is ``/dev/zero`` (grows without bound), a FIFO (blocks), a 2 GiB sparse file
(2 GB read before anything is said) or a folder is refused before it is read, with one line
that names the file and what was expected.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path

from siteexposure.errors import InputError

MAX_SITE_BYTES = 16 * 2**20  #: largest site file read [bytes]
MAX_PATTERN_BYTES = 64 * 2**20  #: largest pattern file read (a 0.1 deg 3-D table is ~40 MB) [bytes]


def short_name(path: Path | str, limit: int = 200) -> str:
    """The path as text, cut to ``limit`` characters for a message."""
    text = str(path)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def read_input_bytes(path: Path | str, what: str, max_bytes: int,
                     error: type[InputError] = InputError) -> bytes:
    """The bytes of the regular file ``path``; ``error`` (one line) when it is missing, a
    folder, not a regular file, larger than ``max_bytes`` or cannot be read."""
    path = Path(path)
    name = short_name(path)
    try:
        st = os.stat(path)
    except FileNotFoundError:
        raise error(f"{name}: {what} not found") from None
    except OSError as exc:  # a name too long, a symlink loop, no permission
        raise error(f"{name}: {what} cannot be read ({exc.strerror or exc})") from None
    if stat.S_ISDIR(st.st_mode):
        raise error(f"{name}: is a folder; expected a {what}")
    if not stat.S_ISREG(st.st_mode):
        raise error(f"{name}: is not a regular file (a device, pipe or socket); expected a "
                    f"{what}")
    if st.st_size > max_bytes:
        raise error(f"{name}: is {st.st_size} bytes; expected a {what} of at most "
                    f"{max_bytes // 2**20} MiB")
    try:
        with open(path, "rb") as f:
            data = f.read(max_bytes + 1)
    except OSError as exc:
        raise error(f"{name}: {what} cannot be read ({exc.strerror or exc})") from None
    if len(data) > max_bytes:  # grew while read
        raise error(f"{name}: is larger than {max_bytes // 2**20} MiB; expected a {what} of "
                    "at most that")
    return data
