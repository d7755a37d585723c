"""Remedies for a failing area: less power, or more mount height.

Exposure ratios are linear in transmitter power, so power remedies are exact:

- every antenna reduced by the same factor k needs ``k <= 1 / R_max``;
- only the responsible operators (>= 5 % of the limit, 47 CFR 1.1307(b)(5)) reducing
  by the same factor needs ``R_other + k R_resp <= 1`` at every point of the area;
- one operator alone needs ``R_rest + k R_op <= 1`` at every point.

The height remedy raises the dominant antennas (those contributing at least 5 % of the
limit at the worst point) together — or, when the other antennas alone still exceed
somewhere, every antenna of the site (the whole mount) — and scans the extra height, re-evaluating
the area (on a subsample of at most :data:`HEIGHT_SCAN_POINTS` lines); it is a search,
not a formula, and reports "not found" when no height up to the search limit works.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from siteexposure.engine.combos import ComboTable
from siteexposure.engine.evaluate import Source, column_ratios
from siteexposure.engine.result import AreaResult, AreaSummary, Mitigation

HEIGHT_SCAN_POINTS = 20_000
HEIGHT_STEP_M = 0.5
HEIGHT_LIMIT_M = 30.0


def _db(k: float) -> float:
    return 10.0 * math.log10(1.0 / k)


def reduction_with_rest(r_part: np.ndarray, r_rest: np.ndarray) -> float | None:
    """Reduction (dB) of ``part`` alone that gives ``r_rest + k r_part <= 1`` everywhere.

    Returns 0 if nothing exceeds, None if ``r_rest`` alone already exceeds somewhere.
    """
    total = r_part + r_rest
    if not np.any(total > 1.0):
        return 0.0
    if np.any(r_rest >= 1.0):
        return None
    mask = r_part > 0
    k = np.min((1.0 - r_rest[mask]) / r_part[mask])
    k = min(k, 1.0)
    return _db(k) if k > 0 else None


def add_mitigation(site, ar: AreaResult, sources: list[Source], table: ComboTable, heights, reducers) -> None:
    """Attach a :class:`Mitigation` to each failing summary of ``ar``."""
    failing = [s for s in ar.summaries if s.verdict == "exceeds"]
    if not failing:
        return
    cols, _ = ar.judged((failing[0].set_id, failing[0].population))  # cells and outline samples
    for summ in failing:
        summ.mitigation = _mitigate(site, ar, summ, cols, sources, table, heights, reducers)


def _ratio_of_subset(sources, table, rows, reducers, cols, floor_m, heights, members) -> np.ndarray:
    """Governing ratio over ``rows`` at ``cols`` counting only the sources in ``members``."""
    w = table.weights[rows] * np.array([src.id in members for src in sources], dtype=float)[None, :]
    vals = column_ratios(sources, cols, floor_m, heights, w, [reducers[r] for r in rows],
                         h_rows=table.h_rows[rows])
    return vals


def _mitigate(site, ar: AreaResult, summ: AreaSummary, cols, sources, table, heights, reducers) -> Mitigation:
    rows = table.rows_for(summ.set_id, summ.population)
    floor = ar.area.floor_m
    ops = {src.id: site.antenna(src.id).operator for src in sources}
    all_ids = set(ops)

    def split(members: set[str]) -> tuple[np.ndarray, np.ndarray]:
        part = _ratio_of_subset(sources, table, rows, reducers, cols, floor, heights, members)
        rest = _ratio_of_subset(sources, table, rows, reducers, cols, floor, heights, all_ids - members)
        return np.nan_to_num(part), np.nan_to_num(rest)

    uniform = _db(1.0 / summ.max_exposure_ratio) if summ.max_exposure_ratio > 1 else 0.0
    resp_ids = {i for i, op in ops.items() if op in summ.responsible_operators}
    responsible = reduction_with_rest(*split(resp_ids)) if resp_ids else None
    alone = {}
    for op in dict.fromkeys(ops.values()):
        alone[op] = reduction_with_rest(*split({i for i, o in ops.items() if o == op}))

    dominant = tuple(i for i, v in summ.antenna_share.items() if v >= 0.05) or (
        max(summ.antenna_share, key=summ.antenna_share.get),
    )
    extra = _height_scan(ar, summ, cols, sources, table, rows, reducers, heights, set(dominant))
    if extra is None and len(dominant) < len(sources):
        # the other antennas alone still exceed somewhere: raise the whole mount instead
        dominant = tuple(src.id for src in sources)
        extra = _height_scan(ar, summ, cols, sources, table, rows, reducers, heights, set(dominant))
    return Mitigation(
        uniform_reduction_db=uniform,
        responsible_reduction_db=responsible,
        operator_alone_reduction_db=alone,
        raised_antennas=dominant,
        extra_height_m=extra,
        height_search_limit_m=HEIGHT_LIMIT_M,
    )


def _height_scan(ar, summ, cols, sources, table, rows, reducers, heights, moved: set[str]) -> float | None:
    """Smallest extra height of ``moved`` that brings every assessable line of the area to R <= 1.

    Scanned in 1 m steps up to :data:`HEIGHT_LIMIT_M`, then refined by bisection to
    0.1 m and rounded up. Lines that other (static) antennas make not assessable stay
    so whatever the height and are left out; a raised antenna whose reactive zone still
    reaches a line does not count as a fix.
    """
    if len(cols) > HEIGHT_SCAN_POINTS:
        cols = cols[:: int(math.ceil(len(cols) / HEIGHT_SCAN_POINTS))]
    floor = ar.area.floor_m
    static_ids = {s.id for s in sources} - moved
    sub_rows = [reducers[r] for r in rows]
    w_static = table.weights[rows] * np.array([s.id in static_ids for s in sources], float)[None, :]
    h_rows = table.h_rows[rows]
    r_static = column_ratios(sources, cols, floor, heights, w_static, sub_rows, h_rows=h_rows)
    keep = np.all(np.isfinite(r_static), axis=0)
    if np.any(r_static[:, keep] > 1.0):
        return None
    moved_idx = [n for n, s in enumerate(sources) if s.id in moved]
    w_moved = table.weights[rows][:, moved_idx]

    def complies(dh: float) -> bool:
        raised = []
        for n in moved_idx:
            src = sources[n]
            pos = np.asarray(src.radiator.position_m, float) + np.array([0.0, 0.0, dh])
            raised.append(Source(src.id, dataclasses.replace(src.radiator, position_m=pos), src.choice))
        r_moved = column_ratios(raised, cols[keep], floor, heights, w_moved, sub_rows,
                                h_rows=h_rows)
        total = r_static[:, keep] + r_moved
        return bool(np.all(np.isfinite(total)) and np.all(total <= 1.0))

    lo = 0.0
    for hi in np.arange(1.0, HEIGHT_LIMIT_M + 1e-9, 1.0):
        if complies(float(hi)):
            for _ in range(4):
                mid = 0.5 * (lo + hi)
                lo, hi = (mid, hi) if not complies(mid) else (lo, mid)
            return math.ceil(hi * 10.0 - 1e-9) / 10.0
        lo = float(hi)
    return None
