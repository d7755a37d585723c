"""Reader and writer of "pattern CSV v1", the antenna pattern file of siteexposure (SPEC §3.2).

Layout::

    # pattern CSV v1
    # peak_gain_dbi = 17.3          (required) maximum gain of the antenna [dBi]
    # frequency_mhz = 1950          (optional) [MHz]
    # electrical_tilt_deg = 4       (optional) downtilt already in the data, positive down [deg]
    # name = Example panel          (optional) label for reports
    cut,side,angle_deg,gain_dbi
    horizontal,,0,17.3
    ...
    vertical,front,-90,-5.1
    ...
    vertical,back,90,-4.9

* ``#`` lines before the table header are the header: ``key = value`` lines are metadata
  (other keys are kept, never interpreted), any other ``#`` line is a comment. ``#`` lines and
  blank lines inside the table are ignored.
* ``cut = horizontal``: ``side`` empty, ``angle_deg`` = azimuth from boresight, clockwise seen
  from above, 0..360 (0 and 360 may both appear, with equal gains).
* ``cut = vertical``: ``side`` = ``front`` (the ``phi = 0`` half-plane) or ``back``
  (``phi = 180 deg``), ``angle_deg`` = elevation, +90 zenith, 0 horizon, -90 nadir; both
  cuts must hold the zenith and the nadir, and agree there within 1 dB.
* ``gain_dbi``: absolute gain. Angles in any order; no duplicates; no gap between
  neighbouring angles (the horizontal cut wrapping through 360) wider than
  :data:`MAX_GAP_DEG`; ``peak_gain_dbi`` within 0.5 dB of the largest gain in the table.

Every problem raises :class:`~siteexposure.errors.PatternError` naming the file and line.
"""

from __future__ import annotations

import csv
import math
import re
from collections.abc import Mapping
from pathlib import Path

import numpy as np

from siteexposure.atomic import write_text
from siteexposure.errors import PatternError
from siteexposure.physics.synthesis import (
    CROSSING_TOLERANCE_DB,
    DEFAULT_SYNTHESIS_METHOD,
    PEAK_TOLERANCE_DB,
    SYNTHESIS_METHODS,
    TablePattern,
)

FORMAT_LINE = "# pattern CSV v1"
TABLE_HEADER = ("cut", "side", "angle_deg", "gain_dbi")

#: Widest allowed step between neighbouring angles of one cut (linear interpolation in dB
#: across a wider step would hide lobes and nulls). [deg]
MAX_GAP_DEG = 15.0

#: Plausible range of absolute gains in a file. [dBi]
GAIN_RANGE_DBI = (-150.0, 80.0)

_KEY_RE = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_]*)\s*=\s*(.*?)\s*$")
_NUMERIC_KEYS = {
    "peak_gain_dbi": (GAIN_RANGE_DBI, "a gain in dBi"),
    "frequency_mhz": ((1e-6, 1e7), "a positive frequency in MHz"),
    "electrical_tilt_deg": ((-90.0, 90.0), "a tilt in degrees within -90..90"),
}


def _parse_number(text: str) -> float | None:
    try:
        value = float(text)
    except ValueError:
        return None
    return value if math.isfinite(value) else None


def _err(src: str, line: int | None, message: str) -> PatternError:
    where = f"pattern file '{src}'" + (f", line {line}" if line is not None else "")
    return PatternError(f"{where}: {message}")


def _short(text: str) -> str:
    """``repr`` of a piece of the file, shortened to keep a message on one readable line."""
    return repr(text if len(text) <= 60 else text[:57] + "...")


def _fields(line: str, src: str, n: int) -> list[str]:
    """The comma-separated fields of one line (csv rules), or a PatternError naming the line."""
    try:
        return next(csv.reader([line]))
    except csv.Error as exc:  # e.g. a field longer than the csv module's field size limit
        raise _err(src, n, f"row {_short(line)} cannot be split into fields ({exc}); expected "
                           f"four comma-separated fields ({','.join(TABLE_HEADER)})") from None


