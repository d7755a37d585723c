"""Shared pieces of the robustness tests: small invented sites, a TOML emitter, an invented
pattern file, and an in-process runner of the command line.

Everything here is invented input for the tests (no check values): a 20 m x 20 m deck with
an isotropic and a 3GPP-panel antenna on the far-field model, so that one ``screen`` runs
in well under a second.
"""

from __future__ import annotations

import contextlib
import copy
import io
import json
import math
import warnings
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from siteexposure.errors import SiteExposureWarning

# --------------------------------------------------------------------------------------
# a TOML emitter (tomllib reads only); enough for site files, including nan and inf
# --------------------------------------------------------------------------------------


def _key(k: Any) -> str:
    k = str(k)
    bare = k and all(c.isascii() and (c.isalnum() or c in "-_") for c in k)
    return k if bare else json.dumps(k)


def toml_value(v: Any) -> str:
    """One value in TOML syntax (inline tables and arrays)."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, list | tuple):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{_key(k)} = {toml_value(x)}" for k, x in v.items()) + " }"
    raise TypeError(f"no TOML form for {v!r}")


def dump_toml(doc: dict[str, Any]) -> str:
    """A document: top-level keys first, then [tables], then [[arrays of tables]]."""
    head, body = [], []
    for k, v in doc.items():
        if isinstance(v, dict):
            body.append(f"[{_key(k)}]")
            body += [f"{_key(a)} = {toml_value(b)}" for a, b in v.items()]
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for table in v:
                body.append(f"[[{_key(k)}]]")
                body += [f"{_key(a)} = {toml_value(b)}" for a, b in table.items()]
        else:
            head.append(f"{_key(k)} = {toml_value(v)}")
    return "\n".join(head + body) + "\n"


# --------------------------------------------------------------------------------------
# invented sites and an invented pattern file
# --------------------------------------------------------------------------------------

PATTERN_NAME = "deck_panel.csv"


def pattern_text(peak: float = 10.0, step: float = 5.0, sphere_step: float | None = None) -> str:
    """A valid pattern CSV v1 text of an invented, smooth panel (peak ``peak`` dBi).

    Horizontal ``peak - 3 (1 - cos phi)``; vertical front ``peak - 12 (el/90)^2``; vertical
    back ``peak - 6 - 6 (el/90)^2``: the cuts agree at boresight, back, zenith and nadir.
    With ``sphere_step``, a full-sphere 3-D table follows on that grid (azimuth 0 up to but
    not including 360), ``f Vf(el) + (1 - f) Vb(el)`` with ``f = (1 + cos phi) / 2``: the
    horizontal cut at el = 0, the vertical cuts at phi = 0 and 180, one value at each pole.
    """
    lines = ["# pattern CSV v1", f"# peak_gain_dbi = {peak!r}", "# frequency_mhz = 1950",
             "# electrical_tilt_deg = 0", "# name = invented deck panel",
             "cut,side,angle_deg,gain_dbi"]
    n_h = int(round(360.0 / step))
    for i in range(n_h):
        a = i * step
        lines.append(f"horizontal,,{a!r},{peak - 3.0 * (1.0 - math.cos(math.radians(a))):.6f}")
    n_v = int(round(180.0 / step))
    for side, drop, curve in (("front", 0.0, 12.0), ("back", 6.0, 6.0)):
        for i in range(n_v + 1):
            e = -90.0 + i * step
            lines.append(f"vertical,{side},{e!r},{peak - drop - curve * (e / 90.0) ** 2:.6f}")
    if sphere_step is not None:
        lines.append("azimuth_deg,elevation_deg,gain_dbi")
        for i in range(int(round(360.0 / sphere_step))):
            a = i * sphere_step
            f = 0.5 * (1.0 + math.cos(math.radians(a)))
            for k in range(int(round(180.0 / sphere_step)) + 1):
                e = -90.0 + k * sphere_step
                g = f * (peak - 12.0 * (e / 90.0) ** 2) + (1.0 - f) * (peak - 6.0 - 6.0 * (e / 90.0) ** 2)
                lines.append(f"{a!r},{e!r},{g:.6f}")
    return "\n".join(lines) + "\n"


BASE_SITE: dict[str, Any] = {
    "site": {
        "name": "Robustness deck",
        "origin": {"lat": 40.0, "lon": -100.0},
        "limits": ["fcc-1310"],
        "averaging": {"method": "vertical-line", "bottom_m": 0.0, "top_m": 2.0, "points": 3},
        "resolution_m": 1.0,
        "zone_levels": [0.5],
        "reflection_factor": 1.0,
        "address": "invented",
        "preparer": "tests",
    },
    "area": [
        {"name": "Deck", "access": "public", "floor_m": 0.0,
         "outline": [[-10.0, -10.0], [10.0, -10.0], [10.0, 10.0], [-10.0, 10.0]]},
        {"name": "Plant", "access": "worker", "floor_m": 3.0,
         "outline_lonlat": [[-100.00005, 40.00002], [-100.0, 40.00002], [-100.0, 40.00008]]},
    ],
    "point": [{"name": "Window", "at": [5.0, 5.0, 8.0], "access": "public"}],
    "antenna": [
        {"id": "T1", "operator": "Op A", "position": [0.0, 0.0, 12.0], "azimuth_deg": 0.0,
         "mechanical_tilt_deg": 0.0, "frequency_mhz": 1950.0, "tx_power_w": 20.0, "carriers": 2,
         "line_loss_db": 1.0, "activity": 0.8, "pattern": {"model": "isotropic"},
         "model": "far-field", "reflection_factor": 1.0},
        {"id": "P2", "operator": "Op B", "position": [3.0, -2.0, 9.0], "azimuth_deg": 90.0,
         "mechanical_tilt_deg": 2.0, "electrical_tilt_deg": 4.0, "frequency_mhz": 900.0,
         "tx_power_dbm": 43.0,
         "pattern": {"model": "3gpp-panel", "gain_dbi": 15.0, "hpbw_h_deg": 65.0,
                     "hpbw_v_deg": 10.0, "front_to_back_db": 25.0},
         "aperture": {"height_m": 1.2, "width_m": 0.3}, "model": "far-field"},
        {"id": "F3", "operator": "Op B", "position": [-4.0, 6.0, 7.0], "azimuth_deg": 200.0,
         "frequency_mhz": 1950.0, "tx_power_w": 5.0, "pattern": PATTERN_NAME,
         "gain_dbi": 9.0, "model": "far-field"},
    ],
}


def base_site() -> dict[str, Any]:
    """A fresh deep copy of :data:`BASE_SITE`."""
    return copy.deepcopy(BASE_SITE)


def write_site(folder: Path, doc: dict[str, Any] | str, name: str = "site.toml",
               pattern: str | None = None) -> Path:
    """Write a site (a document or its text) and the invented pattern file beside it."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / PATTERN_NAME).write_text(pattern_text() if pattern is None else pattern)
    path = folder / name
    path.write_text(doc if isinstance(doc, str) else dump_toml(doc), encoding="utf-8")
    return path


