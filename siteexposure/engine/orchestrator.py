"""The one orchestrator: a site in, a :class:`SiteResult` out.

Steps: load the limit sets; choose a field model per antenna (recorded with its
reason); build the weight rows of every (set, population, region); evaluate each
area's grid of averaging lines in bounded chunks; evaluate each receptor exactly at its
position; find the worst point, the contributions and the responsible operators of each
area; work out mitigation for failing areas; and compute per-antenna keep-out distances.
Every command and Python users alike call :func:`evaluate_site` or :func:`evaluate_point`.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
from collections.abc import Iterator

import numpy as np

from siteexposure import __version__
from siteexposure.constants import ETA0
from siteexposure.containers import Area, Site
from siteexposure.engine.combos import POPULATIONS, ComboTable, build_combos, governing
from siteexposure.engine.evaluate import Source, column_ratios, field_densities
from siteexposure.engine.grid import (
    MAX_POINTS_PER_AREA,
    build_grid,
    estimate_columns,
    estimate_points,
    estimate_samples,
)
from siteexposure.engine.result import (
    AntennaResult,
    AreaResult,
    AreaSummary,
    ModelRecord,
    PointExposure,
    PointResult,
    SiteResult,
)
from siteexposure.errors import InputError, LimitsError

RESPONSIBLE_SHARE = 0.05  #: 47 CFR 1.1307(b)(5): operators above 5 % of their limit share responsibility


def load_limit_sets(site: Site) -> dict:
    from siteexposure.readers.limit_tables import load_limit_set

    return {sid: load_limit_set(sid) for sid in site.limits}


def build_sources(site: Site, cache=None) -> tuple[list[Source], list[AntennaResult]]:
    """Radiators with their chosen model, and the per-antenna records.

    ``cache`` (a :class:`~siteexposure.physics.cache.ModelCache`) holds the work antennas
    share (taper fits, pattern tables); one per run when not given.
    """
    from siteexposure.physics.cache import ModelCache
    from siteexposure.physics.sources import choose_model, pattern_note, standoff_distance_m

    cache = cache if cache is not None else ModelCache()
    sources, records = [], []
    for ant in site.antennas:
        rad = ant.radiator()
        choice = choose_model(rad, ant.model, cache)
        sources.append(Source(ant.id, rad, choice))
        note = pattern_note(rad.pattern)
        reason = choice.reason if note is None else f"{choice.reason}; {note}"
        records.append(
            AntennaResult(
                antenna=ant,
                model=ModelRecord(choice.word, choice.model_id, reason),
                standoff_m=float(standoff_distance_m(rad)),
            )
        )
    return sources, records


#: Gauss-Legendre order of the array model's sphere integral per radian of electrical
#: aperture length, and its floor (siteexposure.physics.array._radiated_power)
_ARRAY_NODES_PER_RAD = 6.0
_ARRAY_MIN_NODES = 256
# The set-up estimate below was sized for numpy's leggauss (a dense n x n eigenproblem). The
# nodes now come from scipy.special.roots_legendre; measured since then (2 cores): about 26 kB
# and 0.2 ms per node of the sphere integral (n + 3601 elevation nodes), so for n above about
# 1600 this estimate overstates the memory (4x at n = 8800) and for small n understates it
# (100 MB at n = 256). Kept as it is: it refuses very long apertures up front, which a
# time budget would otherwise have to do; to be revisited with one.
_ARRAY_BYTES_PER_NODE2 = 16  #: numpy's leggauss solved a dense n x n eigenproblem
_ARRAY_SECONDS_PER_NODE3 = 1.0e-10  #: and took about this long per n^3 (measured, rounded up)


def _array_preparation(site: Site) -> tuple[int, float, str | None]:
    """Peak memory [bytes], total time [s] and worst antenna id of the array models' setup.

    The array-synthesis model normalises each distinct column (pattern, frequency, aperture
    height, tilt) by a sphere integral whose order grows with the electrical length
    ``k L``; its Gauss-Legendre nodes cost ``O(n^2)`` memory and ``O(n^3)`` time.
    """
    from siteexposure.constants import C0, MHZ
    from siteexposure.physics.sources import choose_model

    peak, seconds, worst, seen = 0, 0.0, None, set()
    for ant in site.antennas:
        h = ant.aperture_height_m
        if not h or choose_model(ant.radiator(), ant.model).word != "array":
            continue
        key = (id(ant.pattern), ant.frequency_mhz, h, ant.electrical_tilt_deg)
        if key in seen:
            continue
        seen.add(key)
        k = 2.0 * np.pi * ant.frequency_mhz * MHZ / C0
        n = max(_ARRAY_MIN_NODES, int(_ARRAY_NODES_PER_RAD * k * h))
        seconds += _ARRAY_SECONDS_PER_NODE3 * n**3
        if _ARRAY_BYTES_PER_NODE2 * n * n > peak:
            peak, worst = _ARRAY_BYTES_PER_NODE2 * n * n, ant.id
    return peak, seconds, worst


def _gib(n: float) -> str:
    return f"{n / 1024**3:.2f} GB" if n >= 0.1 * 1024**3 else f"{n / 1024**2:.0f} MB"


#: antennas x evaluation points of a run: refused above MAX_EVALUATIONS, a warning with the
#: time to expect above WARN_EVALUATIONS; EVALUATIONS_PER_S is what the far-field kernel
#: does on two cores (an order of magnitude, from memory of benchmark runs; near-field
#: models are slower) [1], [1/s]
MAX_EVALUATIONS = 2e10
WARN_EVALUATIONS = 1e9
EVALUATIONS_PER_S = 1e8


def check_grid_size(site: Site) -> None:
    """Refuse, up front, a site whose grids or models would not fit in memory or time.

    Three estimates are made before anything is allocated, from the outlines and the
    antennas alone:

    * evaluation points per area ((cells + outline samples) x averaging heights) against
      :data:`~siteexposure.engine.grid.MAX_POINTS_PER_AREA` (run time);
    * the memory of the run -- the stored ratio grids of every area (cells x
      (limit set, population) keys x 8 bytes) plus the working arrays of the largest area,
      one evaluation chunk and the contouring work
      (:func:`~siteexposure.engine.grid.estimate_memory_bytes`) -- against
      :func:`~siteexposure.engine.grid.memory_budget_bytes`;
    * the array-synthesis models' set-up (memory grows with the square of the electrical
      aperture length) against the same budget.

    Raises
    ------
    InputError
        Naming the file, the estimate, the budget and a coarser ``resolution_m`` that would
        fit (or, for an array model, the antenna and the model to use instead).
    """
    from siteexposure.engine.evaluate import BLOCK_ELEMENTS
    from siteexposure.engine.grid import estimate_memory_bytes, memory_budget_bytes

    file = site.source_path or "site"
    k = len(site.averaging.heights_m())
    evaluated = [a for a in site.areas if a.access != "none"]
    n_sets = len(site.limits)
    n_keys = n_sets * len(POPULATIONS)
    try:
        n_combos = sum(len(ls.regions()) for ls in load_limit_sets(site).values()) * len(POPULATIONS)
    except LimitsError:  # an unknown set is reported by the evaluation itself
        n_combos = 2 * n_keys

    def memory(res: float) -> int:  # an outline sample is counted as a whole cell
        cells = [estimate_columns(a, res) for a in evaluated]
        return estimate_memory_bytes(cells, k, len(site.antennas), n_keys, n_combos, BLOCK_ELEMENTS)

    def fits(res: float) -> bool:
        return memory(res) <= budget and all(
            estimate_columns(a, res) * k <= MAX_POINTS_PER_AREA for a in evaluated)

    def coarser() -> float:
        """The first resolution, in 5 % steps up from the area-scaling guess, that fits."""
        res = site.resolution_m
        for a in evaluated:  # cells scale as (bounding box) / resolution^2
            span = np.ptp(np.asarray(a.outline_en, dtype=float), axis=0)
            res = max(res, float(np.sqrt(span[0] * span[1] * k / MAX_POINTS_PER_AREA)))
        res *= max(1.0, float(np.sqrt(memory(res) / budget)))
        for _ in range(200):
            if fits(res):
                break
            res *= 1.05
        return res

    budget = memory_budget_bytes()
    for area in evaluated:
        cells = estimate_points(area, site.resolution_m)
        n = estimate_columns(area, site.resolution_m) * k
        if n > MAX_POINTS_PER_AREA:
            raise InputError(
                f"{file}: area \"{area.name}\" at resolution_m = {site.resolution_m:g} needs "
                f"about {n:,} evaluation points (({cells:,} cells + {n // k - cells:,} outline "
                f"samples) x {k} averaging heights; "
                f"limit {MAX_POINTS_PER_AREA:,} per area, to bound the run time); expected a "
                f"coarser resolution_m (about {coarser():.3g} m would fit) or a smaller area"
            )
    total = sum(estimate_columns(a, site.resolution_m) * k for a in evaluated) * len(site.antennas)
    if total > MAX_EVALUATIONS:
        raise InputError(
            f"{file}: {len(site.antennas):,} antennas over about "
            f"{total // max(len(site.antennas), 1):,} evaluation points make about {total:.2g} "
            f"field evaluations (at most {MAX_EVALUATIONS:.0e}, which takes about "
            f"{MAX_EVALUATIONS / EVALUATIONS_PER_S / 3600:.1f} h on two cores with the fastest "
            "model; this would take hours more); expected a coarser resolution_m, smaller "
            "areas, or the site split into parts"
        )
    if total > WARN_EVALUATIONS:
        import warnings

        from siteexposure.errors import SiteExposureWarning

        warnings.warn(f"{file}: about {total:.2g} field evaluations ({len(site.antennas)} "
                      f"antennas x points); expect at least {total / EVALUATIONS_PER_S / 60:.0f} "
                      "min on two cores", SiteExposureWarning, stacklevel=2)
    need = memory(site.resolution_m)
    if need > budget:
        raise InputError(
            f"{file}: the area grids at resolution_m = {site.resolution_m:g} need about "
            f"{_gib(need)} of memory (budget {_gib(budget)}): "
            f"{sum(estimate_points(a, site.resolution_m) for a in evaluated):,} cells and "
            f"{sum(estimate_samples(a, site.resolution_m) for a in evaluated):,} outline samples, "
            f"each holding {n_keys} stored ratios (limit sets x populations), plus working arrays; "
            f"expected a coarser resolution_m (about {coarser():.3g} m would fit) or smaller "
            "areas"
        )
    _check_array_preparation(site)


def _check_array_preparation(site: Site) -> None:
    """Refuse array-synthesis models whose set-up would not fit the memory budget."""
    from siteexposure.engine.grid import memory_budget_bytes

    budget = memory_budget_bytes()
    prep, seconds, worst = _array_preparation(site)
    if prep > budget:
        raise InputError(
            f"{site.source_path or 'site'}: antenna \"{worst}\": the array-synthesis model of "
            f"this aperture needs about {_gib(prep)} of memory and {seconds:,.0f} s to set up "
            f"(budget {_gib(budget)}); expected model = \"cylindrical\" (or \"far-field\") "
            "for this antenna, or a shorter aperture height_m"
        )


@contextlib.contextmanager
def _progress(total: int, label: str, enabled: bool) -> Iterator:
    """A progress bar on stderr (rich) for long runs; a no-op callback otherwise."""
    if not enabled or total <= 0:
        yield None
        return
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn

    console = Console(stderr=True)
    with Progress(
        TextColumn("{task.description}"),
        BarColumn(),
        TextColumn("{task.percentage:>3.0f}%"),
        TimeRemainingColumn(),
        console=console,
        transient=True,
        disable=not console.is_terminal,
    ) as bar:
        task = bar.add_task(label, total=total)
        yield lambda n: bar.advance(task, n)


def evaluate_site(site: Site, *, progress: bool = False, mitigation: bool = True) -> SiteResult:
    """Evaluate every area, receptor and antenna of ``site``.

    Parameters
    ----------
    site : Site
    progress : bool
        Show a progress bar on stderr (when it is a terminal).
    mitigation : bool
        Work out power and height remedies for failing areas.
    """
    check_grid_size(site)
    limit_sets = load_limit_sets(site)
    sources, antenna_results = build_sources(site)
    table = build_combos(limit_sets, site.antennas)
    heights = site.averaging.heights_m()
    reducers = table.reducers(site.averaging.method)

    grids = [(area, build_grid(area, site.resolution_m)) for area in site.areas]
    total = sum(int(g.evaluate.sum()) + len(g.samples_en) for area, g in grids if area.access != "none")
    areas: list[AreaResult] = []
    with _progress(total, f"Evaluating {site.name}", progress and total * len(sources) > 2e6) as tick:
        for area, grid in grids:
            areas.append(_evaluate_area(site, area, grid, sources, table, heights, reducers, tick))

    points = [
        evaluate_point(site, rec.at_m, name=rec.name, access=rec.access, _ctx=(sources, table))
        for rec in site.points
    ]
    _keep_out(sources, antenna_results, table)
    _note_power_floor(sources, antenna_results)
    if mitigation:
        from siteexposure.engine.mitigation import add_mitigation

        for ar in areas:
            add_mitigation(site, ar, sources, table, heights, reducers)

    reachable_fail = any(s.verdict != "complies" for a in areas for s in a.summaries) or any(
        (e.exposure_ratio is None or e.exposure_ratio > 1.0)
        for p in points
        if p.access != "none"
        for e in p.exposure
        if e.population == _population(p.access)
    )
    return SiteResult(
        site=site,
        antennas=antenna_results,
        areas=areas,
        points=points,
        limit_sources={
            sid: {
                "title": ls.title,
                "publication": ls.publication,
                "tables": ls.tables,
                "file": ls.source_file,
                "sha256": ls.sha256,
            }
            for sid, ls in limit_sets.items()
        },
        settings={
            "tool_version": __version__,
            "run_utc": _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
            "averaging": {
                "method": site.averaging.method,
                "bottom_m": site.averaging.bottom_m,
                "top_m": site.averaging.top_m,
                "points": site.averaging.points,
            },
            "resolution_m": site.resolution_m,
            "reflection_factors": sorted({a.reflection_factor for a in site.antennas}),
        },
        exceeded_where_reachable=reachable_fail,
    )


def _population(access: str) -> str | None:
    return {"public": "general", "worker": "occupational"}.get(access)


def _evaluate_area(site, area: Area, grid, sources, table: ComboTable, heights, reducers, tick) -> AreaResult:
    """Ratios of an area's grid (inside cells and margin) and outline samples; verdicts."""
    ny, nx = grid.shape
    ratio, at_samples = {}, {}
    assess = np.zeros((ny, nx), dtype=bool)
    if area.access == "none" or not sources:
        return AreaResult(area, grid.east_m, grid.north_m, grid.inside, assess, ratio)
    jj, ii = np.nonzero(grid.evaluate)
    cols = np.vstack([np.column_stack([grid.east_m[ii], grid.north_m[jj]]), grid.samples_en])
    values = column_ratios(sources, cols, area.floor_m, heights, table.weights, reducers,
                           progress=tick, h_rows=table.h_rows)
    n_cells = len(jj)
    for set_id in site.limits:
        for pop in POPULATIONS:
            best, _ = governing(values, table.rows_for(set_id, pop))
            g = np.full((ny, nx), np.nan)
            g[jj, ii] = best[:n_cells]
            ratio[(set_id, pop)] = g
            at_samples[(set_id, pop)] = best[n_cells:]
    any_key = next(iter(ratio))
    assess[jj, ii] = np.isfinite(ratio[any_key][jj, ii])
    result = AreaResult(area, grid.east_m, grid.north_m, grid.inside, assess, ratio,
                        samples_en=grid.samples_en, sample_ratio=at_samples)
    for set_id in site.limits:
        result.summaries.append(_summarise(site, result, set_id, area.population, sources, table, heights))
    return result