def parse_pattern_text(text: str, src: str) -> tuple[dict, dict]:
    """Parse the text of a pattern CSV v1 file.

    Returns
    -------
    metadata : dict
        Header keys; the numeric keys of the format as floats, others as strings.
    cuts : dict
        ``{"horizontal": [(angle, gain, line)], "front": [...], "back": [...]}`` in file order.
    """
    lines = text.splitlines()
    metadata: dict = {}
    key_lines: dict[str, int] = {}
    n = 0
    header_line = None
    for n, raw in enumerate(lines, start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            m = _KEY_RE.match(line)
            if m:
                key, value = m.group(1), m.group(2)
                if key in key_lines:
                    raise _err(src, n, f"header key '{key}' appears again (first on line "
                                       f"{key_lines[key]}); expected each key once")
                key_lines[key] = n
                if key in _NUMERIC_KEYS:
                    (lo, hi), expected = _NUMERIC_KEYS[key]
                    number = _parse_number(value)
                    if number is None or not lo <= number <= hi:
                        raise _err(src, n, f"header key '{key}' = {_short(value)}; expected {expected}")
                    metadata[key] = number
                else:
                    metadata[key] = value
            continue
        header_line = n
        fields = tuple(f.strip().lower() for f in _fields(line, src, n))
        if fields != TABLE_HEADER:
            raise _err(src, n, f"table header is {_short(line)}; expected '{','.join(TABLE_HEADER)}'"
                               " after the '#' header lines")
        break
    if header_line is None:
        raise _err(src, n or None, f"no table header '{','.join(TABLE_HEADER)}' found; expected "
                                   "'#' header lines followed by the table")
    if "peak_gain_dbi" not in metadata:
        raise _err(src, header_line, "header key 'peak_gain_dbi' is missing; expected a line "
                                     "'# peak_gain_dbi = <gain in dBi>' before the table")

    cuts: dict[str, list[tuple[float, float, int]]] = {"horizontal": [], "front": [], "back": []}
    for n in range(header_line + 1, len(lines) + 1):
        line = lines[n - 1].strip()
        if not line or line.startswith("#"):
            continue
        row = [f.strip() for f in _fields(line, src, n)]
        if len(row) != 4:
            raise _err(src, n, f"row {_short(line)} has {len(row)} fields; expected 4 "
                               f"({','.join(TABLE_HEADER)})")
        cut, side, angle_text, gain_text = row
        cut_l, side_l = cut.lower(), side.lower()
        if cut_l == "horizontal":
            if side_l:
                raise _err(src, n, f"side = {_short(side)} on a horizontal row; expected it empty")
            key, lo, hi, what = "horizontal", 0.0, 360.0, "an azimuth within 0..360 deg"
        elif cut_l == "vertical":
            if side_l not in ("front", "back"):
                raise _err(src, n, f"side = {_short(side)} on a vertical row; expected front or back")
            key, lo, hi, what = side_l, -90.0, 90.0, "an elevation within -90..+90 deg"
        else:
            raise _err(src, n, f"cut = {_short(cut)}; expected horizontal or vertical")
        angle = _parse_number(angle_text)
        if angle is None:
            raise _err(src, n, f"angle_deg = {_short(angle_text)}; expected a finite number, {what}")
        if not lo <= angle <= hi:
            raise _err(src, n, f"angle_deg = {angle_text} is out of range; expected {what}")
        gain = _parse_number(gain_text)
        if gain is None or not GAIN_RANGE_DBI[0] <= gain <= GAIN_RANGE_DBI[1]:
            raise _err(src, n, f"gain_dbi = {_short(gain_text)}; expected a finite gain in dBi within "
                               f"{GAIN_RANGE_DBI[0]:g}..{GAIN_RANGE_DBI[1]:g}")
        cuts[key].append((angle, gain, n))
    return metadata, cuts


def _label(key: str) -> str:
    return "horizontal" if key == "horizontal" else f"vertical {key}"


def _check_cut(src: str, key: str, rows: list, end_line: int) -> tuple[np.ndarray, np.ndarray]:
    """Sort one cut and check duplicates, gaps and (vertical) the two poles."""
    if not rows:
        raise _err(src, end_line, f"the {_label(key)} cut is missing; expected rows with "
                                  + ("cut=horizontal" if key == "horizontal"
                                     else f"cut=vertical, side={key}"))
    rows = sorted(rows, key=lambda r: r[0])
    for (a0, _g0, n0), (a1, _g1, n1) in zip(rows, rows[1:], strict=False):
        if a1 == a0:
            raise _err(src, n1, f"{_label(key)} angle {a1:g} deg already given on line {n0}; "
                                "expected each angle once")
        if a1 - a0 > MAX_GAP_DEG:
            raise _err(src, n1, f"{_label(key)} cut jumps from {a0:g} deg (line {n0}) to {a1:g} "
                                f"deg; expected steps of at most {MAX_GAP_DEG:g} deg")
    if key == "horizontal":
        first, last = rows[0], rows[-1]
        if first[0] == 0.0 and last[0] == 360.0:
            if abs(first[1] - last[1]) > 1e-6:
                raise _err(src, last[2], f"gain at 360 deg ({last[1]:g} dBi) differs from the gain "
                                         f"at 0 deg on line {first[2]} ({first[1]:g} dBi); expected "
                                         "equal gains (the same direction)")
            rows = rows[:-1]
            first, last = rows[0], rows[-1]
        wrap_gap = first[0] + 360.0 - last[0]
        if wrap_gap > MAX_GAP_DEG:
            raise _err(src, first[2], f"horizontal cut jumps from {last[0]:g} deg (line {last[2]})"
                                      f" through 360 to {first[0]:g} deg; expected steps of at "
                                      f"most {MAX_GAP_DEG:g} deg")
    else:
        if rows[0][0] != -90.0:
            raise _err(src, rows[0][2], f"vertical {key} cut starts at {rows[0][0]:g} deg; "
                                        "expected a sample at -90 (nadir)")
        if rows[-1][0] != 90.0:
            raise _err(src, rows[-1][2], f"vertical {key} cut ends at {rows[-1][0]:g} deg; "
                                         "expected a sample at +90 (zenith)")
    return np.array([r[0] for r in rows]), np.array([r[1] for r in rows])


def _check_crossings(src: str, cuts: dict, arrays: dict) -> None:
    """Cuts meeting in one direction must agree (zenith, nadir, boresight, back)."""
    f_rows, b_rows, h_rows = (sorted(cuts[k]) for k in ("front", "back", "horizontal"))
    ha, hg = arrays["horizontal"]
    fa, fg = arrays["front"]
    ba, bg = arrays["back"]
    pairs = (
        ("zenith", f_rows[-1], b_rows[-1], fg[-1], bg[-1]),
        ("nadir", f_rows[0], b_rows[0], fg[0], bg[0]),
        ("boresight", h_rows[0], min(f_rows, key=lambda r: abs(r[0])),
         np.interp(0.0, ha, hg, period=360.0), np.interp(0.0, fa, fg)),
        ("back", min(h_rows, key=lambda r: abs(r[0] - 180.0)), min(b_rows, key=lambda r: abs(r[0])),
         np.interp(180.0, ha, hg, period=360.0), np.interp(0.0, ba, bg)),
    )
    for direction, row1, row2, g1, g2 in pairs:
        if abs(float(g1) - float(g2)) > CROSSING_TOLERANCE_DB:
            raise _err(src, row2[2], f"at the {direction} the cuts disagree: {float(g1):.2f} dBi "
                                     f"(near line {row1[2]}) against {float(g2):.2f} dBi; "
                                     f"expected agreement within {CROSSING_TOLERANCE_DB:g} dB "
                                     "(the same direction)")


def _read_text(path: Path) -> str:
    try:
        data = path.read_bytes()
    except FileNotFoundError as exc:
        raise PatternError(f"pattern file '{path}': not found; expected a pattern CSV v1 file") from exc
    except OSError as exc:
        raise PatternError(f"pattern file '{path}': cannot be read ({exc.strerror})") from exc
    if b"\x00" in data:
        line = data[: data.index(b"\x00")].count(b"\n") + 1
        raise _err(str(path), line, "holds NUL bytes (binary data); expected a UTF-8 text file "
                                    "in pattern CSV v1 layout")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise _err(str(path), line, f"byte {exc.start} is not UTF-8 text; expected a UTF-8 text "
                                    "file in pattern CSV v1 layout") from exc
    return text


def pattern_from_text(text: str, src: str, *, method: str = DEFAULT_SYNTHESIS_METHOD) -> TablePattern:
    """Build a :class:`TablePattern` from the text of a pattern CSV v1 file named ``src``."""
    if method not in SYNTHESIS_METHODS:
        raise PatternError(f"pattern file '{src}': synthesis method {method!r} is unknown; "
                           f"expected one of {', '.join(SYNTHESIS_METHODS)}")
    metadata, cuts = parse_pattern_text(text, src)
    end_line = max(1, len(text.splitlines()))
    arrays = {k: _check_cut(src, k, rows, end_line) for k, rows in cuts.items()}
    _check_crossings(src, cuts, arrays)
    peak = metadata["peak_gain_dbi"]
    all_rows = [r for rows in cuts.values() for r in rows]
    top = max(all_rows, key=lambda r: r[1])
    if abs(peak - top[1]) > PEAK_TOLERANCE_DB:
        text_lines = text.splitlines()
        peak_line = next(i for i, ln in enumerate(text_lines, 1)
                         if ln.strip().startswith("#") and "peak_gain_dbi" in ln)
        raise _err(src, peak_line, f"peak_gain_dbi = {peak:g} but the largest gain in the table is "
                                   f"{top[1]:g} dBi (line {top[2]}); expected agreement within "
                                   f"{PEAK_TOLERANCE_DB:g} dB")
    (ha, hg), (fa, fg), (ba, bg) = arrays["horizontal"], arrays["front"], arrays["back"]
    pattern = TablePattern(
        ha, hg, fa, fg, ba, bg,
        peak_gain_dbi=peak,
        electrical_tilt_deg=metadata.get("electrical_tilt_deg", 0.0),
        name=str(metadata.get("name", "")) or Path(src).stem,
        source=src,
        method=method,
        frequency_mhz=metadata.get("frequency_mhz"),
    )
    pattern.metadata = dict(metadata)
    return pattern


def read_pattern_csv(path: Path | str, *, method: str = DEFAULT_SYNTHESIS_METHOD) -> TablePattern:
    """Read a pattern CSV v1 file into a :class:`~siteexposure.physics.synthesis.TablePattern`.

    Parameters
    ----------
    path : path-like
        The file.
    method : str
        3-D synthesis method, one of
        :data:`~siteexposure.physics.synthesis.SYNTHESIS_METHODS`; default ``"additive"``
        (:data:`~siteexposure.physics.synthesis.DEFAULT_SYNTHESIS_METHOD`).

    Returns
    -------
    TablePattern
        With ``name`` (header ``name`` or the file stem), ``source`` (the path),
        ``electrical_tilt_deg`` and ``frequency_mhz`` from the header, and ``metadata`` (all
        header keys).

    Raises
    ------
    PatternError
        Naming the file and the line for: binary or non-UTF-8 content, a missing table header
        or ``peak_gain_dbi``, bad or non-finite numbers, unknown cut or side words, angles out
        of range, duplicate angles, steps wider than :data:`MAX_GAP_DEG`, missing cuts or poles,
        cuts that disagree where they meet, and a ``peak_gain_dbi`` more than 0.5 dB away from
        the largest gain in the table.
    """
    path = Path(path)
    return pattern_from_text(_read_text(path), str(path), method=method)


def _fmt(x: float) -> str:
    return repr(float(x))


def format_pattern_csv(
    *,
    peak_gain_dbi: float,
    h_angle_deg,
    h_gain_dbi,
    v_front_elev_deg,
    v_front_gain_dbi,
    v_back_elev_deg,
    v_back_gain_dbi,
    metadata: Mapping[str, object] | None = None,
) -> str:
    """The text of a pattern CSV v1 file (see :func:`write_pattern_csv`)."""
    meta = dict(metadata or {})
    meta.pop("peak_gain_dbi", None)
    out = [FORMAT_LINE, f"# peak_gain_dbi = {_fmt(peak_gain_dbi)}"]
    for key, value in meta.items():
        if not re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", str(key)):
            raise PatternError(f"pattern metadata key {key!r}: expected letters, digits and '_'")
        text = _fmt(value) if isinstance(value, int | float) and not isinstance(value, bool) else str(value)
        if "\n" in text or "\r" in text:
            raise PatternError(f"pattern metadata '{key}' = {text!r}: expected a single line")
        out.append(f"# {key} = {text}")
    out.append(",".join(TABLE_HEADER))
    series = (
        ("horizontal", "", h_angle_deg, h_gain_dbi),
        ("vertical", "front", v_front_elev_deg, v_front_gain_dbi),
        ("vertical", "back", v_back_elev_deg, v_back_gain_dbi),
    )
    for cut, side, angles, gains in series:
        a = np.asarray(angles, dtype=float).ravel()
        g = np.asarray(gains, dtype=float).ravel()
        if a.shape != g.shape:
            raise PatternError(f"pattern {cut} {side} cut: {a.size} angles but {g.size} gains; "
                               "expected equal lengths")
        out.extend(f"{cut},{side},{_fmt(x)},{_fmt(y)}" for x, y in zip(a, g, strict=True))
    return "\n".join(out) + "\n"


def write_pattern_csv(
    path: Path | str,
    *,
    peak_gain_dbi: float,
    h_angle_deg,
    h_gain_dbi,
    v_front_elev_deg,
    v_front_gain_dbi,
    v_back_elev_deg,
    v_back_gain_dbi,
    metadata: Mapping[str, object] | None = None,
) -> None:
    """Write three cuts as a pattern CSV v1 file, atomically.

    The text is parsed back with the reader's own checks before anything is written, so a file
    this function writes is always one :func:`read_pattern_csv` accepts.

    Parameters
    ----------
    path : path-like
        Target file (written through a temporary file and a rename).
    peak_gain_dbi : float
        Maximum gain of the antenna. [dBi]
    h_angle_deg, h_gain_dbi : array_like
        Horizontal cut, azimuth 0..360 clockwise from boresight [deg], gain [dBi].
    v_front_elev_deg, v_front_gain_dbi, v_back_elev_deg, v_back_gain_dbi : array_like
        Vertical cuts, elevation -90..+90 [deg], gain [dBi].
    metadata : mapping
        Further header keys, e.g. ``frequency_mhz``, ``electrical_tilt_deg``, ``name``,
        ``source``; values on one line.

    Raises
    ------
    PatternError
        If the data would make an invalid file (the message names the check that failed).
    """
    text = format_pattern_csv(
        peak_gain_dbi=peak_gain_dbi,
        h_angle_deg=h_angle_deg, h_gain_dbi=h_gain_dbi,
        v_front_elev_deg=v_front_elev_deg, v_front_gain_dbi=v_front_gain_dbi,
        v_back_elev_deg=v_back_elev_deg, v_back_gain_dbi=v_back_gain_dbi,
        metadata=metadata,
    )
    pattern_from_text(text, f"{path} (being written)")
    write_text(path, text)