# --------------------------------------------------------------------------------------
# the command line, in process
# --------------------------------------------------------------------------------------


@dataclass
class Run:
    code: int | None
    stdout: str
    stderr: str


@contextlib.contextmanager
def soft_warnings_ignored() -> Iterator[None]:
    """Package warnings (soft problems, e.g. an area smaller than a cell) are allowed;
    every other warning (numpy overflow, invalid value, ...) stays an error."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        warnings.simplefilter("ignore", SiteExposureWarning)
        yield


def run_cli(args: list[str]) -> Run:
    """Run ``siteexposure ARGS`` in this process; any exception but SystemExit propagates."""
    from siteexposure.cli.app import main

    out, err = io.StringIO(), io.StringIO()
    code: int | None = 0
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err), soft_warnings_ignored():
        try:
            main([str(a) for a in args])
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) or exc.code is None else 2
    return Run(0 if code is None else code, out.getvalue(), err.getvalue())


def assert_one_line_error(run: Run) -> str:
    """Exit status 2, one ``Error: `` line on stderr, no traceback; returns the line."""
    assert run.code == 2, (run.code, run.stderr[-2000:])
    assert "Traceback" not in run.stderr, run.stderr[-2000:]
    lines = run.stderr.strip("\n").splitlines()
    assert len(lines) == 1, run.stderr[-2000:]
    assert lines[0].startswith("Error: "), lines[0]
    return lines[0]