def _sampling_note(result: AreaResult, n_points: int) -> str:
    """Why an area was judged other than on its grid alone ("" if it was not)."""
    n_cells = int(result.inside.sum())
    if n_points == 0:
        return ("its outline encloses no surface (area 0 m^2), so no point could be judged; "
                "expected an outline around the surface people stand on")
    if n_cells == 0:
        res = float(result.east_m[1] - result.east_m[0]) if len(result.east_m) > 1 else float("nan")
        return (f"narrower than the {res:g} m grid (no cell centre inside): judged on "
                f"{n_points} points along its outline and inside the cells it crosses")
    return ""


def _summarise(site, result: AreaResult, set_id, pop, sources, table, heights) -> AreaSummary:
    """Worst point, contributions, responsible operators and verdict of one area.

    Judged on every point of the area: the inside cell centres and the outline samples.
    """
    area = result.area
    en, values = result.judged((set_id, pop))
    n_points = len(values)
    n_bad = int(np.isnan(values).sum())
    note = _sampling_note(result, n_points)
    if n_bad == n_points:
        return AreaSummary(set_id, pop, float("nan"), None, "not assessable", "whole-body", n_points,
                           n_bad, {}, {}, (), note=note)
    k = int(np.nanargmax(values))
    max_ratio = float(values[k])
    at = (float(en[k, 0]), float(en[k, 1]), float(area.floor_m))
    share, region = _shares_at_column(site, (at[0], at[1]), area.floor_m, sources, table, heights, set_id, pop)
    op_share: dict[str, float] = {}
    for src in sources:
        op = site.antenna(src.id).operator
        op_share[op] = op_share.get(op, 0.0) + share.get(src.id, 0.0)
    responsible = tuple(op for op, v in op_share.items() if v >= RESPONSIBLE_SHARE) if max_ratio > 1.0 else ()
    verdict = "exceeds" if max_ratio > 1.0 else ("not assessable" if n_bad else "complies")
    return AreaSummary(set_id, pop, max_ratio, at, verdict, region, n_points, n_bad, share, op_share,
                       responsible, note=note)


