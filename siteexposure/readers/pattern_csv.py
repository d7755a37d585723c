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
    azimuth_deg,elevation_deg,gain_dbi      (optional: a full-sphere 3-D table)
    0,-90,-6.0
    ...
    360,90,-4.9

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
* The optional 3-D table (after the cuts, under its own header ``azimuth_deg,elevation_deg,
  gain_dbi``): absolute gains on a full rectangular grid of azimuths (0..360, as the
  horizontal cut) and elevations (-90..+90, as the vertical cuts), every (azimuth,
  elevation) cell exactly once, rows in any order; both poles present; steps no wider than
  :data:`MAX_GAP_DEG` (azimuths wrapping through 360); each pole row within 1 dB, the 0 and
  360 deg columns (if both given) within 0.01 dB; its largest gain within 0.5 dB of
  ``peak_gain_dbi``; and within 1 dB of the cuts wherever both have a sample at the same angle
  on a cut plane (azimuth 0 and the front cut, azimuth 180 and the back cut, elevation 0 and
  the horizontal cut). At most :data:`MAX_SPHERE_CELLS` cells. When present, the pattern's
  3-D gain comes from this table (:class:`~siteexposure.physics.sphere_table.SphereTable`).

Every problem raises :class:`~siteexposure.errors.PatternError` naming the file and line.
"""

from __future__ import annotations

import csv
import math
import re
from array import array
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import SimpleNamespace

import numpy as np

from siteexposure.atomic import write_text
from siteexposure.errors import PatternError
from siteexposure.physics.sphere_table import (
    MAX_SPHERE_CELLS,
    POLE_TOLERANCE_DB,
    SEAM_TOLERANCE_DB,
    SphereTable,
    cut_plane_mismatch,
    pole_mismatch,
    seam_mismatch,
)
from siteexposure.physics.synthesis import (
    CROSSING_TOLERANCE_DB,
    DEFAULT_SYNTHESIS_METHOD,
    PEAK_TOLERANCE_DB,
    SYNTHESIS_METHODS,
    TablePattern,
)

FORMAT_LINE = "# pattern CSV v1"
TABLE_HEADER = ("cut", "side", "angle_deg", "gain_dbi")
SPHERE_HEADER = ("azimuth_deg", "elevation_deg", "gain_dbi")

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


@dataclass
class SphereRows:
    """The rows of a 3-D table as read, in file order (compact arrays: memory stays bounded)."""

    header_line: int
    az: array = field(default_factory=lambda: array("d"))
    el: array = field(default_factory=lambda: array("d"))
    gain: array = field(default_factory=lambda: array("d"))
    line: array = field(default_factory=lambda: array("q"))


def _sphere_row(src: str, n: int, line: str, row: list[str], rows: SphereRows) -> None:
    """Check one row of the 3-D table and append it to ``rows``."""
    if len(row) != 3:
        if row[0].lower() in ("horizontal", "vertical", TABLE_HEADER[0]):
            raise _err(src, n, f"row {_short(line)} of the cuts table comes after the 3-D table "
                               f"header on line {rows.header_line}; expected all cuts rows before "
                               "the 3-D table")
        raise _err(src, n, f"row {_short(line)} has {len(row)} fields; expected 3 "
                           f"({','.join(SPHERE_HEADER)}) in the 3-D table (header on line "
                           f"{rows.header_line})")
    if len(rows.az) >= MAX_SPHERE_CELLS:
        raise _err(src, n, f"the 3-D table has more than {MAX_SPHERE_CELLS} rows; expected a grid "
                           f"of at most {MAX_SPHERE_CELLS} cells (a 1 deg grid has 361 x 181 = "
                           "65341)")
    az, el, gain = _parse_number(row[0]), _parse_number(row[1]), _parse_number(row[2])
    if az is None or el is None or not (0.0 <= az <= 360.0 and -90.0 <= el <= 90.0):
        for name, text, value, lo, hi, what in (
            ("azimuth_deg", row[0], az, 0.0, 360.0, "an azimuth within 0..360 deg"),
            ("elevation_deg", row[1], el, -90.0, 90.0, "an elevation within -90..+90 deg"),
        ):
            if value is None:
                raise _err(src, n, f"{name} = {_short(text)}; expected a finite number, {what}")
            if not lo <= value <= hi:
                raise _err(src, n, f"{name} = {text} is out of range; expected {what}")
    if gain is None or not GAIN_RANGE_DBI[0] <= gain <= GAIN_RANGE_DBI[1]:
        raise _err(src, n, f"gain_dbi = {_short(row[2])}; expected a finite gain in dBi within "
                           f"{GAIN_RANGE_DBI[0]:g}..{GAIN_RANGE_DBI[1]:g}")
    rows.az.append(az)
    rows.el.append(el)
    rows.gain.append(gain)
    rows.line.append(n)


def parse_pattern_text(text: str, src: str) -> tuple[dict, dict, SphereRows | None]:
    """Parse the text of a pattern CSV v1 file.

    Returns
    -------
    metadata : dict
        Header keys; the numeric keys of the format as floats, others as strings.
    cuts : dict
        ``{"horizontal": [(angle, gain, line)], "front": [...], "back": [...]}`` in file order.
    sphere : SphereRows or None
        The rows of the 3-D table, if the file has one (checked one by one, not yet as a grid).
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
            hint = " (the cuts table comes first; a 3-D table may follow it)" * (
                fields == SPHERE_HEADER)
            raise _err(src, n, f"table header is {_short(line)}; expected '{','.join(TABLE_HEADER)}'"
                               f" after the '#' header lines{hint}")
        break
    if header_line is None:
        raise _err(src, n or None, f"no table header '{','.join(TABLE_HEADER)}' found; expected "
                                   "'#' header lines followed by the table")
    if "peak_gain_dbi" not in metadata:
        raise _err(src, header_line, "header key 'peak_gain_dbi' is missing; expected a line "
                                     "'# peak_gain_dbi = <gain in dBi>' before the table")

    cuts: dict[str, list[tuple[float, float, int]]] = {"horizontal": [], "front": [], "back": []}
    sphere: SphereRows | None = None
    for n in range(header_line + 1, len(lines) + 1):
        line = lines[n - 1].strip()
        if not line or line.startswith("#"):
            continue
        if sphere is not None and '"' not in line and len(line) < 256:
            row = [f.strip() for f in line.split(",")]  # what the csv rules give such a line
        else:
            row = [f.strip() for f in _fields(line, src, n)]
        if row[0][:1] in "aA" and tuple(f.lower() for f in row) == SPHERE_HEADER:
            if sphere is not None:
                raise _err(src, n, f"a second 3-D table header (the first is on line "
                                   f"{sphere.header_line}); expected one 3-D table")
            sphere = SphereRows(n)
            continue
        if sphere is not None:
            _sphere_row(src, n, line, row, sphere)
            continue
        if len(row) != 4:
            if row[0].lower() == SPHERE_HEADER[0]:
                raise _err(src, n, f"3-D table header is {_short(line)}; expected "
                                   f"'{','.join(SPHERE_HEADER)}'")
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
    return metadata, cuts, sphere


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


