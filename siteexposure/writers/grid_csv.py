"""CSV of the grid values of every evaluated area.

One row per grid cell whose centre lies inside an area's outline (the evaluated margin
ring outside the outline is left out). Columns::

    east_m, north_m, floor_m, area, ratio_<set>_<population>, ...

one ratio column per limit set of the site and population (``general``,
``occupational``), in the site's order of sets. A ratio is the governing exposure ratio
of the cell (see :mod:`siteexposure.engine.result`), written with 6 significant digits;
an empty field means not assessable (never zero). Areas with ``access = "none"`` are
not evaluated and have no rows.
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

import numpy as np

from siteexposure.engine.result import POPULATIONS, SiteResult

__all__ = ["grid_columns", "write_grid_csv"]


def grid_columns(result: SiteResult) -> list[str]:
    """The header of the CSV."""
    return ["east_m", "north_m", "floor_m", "area"] + [
        f"ratio_{sid}_{pop}" for sid in result.site.limits for pop in POPULATIONS
    ]


def _ratio(v: float) -> str:
    return "" if not math.isfinite(v) else f"{v:.6g}"


def write_grid_csv(result: SiteResult, path: Path | str) -> Path:
    """Write the grid CSV of ``result`` to ``path`` atomically and return the path."""
    from siteexposure.atomic import write_text

    keys = [(sid, pop) for sid in result.site.limits for pop in POPULATIONS]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(grid_columns(result))
    for ar in result.areas:
        if not ar.evaluated or not ar.ratio:
            continue
        jj, ii = np.nonzero(ar.inside)
        cols = [ar.ratio[k][jj, ii] if k in ar.ratio else np.full(len(jj), np.nan) for k in keys]
        floor = f"{float(ar.area.floor_m):.3f}"
        for n, (j, i) in enumerate(zip(jj, ii, strict=True)):
            w.writerow([f"{ar.east_m[i]:.3f}", f"{ar.north_m[j]:.3f}", floor, ar.area.name,
                        *(_ratio(float(c[n])) for c in cols)])
    return write_text(path, buf.getvalue())
