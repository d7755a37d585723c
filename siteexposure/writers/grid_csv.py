"""CSV of the grid values of every evaluated area.

One row per point an area is judged on: each grid cell whose centre lies inside the
area's outline (the evaluated margin ring outside the outline is left out), then each
outline sample (points on the outline and one point in each cell the area covers only in
part, see :mod:`siteexposure.engine.grid`). Columns::

    east_m, north_m, floor_m, area, point, ratio_<set>_<population>, ...

``point`` is ``cell`` or ``outline``; one ratio column per limit set of the site and
population (``general``, ``occupational``), in the site's order of sets. A ratio is the
governing exposure ratio of the point (see :mod:`siteexposure.engine.result`), written
with 6 significant digits; an empty field means not assessable (never zero). Areas with
``access = "none"`` are not evaluated and have no rows.
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

from siteexposure.engine.result import POPULATIONS, SiteResult

__all__ = ["grid_columns", "write_grid_csv"]


def grid_columns(result: SiteResult) -> list[str]:
    """The header of the CSV."""
    return ["east_m", "north_m", "floor_m", "area", "point"] + [
        f"ratio_{sid}_{pop}" for sid in result.site.limits for pop in POPULATIONS
    ]


def _ratio(v: float) -> str:
    return "" if not math.isfinite(v) else f"{v:.6g}"


def csv_text(text: str) -> str:
    """A name as a CSV cell that no spreadsheet takes for a formula: one starting with ``=``,
    ``+``, ``-``, ``@``, tab or carriage return gets a leading apostrophe (the OWASP rule
    against CSV injection)."""
    text = str(text)
    return "'" + text if text[:1] in ("=", "+", "-", "@", "\t", "\r") else text


def write_grid_csv(result: SiteResult, path: Path | str) -> Path:
    """Write the grid CSV of ``result`` to ``path`` atomically and return the path."""
    from siteexposure.atomic import write_text
    from siteexposure.output_guard import protected_inputs, refuse_input_overwrite

    refuse_input_overwrite([path], protected_inputs(result.site))
    keys = [(sid, pop) for sid in result.site.limits for pop in POPULATIONS]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(grid_columns(result))
    for ar in result.areas:
        if not ar.evaluated or not ar.ratio:
            continue
        n_cells = int(ar.inside.sum())
        judged = [ar.judged(k) for k in keys]
        en = judged[0][0]
        floor = f"{float(ar.area.floor_m):.3f}"
        for n in range(len(en)):
            w.writerow([f"{en[n, 0]:.3f}", f"{en[n, 1]:.3f}", floor, csv_text(ar.area.name),
                        "cell" if n < n_cells else "outline",
                        *(_ratio(float(values[n])) for _, values in judged)])
    return write_text(path, buf.getvalue())