def _shares_at_column(site, en, floor_m, sources, table: ComboTable, heights, set_id, pop):
    """Exposure ratio contributed by each antenna on the averaging line at ``en``."""
    rows = table.rows_for(set_id, pop)
    reducers = table.reducers(site.averaging.method)
    pts = np.column_stack([np.full(len(heights), en[0]), np.full(len(heights), en[1]), floor_m + heights])
    s_e, s_h = field_densities(sources, pts)  # (n_source, k)
    best_val, best_row, best_share = -np.inf, rows[0], {}
    for row in rows:
        per = table.weights[row][:, None] * (s_h if table.h_rows[row] else s_e)  # (n_source, k)
        if reducers[row] == "mean":
            contrib = per.mean(axis=1)
        else:
            contrib = per[:, int(np.nanargmax(np.nansum(per, axis=0)))]
        total = float(np.nansum(contrib))
        if total > best_val:
            best_val, best_row = total, row
            best_share = {src.id: float(c) for src, c in zip(sources, contrib, strict=True)}
    return best_share, table.combos[best_row].region


def evaluate_point(site: Site, at_m, *, name: str = "point", access: str = "public", _ctx=None) -> PointResult:
    """Exposure exactly at ``at_m`` (east, north, height above site ground), no averaging.

    Both populations are evaluated for every limit set of the site; a point inside any
    antenna's stand-off (lambda/2pi, at most 1 m, from its body) is reported as not
    assessable, never as a pass.
    """
    if _ctx is None:
        _check_array_preparation(site)
        limit_sets = load_limit_sets(site)
        sources, _ = build_sources(site)
        table = build_combos(limit_sets, site.antennas)
    else:
        sources, table = _ctx
    at = np.asarray(at_m, dtype=float).reshape(3)
    if sources:
        s_e, s_h = (v[:, 0] for v in field_densities(sources, at[None, :]))
    else:
        s_e = s_h = np.zeros(0)
    s = np.fmax(s_e, s_h) + 0.0 * (s_e + s_h)
    bad = [src.id for src, v in zip(sources, s, strict=True) if not np.isfinite(v)]
    exposure = []
    for set_id in site.limits:
        for pop in POPULATIONS:
            rows = table.rows_for(set_id, pop)
            per = [table.weights[r] * (s_h if table.h_rows[r] else s_e) for r in rows]
            vals = [float(np.nansum(p)) for p in per]
            k = int(np.argmax(vals))
            share = {src.id: float(per[k][n]) for n, src in enumerate(sources)
                     if np.isfinite(per[k][n])}
            exposure.append(
                PointExposure(set_id, pop, None if bad else vals[k], table.combos[rows[k]].region,
                              share, table.combos[rows[k]].field)
            )
    reason = ""
    if bad:
        reason = ("within the stand-off of " + ", ".join(bad) + " (closer than λ/2π to the "
                  "antenna's body, or below its ground plane): no model assesses the reactive "
                  "field of the elements there")
    return PointResult(
        name=name,
        at_m=at,
        access=access,
        density_w_m2={src.id: (float(v) if np.isfinite(v) else None) for src, v in zip(sources, s, strict=True)},
        e_v_m={src.id: (float(np.sqrt(v * ETA0)) if np.isfinite(v) else None)
               for src, v in zip(sources, s_e, strict=True)},
        h_a_m={src.id: (float(np.sqrt(v / ETA0)) if np.isfinite(v) else None)
               for src, v in zip(sources, s_h, strict=True)},
        assessable=not bad,
        reason=reason,
        exposure=exposure,
    )