def _grid_of(src: str, rows: SphereRows) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The 3-D rows as a full grid: azimuths, elevations, gains and lines, each
    ``(n_az, n_el)`` for the last two; a PatternError for a missing or a duplicate cell."""
    if not rows.az:
        raise _err(src, rows.header_line, f"the 3-D table header has no rows after it; expected "
                                          f"rows '{','.join(SPHERE_HEADER)}' covering the sphere")
    az, el = np.frombuffer(rows.az, dtype=float), np.frombuffer(rows.el, dtype=float)
    gain, line = np.frombuffer(rows.gain, dtype=float), np.frombuffer(rows.line, dtype=np.int64)
    a_vals, ai = np.unique(az, return_inverse=True)
    e_vals, ei = np.unique(el, return_inverse=True)
    n_az, n_el = a_vals.size, e_vals.size
    if n_az * n_el > MAX_SPHERE_CELLS:
        raise _err(src, rows.header_line, f"the 3-D table spans {n_az} azimuths x {n_el} "
                                          f"elevations = {n_az * n_el} cells; expected a grid of "
                                          f"at most {MAX_SPHERE_CELLS} cells")
    flat = ai * n_el + ei
    order = np.argsort(flat, kind="stable")  # file order within a cell
    same = np.flatnonzero(np.diff(flat[order]) == 0)
    if same.size:
        k = int(np.argmin(line[order[same + 1]]))
        r1, r2 = order[same[k]], order[same[k] + 1]
        raise _err(src, int(line[r2]), f"3-D cell (azimuth {az[r2]:g} deg, elevation {el[r2]:g} "
                                       f"deg) already given on line {line[r1]}; expected each "
                                       "(azimuth, elevation) cell once")
    lines = np.zeros(n_az * n_el, dtype=np.int64)
    lines[flat] = line
    lines = lines.reshape(n_az, n_el)
    if az.size != n_az * n_el:
        have = lines > 0
        count_a, count_e = have.sum(axis=1), have.sum(axis=0)
        ia, ie = int(np.argmin(count_a)), int(np.argmin(count_e))
        if min(count_a[ia] / n_el, count_e[ie] / n_az) <= 0.5:  # one stray azimuth or elevation
            if count_a[ia] / n_el <= count_e[ie] / n_az:
                where = lines[ia][have[ia]].min()
                what = (f"azimuth {a_vals[ia]:g} deg of the 3-D table appears at {count_a[ia]} of "
                        f"its {n_el} elevations (no cell at elevation "
                        f"{e_vals[~have[ia]][0]:g} deg)")
            else:
                where = lines[:, ie][have[:, ie]].min()
                what = (f"elevation {e_vals[ie]:g} deg of the 3-D table appears at {count_e[ie]} "
                        f"of its {n_az} azimuths (no cell at azimuth "
                        f"{a_vals[~have[:, ie]][0]:g} deg)")
            raise _err(src, int(where), f"{what}; expected every azimuth at every elevation")
        i, j = divmod(int(np.flatnonzero(~have.ravel())[0]), n_el)
        near = np.flatnonzero(have[i])
        jn = int(near[np.argmin(np.abs(near - j))])
        raise _err(src, int(lines[i, jn]), f"no 3-D cell at azimuth {a_vals[i]:g} deg, elevation "
                                           f"{e_vals[j]:g} deg (this line holds that azimuth at "
                                           f"elevation {e_vals[jn]:g} deg); expected each of the "
                                           f"table's {n_az} azimuths at each of its {n_el} "
                                           f"elevations ({n_az * n_el} rows, {az.size} given)")
    grid = np.empty(n_az * n_el)
    grid[flat] = gain
    return a_vals, e_vals, grid.reshape(n_az, n_el), lines


def _peak_line(text: str) -> int:
    """The line of the ``peak_gain_dbi`` header key (present: the parser checked)."""
    for n, raw in enumerate(text.splitlines(), start=1):
        m = _KEY_RE.match(raw.strip())
        if m and m.group(1) == "peak_gain_dbi":
            return n
    raise AssertionError("peak_gain_dbi has no line")  # pragma: no cover - parser checked


def _check_sphere(src: str, rows: SphereRows, cuts: dict, arrays: dict, peak: float,
                  text: str) -> SphereTable:
    """The 3-D table as a :class:`SphereTable`, after every check of the format (with lines)."""
    a, e, g, ln = _grid_of(src, rows)
    if e[0] != -90.0:
        raise _err(src, int(ln[:, 0].min()), f"the 3-D table's elevations start at {e[0]:g} deg; "
                                             "expected rows at -90 (nadir) for every azimuth")
    if e[-1] != 90.0:
        raise _err(src, int(ln[:, -1].min()), f"the 3-D table's elevations end at {e[-1]:g} deg; "
                                              "expected rows at +90 (zenith) for every azimuth")
    for name, vals, first in (("elevations", e, ln.min(axis=0)), ("azimuths", a, ln.min(axis=1))):
        k = np.flatnonzero(np.diff(vals) > MAX_GAP_DEG)
        if k.size:
            k = int(k[0])
            raise _err(src, int(first[k + 1]), f"the 3-D table's {name} jump from {vals[k]:g} deg "
                                               f"(line {first[k]}) to {vals[k + 1]:g} deg; "
                                               f"expected steps of at most {MAX_GAP_DEG:g} deg")
    first_a = ln.min(axis=1)
    if a[0] + 360.0 - a[-1] > MAX_GAP_DEG:
        raise _err(src, int(first_a[0]), f"the 3-D table's azimuths jump from {a[-1]:g} deg (line "
                                         f"{first_a[-1]}) through 360 to {a[0]:g} deg; expected "
                                         f"steps of at most {MAX_GAP_DEG:g} deg")
    j = seam_mismatch(a, g)
    if j is not None:
        raise _err(src, int(ln[-1, j]), f"3-D gain at azimuth 360 deg, elevation {e[j]:g} deg "
                                        f"({g[-1, j]:g} dBi) differs from the gain at azimuth 0 "
                                        f"deg on line {ln[0, j]} ({g[0, j]:g} dBi); expected equal "
                                        f"gains within {SEAM_TOLERANCE_DB:g} dB (the same "
                                        "direction)")
    bad = pole_mismatch(g)
    if bad is not None:
        j, lo, hi = bad
        mid = float(np.median(g[:, j]))
        odd, other = (lo, hi) if mid - g[lo, j] >= g[hi, j] - mid else (hi, lo)  # the odd one out
        raise _err(src, int(ln[odd, j]), f"at the {'nadir' if j == 0 else 'zenith'} the 3-D table "
                                         f"gives {g[odd, j]:g} dBi (azimuth {a[odd]:g} deg) and "
                                         f"{g[other, j]:g} dBi (azimuth {a[other]:g} deg, line "
                                         f"{ln[other, j]}); expected agreement within "
                                         f"{POLE_TOLERANCE_DB:g} dB across azimuths (a pole is "
                                         "one direction)")
    i_top = np.unravel_index(int(np.argmax(g)), g.shape)
    if abs(peak - float(g[i_top])) > PEAK_TOLERANCE_DB:
        raise _err(src, _peak_line(text),
                   f"peak_gain_dbi = {peak:g} but the largest gain in the 3-D table is "
                   f"{g[i_top]:g} dBi (line {ln[i_top]}); expected agreement within "
                   f"{PEAK_TOLERANCE_DB:g} dB")
    checked = SimpleNamespace(
        h_angle_deg=arrays["horizontal"][0], h_gain_dbi=arrays["horizontal"][1],
        v_front_elev_deg=arrays["front"][0], v_front_gain_dbi=arrays["front"][1],
        v_back_elev_deg=arrays["back"][0], v_back_gain_dbi=arrays["back"][1],
    )
    bad = cut_plane_mismatch(a, e, g, checked, CROSSING_TOLERANCE_DB)
    if bad is not None:
        cut, angle, i, j, g_t, g_c = bad
        same = (angle, 360.0) if cut == "horizontal" and angle == 0.0 else (angle,)
        cut_line = next(r[2] for r in sorted(cuts[cut]) if r[0] in same)
        raise _err(src, int(ln[i, j]), f"the 3-D table gives {g_t:g} dBi at azimuth {a[i]:g} deg, "
                                       f"elevation {e[j]:g} deg and the {_label(cut)} cut "
                                       f"{g_c:g} dBi at {angle:g} deg (line {cut_line}); expected "
                                       f"agreement within {CROSSING_TOLERANCE_DB:g} dB on the cut "
                                       "planes (the same direction)")
    return SphereTable(a, e, g, where=f"pattern file '{src}'")


def _read_text(path: Path) -> str:
    from siteexposure.readers.files import MAX_PATTERN_BYTES, read_input_bytes

    if not path.exists() and not path.is_symlink():
        raise PatternError(f"pattern file '{path}': not found; expected a pattern CSV v1 file")
    data = read_input_bytes(path, "pattern file (pattern CSV v1)", MAX_PATTERN_BYTES,
                            PatternError)
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
    if text.strip() and not looks_like_pattern_csv(text):
        # never echo a line of a file that is not a pattern file (it may be anything)
        raise PatternError(f"pattern file '{path}': does not look like a pattern file (no "
                           f"'# pattern CSV v1' line and no table header "
                           f"'{','.join(TABLE_HEADER)}'); its content is not shown")
    return text


def looks_like_pattern_csv(text: str) -> bool:
    """True when ``text`` carries the pattern CSV v1 first line or its table header."""
    header = ",".join(TABLE_HEADER)
    for line in text.splitlines():
        t = line.strip()
        if t.lower().startswith("# pattern csv") or t.replace(" ", "").lower() == header:
            return True
    return False


def pattern_from_text(text: str, src: str, *, method: str = DEFAULT_SYNTHESIS_METHOD) -> TablePattern:
    """Build a :class:`TablePattern` from the text of a pattern CSV v1 file named ``src``."""
    if method not in SYNTHESIS_METHODS:
        raise PatternError(f"pattern file '{src}': synthesis method {method!r} is unknown; "
                           f"expected one of {', '.join(SYNTHESIS_METHODS)}")
    metadata, cuts, sphere_rows = parse_pattern_text(text, src)
    end_line = max(1, len(text.splitlines()))
    arrays = {k: _check_cut(src, k, rows, end_line) for k, rows in cuts.items()}
    _check_crossings(src, cuts, arrays)
    peak = metadata["peak_gain_dbi"]
    all_rows = [r for rows in cuts.values() for r in rows]
    top = max(all_rows, key=lambda r: r[1])
    if abs(peak - top[1]) > PEAK_TOLERANCE_DB:
        raise _err(src, _peak_line(text),
                   f"peak_gain_dbi = {peak:g} but the largest gain in the table is {top[1]:g} dBi "
                   f"(line {top[2]}); expected agreement within {PEAK_TOLERANCE_DB:g} dB")
    sphere = (None if sphere_rows is None
              else _check_sphere(src, sphere_rows, cuts, arrays, peak, text))
    (ha, hg), (fa, fg), (ba, bg) = arrays["horizontal"], arrays["front"], arrays["back"]
    pattern = TablePattern(
        ha, hg, fa, fg, ba, bg,
        peak_gain_dbi=peak,
        electrical_tilt_deg=metadata.get("electrical_tilt_deg", 0.0),
        name=str(metadata.get("name", "")) or Path(src).stem,
        source=src,
        method=method,
        frequency_mhz=metadata.get("frequency_mhz"),
        sphere=sphere,
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
        the largest gain in the table; and in a 3-D table: a missing or duplicate cell, an
        azimuth or elevation given at some cells only, a missing pole, gaps, poles or 0/360
        columns that disagree, a table larger than :data:`MAX_SPHERE_CELLS` cells, a peak or
        cut-plane values inconsistent with the header and the cuts, a header without rows, a
        second header, and cuts rows after the 3-D header.
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
    sphere=None,
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
    if sphere is not None:
        az, el, g = (np.asarray(x, dtype=float) for x in sphere)
        if az.ndim != 1 or el.ndim != 1 or g.shape != (az.size, el.size):
            raise PatternError(f"pattern 3-D table: {az.size} azimuths, {el.size} elevations and "
                               f"gains of shape {g.shape}; expected 1-D angles and gains of shape "
                               f"(n_azimuth, n_elevation) = ({az.size}, {el.size})")
        if az.size * el.size > MAX_SPHERE_CELLS:
            raise PatternError(f"pattern 3-D table: {az.size} x {el.size} cells; expected at most "
                               f"{MAX_SPHERE_CELLS}")
        out.append(",".join(SPHERE_HEADER))
        el_text = [_fmt(y) for y in el]
        for a, row in zip(az, g, strict=True):
            a_text = _fmt(a)
            out.extend(f"{a_text},{y},{_fmt(v)}" for y, v in zip(el_text, row, strict=True))
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
    sphere=None,
) -> None:
    """Write three cuts (and optionally a full-sphere 3-D table) as a pattern CSV v1 file,
    atomically.

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
    sphere : tuple, optional
        ``(az_deg (n_az,), el_deg (n_el,), gain_dbi (n_az, n_el))``: a full-sphere table,
        azimuth 0..360 clockwise from boresight [deg], elevation -90..+90 [deg], gain [dBi];
        written after the cuts, rows azimuth-major then elevation.

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
        sphere=sphere,
    )
    pattern_from_text(text, f"{path} (being written)")
    write_text(path, text)