def _note_power_floor(sources, records) -> None:
    """Add what each built model says of itself (e.g. an array model that radiates more than
    its input power to keep the pattern's stated peak gain) to its record."""
    from dataclasses import replace

    from siteexposure.physics.sources import model_notes

    for src, rec in zip(sources, records, strict=True):
        notes = model_notes(src.radiator, src.choice)
        if notes:
            rec.model = replace(rec.model, reason="; ".join((rec.model.reason, *notes)))


def _keep_out(sources, records, table: ComboTable) -> None:
    """Per-antenna compliance boundaries against each set's whole-body limits (E and H each
    against its own), in 3-D (:mod:`siteexposure.physics.keepout`): distances from the
    envelope, along the beam, and the box and cylinder a crew can mark out. The stand-off is
    part of every zone."""
    from siteexposure.physics.keepout import KeepOutSearch

    for n, (src, rec) in enumerate(zip(sources, records, strict=True)):
        search = KeepOutSearch(src.radiator, src.choice)
        for i, combo in enumerate(table.combos):
            if combo.region != "whole-body" or combo.field != "e":
                continue
            j = table.index(combo.set_id, combo.population, combo.region, "h")
            lim_e = float(table.limits_w_m2[i, n])
            lim_h = float(table.limits_w_m2[j, n])
            key = (combo.set_id, combo.population)
            rec.limit_w_m2[key] = min(lim_e, lim_h)
            found = search.boundary(lim_e, lim_h)
            rec.keep_out_m[key] = dict(found.distances_m)
            rec.keep_out_shape[key] = {"box": found.box_m, "cylinder": found.cylinder_m}
