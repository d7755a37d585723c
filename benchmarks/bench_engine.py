"""Engine speed and memory benchmark of siteexposure (one process, one run).

Builds an invented synthetic rooftop in memory -- 24 antennas of four invented operators on
a 60 m x 60 m roof, every antenna with a pattern file written into a temporary folder with
:func:`siteexposure.readers.pattern_csv.write_pattern_csv` -- and measures, interleaving the
repeats and keeping the best of each:

1. the pattern-aware far-field throughput (source x point pairs per second) through the
   engine's own loop, :func:`siteexposure.engine.evaluate.column_ratios`, with the fused
   kernel of :mod:`siteexposure.physics.fastpath` behind it (``fastpath_hook`` = native);
2. a bare numpy pass over the same points and sources, chunked the same way, that computes
   only ``K / r^2`` into the ``(n_source, chunk)`` block, written as fast as plain numpy
   goes (one array per coordinate, in-place); ``ratio_vs_bare_numpy`` is (1) over (2), both
   measured in this run (also: the fast path on one numba thread, which shows the work per
   pair when other programs hold a core; the CPU time per pair of both, summed over threads;
   and the same bare pass written with ``einsum`` offsets as the engine writes distances);
3. the same engine loop without the fast path (``SITEEXPOSURE_NO_NUMBA=1``, the plain numpy
   models), for comparison, and the largest relative difference between the two results
   (``fast_vs_plain_max_rel_diff``, with the count of differing NaN flags);
4. the array-synthesis throughput per sub-source (source x sub-source x point per second)
   through the same loop, and its ratio to (2);
5. the peak memory at about 1 M and 4 M points: the resident-set high-water mark of this
   process while it screens the same site at that grid
   (:func:`siteexposure.engine.orchestrator.evaluate_site`: grid, every source, every limit
   set, contributions, keep-out distances, mitigation), reset just before each run (Linux
   ``/proc/self/clear_refs``; elsewhere a fresh process per size), everything a screening run
   holds included -- interpreter, libraries, numba's compiled code, the grids and results;
   ``memory_ratio_4m_vs_1m`` is their ratio and ``memory_growth_bytes_per_point`` what each
   further point adds. Beside it, inside this process, the tracemalloc peak of the numpy
   allocations of one engine loop (``engine_traced_*``), split into the result array
   (``n_combo x n_column`` values, growing with the grid) and the working memory (flat);
6. the demo site's run: screen (``evaluate_site``), zones, maps and GIS files
   (``write_all_outputs``) and the PDF report (``write_report``), stage by stage.

Usage::

    .venv/bin/python benchmarks/bench_engine.py [--json] [--quick] [--repeats N]

``--json`` prints one JSON object on stdout (progress goes to stderr); ``--quick`` uses
smaller sizes, fewer repeats and a reduced demo (screen and zones only, far-field models,
2 m grid) so that it finishes within half a minute on two cores once numba's cache is warm;
the output says so. A point is one point
of an averaging line (10 per grid column here). Every site, operator and pattern here is
invented for the benchmark.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import math
import os
import platform
import resource
import sys
import tempfile
import time
import tracemalloc
from dataclasses import replace
from pathlib import Path

import numpy as np

ROOF_M = 60.0
FLOOR_M = 20.0
HEIGHTS = 10
LIMITS = ("fcc-1310", "icnirp-2020")


def log(msg: str) -> None:
    print(msg, file=sys.stderr, flush=True)


# -- invented patterns and site -------------------------------------------------------------


def _pole_blend(v: np.ndarray, elev: np.ndarray, floor: float) -> np.ndarray:
    """Fade a vertical cut into ``floor`` between 60 and 90 deg from the horizon."""
    s = np.clip((np.abs(elev) - 60.0) / 30.0, 0.0, 1.0)
    s = s * s * (3.0 - 2.0 * s)
    return (1.0 - s) * v + s * floor


def invented_cuts(kind: str, gain: float, hpbw_h: float, hpbw_v: float, tilt: float,
                  fbr: float) -> dict:
    """Cuts of an invented antenna: a quadratic-in-dB main lobe with a side-lobe cap."""
    h_ang = np.arange(0.0, 360.0, 1.0)
    v_ang = np.arange(-90.0, 90.25, 0.5)
    phi = np.abs((h_ang + 180.0) % 360.0 - 180.0)
    front = gain - np.minimum(12.0 * ((v_ang + tilt) / hpbw_v) ** 2, 20.0)
    front = front + 0.8 * np.sin(np.radians(7.0 * v_ang)) * (np.abs(v_ang + tilt) > hpbw_v)
    v0 = float(np.interp(0.0, v_ang, front))
    floor = gain - fbr - 6.0
    if kind == "omni":
        h = v0 + 0.6 * np.cos(np.radians(3.0 * h_ang))
        back = front + (h[180] - h[0])
    else:
        h = v0 - np.minimum(12.0 * (phi / hpbw_h) ** 2, fbr)
        back = front - fbr
    return {
        "h_angle_deg": h_ang, "h_gain_dbi": h,
        "v_front_elev_deg": v_ang, "v_front_gain_dbi": _pole_blend(front, v_ang, floor),
        "v_back_elev_deg": v_ang, "v_back_gain_dbi": _pole_blend(back, v_ang, floor),
    }


#: (file, kind, gain dBi, HPBW h, HPBW v, electrical tilt, front-to-back dB, MHz, aperture m)
PATTERNS = (
    ("panel_low.csv", "panel", 15.5, 68.0, 11.0, 3.0, 24.0, 740.0, 1.8),
    ("panel_mid.csv", "panel", 17.8, 63.0, 6.5, 4.0, 27.0, 1950.0, 1.3),
    ("panel_high.csv", "panel", 18.2, 60.0, 5.5, 5.0, 28.0, 2650.0, 1.0),
    ("omni_uhf.csv", "omni", 6.0, 360.0, 14.0, 1.0, 0.0, 460.0, 2.4),
)


def write_patterns(folder: Path) -> dict:
    from siteexposure.readers.pattern_csv import read_pattern_csv, write_pattern_csv

    out = {}
    for name, kind, gain, hh, hv, tilt, fbr, mhz, ap in PATTERNS:
        cuts = invented_cuts(kind, gain, hh, hv, tilt, fbr)
        peak = max(float(np.max(cuts[k])) for k in ("h_gain_dbi", "v_front_gain_dbi"))
        write_pattern_csv(folder / name, peak_gain_dbi=peak, **cuts,
                          metadata={"name": f"invented {name[:-4]}", "frequency_mhz": mhz,
                                    "electrical_tilt_deg": tilt})
        out[name] = (read_pattern_csv(folder / name), mhz, ap)
    return out


def build_site(folder: Path, model: str, resolution_m: float):
    """The invented 60 m x 60 m roof: three sector operators, one two-way radio mast."""
    from siteexposure.containers import Antenna, Area, Averaging, Site

    pats = write_patterns(folder)
    ants = []
    operators = ("Birch Mobile", "Quarry Telecom", "Harbour Wireless")
    mounts = ((14.0, 16.0), (46.0, 18.0), (30.0, 45.0))
    for o, (op, (x0, y0)) in enumerate(zip(operators, mounts, strict=True)):
        for s, az in enumerate((20.0 + 15 * o, 140.0 + 15 * o, 260.0 + 15 * o)):
            for b, name in enumerate(("panel_low.csv", "panel_mid.csv")
                                     if o != 2 else ("panel_mid.csv", "panel_high.csv")):
                pat, mhz, ap = pats[name]
                a = np.radians(az)
                pos = np.array([x0 + 1.2 * np.sin(a) + 0.4 * b, y0 + 1.2 * np.cos(a), 24.5 + b])
                ants.append(Antenna(f"{op[0]}{s + 1}{'LM'[b]}", op, pos, az, float(s % 2),
                                    0.0, mhz, 40.0 + 20.0 * b, pat, carriers=2,
                                    line_loss_db=1.5, pattern_source=name,
                                    aperture_height_m=ap, model=model))
    for k in range(6):
        pat, mhz, ap = pats["omni_uhf.csv"]
        pos = np.array([8.0 + 9.0 * k, 54.0 - 6.0 * (k % 2), 23.0 + 0.5 * k])
        ants.append(Antenna(f"R{k + 1}", "Civic Radio", pos, 0.0, 0.0, 0.0, mhz, 25.0, pat,
                            activity=0.5, pattern_source="omni_uhf.csv",
                            aperture_height_m=ap, model=model))
    roof = Area("Roof (invented)", "public", FLOOR_M,
                np.array([[0.0, 0.0], [ROOF_M, 0.0], [ROOF_M, ROOF_M], [0.0, ROOF_M]]))
    return Site("Benchmark roof (invented)", 45.0, -93.0, LIMITS, tuple(ants), (roof,),
                averaging=Averaging("vertical-line", 0.0, 2.0, HEIGHTS),
                resolution_m=resolution_m)


def resolution_for(points: float) -> float:
    """Grid spacing giving about ``points`` evaluation points on the roof. [m]"""
    return ROOF_M / math.sqrt(points / HEIGHTS)


class Engine:
    """The engine's own objects for one site: sources, weights, reducers, columns."""

    def __init__(self, site):
        from siteexposure.engine.combos import build_combos
        from siteexposure.engine.grid import build_grid
        from siteexposure.engine.orchestrator import build_sources, load_limit_sets

        self.site = site
        self.sources, _ = build_sources(site)
        self.table = build_combos(load_limit_sets(site), site.antennas)
        self.heights = site.averaging.heights_m()
        self.reducers = self.table.reducers(site.averaging.method)
        area = site.areas[0]
        grid = build_grid(area, site.resolution_m)
        jj, ii = np.nonzero(grid.evaluate)
        # the columns the engine evaluates: the grid (with its margin) and the outline samples
        self.cols = np.vstack([np.column_stack([grid.east_m[ii], grid.north_m[jj]]), grid.samples_en])
        self.floor = area.floor_m

    @property
    def n_points(self) -> int:
        return len(self.cols) * len(self.heights)

    def run(self, cols=None):
        from siteexposure.engine.evaluate import column_ratios

        cols = self.cols if cols is None else cols
        return column_ratios(self.sources, cols, self.floor, self.heights, self.table.weights,
                             self.reducers)


# -- the fast-path hook -----------------------------------------------------------------------


@contextlib.contextmanager
def fast_engine(state: str):
    """The engine loop as it is: ``column_ratios`` calls the fused kernel itself."""
    yield


@contextlib.contextmanager
def numba_disabled():
    from siteexposure.physics.fastpath import NO_NUMBA_ENV

    old = os.environ.get(NO_NUMBA_ENV)
    os.environ[NO_NUMBA_ENV] = "1"
    try:
        yield
    finally:
        if old is None:
            os.environ.pop(NO_NUMBA_ENV, None)
        else:
            os.environ[NO_NUMBA_ENV] = old


# -- measurements -------------------------------------------------------------------------------


def bare_pass(eng: Engine) -> None:
    """Only ``K / r^2``: same points, same sources, the chunks of ``column_ratios``."""
    from siteexposure.engine.evaluate import BLOCK_ELEMENTS

    pos = np.array([s.radiator.position_m for s in eng.sources])
    k = np.array([s.radiator.power_w * s.radiator.reflection_factor / (4 * np.pi)
                  * 10 ** (s.radiator.pattern.peak_gain_dbi / 10) for s in eng.sources])
    n_src, kh = len(pos), len(eng.heights)
    chunk = max(1, BLOCK_ELEMENTS // (n_src * kh))
    for start in range(0, len(eng.cols), chunk):
        cols = eng.cols[start:start + chunk]
        pts = np.empty((len(cols), kh, 3))
        pts[..., :2] = cols[:, None, :]
        pts[..., 2] = eng.floor + eng.heights[None, :]
        pts = pts.reshape(-1, 3)
        x, y, z = pts[:, 0].copy(), pts[:, 1].copy(), pts[:, 2].copy()
        s = np.empty((n_src, len(pts)))
        for i in range(n_src):
            dx, dy, dz = x - pos[i, 0], y - pos[i, 1], z - pos[i, 2]
            r2 = dx * dx
            r2 += dy * dy
            r2 += dz * dz
            np.divide(k[i], r2, out=s[i])


def bare_pass_einsum(eng: Engine) -> None:
    """The bare pass written as the engine writes distances (``einsum`` of the offsets)."""
    from siteexposure.engine.evaluate import BLOCK_ELEMENTS

    pos = np.array([s.radiator.position_m for s in eng.sources])
    n_src, kh = len(pos), len(eng.heights)
    chunk = max(1, BLOCK_ELEMENTS // (n_src * kh))
    for start in range(0, len(eng.cols), chunk):
        cols = eng.cols[start:start + chunk]
        pts = np.empty((len(cols), kh, 3))
        pts[..., :2] = cols[:, None, :]
        pts[..., 2] = eng.floor + eng.heights[None, :]
        pts = pts.reshape(-1, 3)
        s = np.empty((n_src, len(pts)))
        for i in range(n_src):
            d = pts - pos[i]
            s[i] = 1.0 / np.einsum("ij,ij->i", d, d)


def best_times(tasks: dict, repeats: int, cpu: dict | None = None) -> dict:
    """Best wall time of each task over ``repeats`` rounds, the tasks interleaved; the best
    CPU time (all threads) goes into ``cpu`` if given."""
    best = dict.fromkeys(tasks, math.inf)
    for _ in range(repeats):
        for name, fn in tasks.items():
            t0, c0 = time.perf_counter(), time.process_time()
            fn()
            best[name] = min(best[name], time.perf_counter() - t0)
            if cpu is not None:
                cpu[name] = min(cpu.get(name, math.inf), time.process_time() - c0)
    return best


def peak_memory(eng: Engine, state: str) -> tuple[float, float]:
    """tracemalloc peak of one engine pass [MB], and the size of its result [MB]."""
    with fast_engine(state):
        tracemalloc.start()
        tracemalloc.reset_peak()
        base = tracemalloc.get_traced_memory()[0]
        r = eng.run()
        peak = tracemalloc.get_traced_memory()[1] - base
        tracemalloc.stop()
    return peak / 2**20, r.nbytes / 2**20


def rss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def _reset_peak_rss() -> bool:
    """Reset this process's resident-set high-water mark (Linux: ``/proc/self/clear_refs``,
    value 5, see proc(5)); False where the system offers no such reset."""
    try:
        with open("/proc/self/clear_refs", "w") as f:
            f.write("5")
        return True
    except OSError:
        return False


def _peak_rss_since_reset_mb() -> float:
    """``VmHWM`` of ``/proc/self/status``: the resident high-water mark since the reset. [MB]"""
    with open("/proc/self/status") as f:
        for line in f:
            if line.startswith("VmHWM:"):
                return int(line.split()[1]) / 1024.0
    raise OSError("VmHWM missing from /proc/self/status")


def _screen(site) -> tuple[int, float]:
    from siteexposure.engine.orchestrator import evaluate_site

    n = Engine(site).n_points
    t = time.perf_counter()
    evaluate_site(site)
    return n, time.perf_counter() - t


def screen_memory(site, points: float) -> dict:
    """Peak resident memory of screening ``site`` at about ``points`` points: in this process
    (high-water mark reset just before), or, where the system cannot reset it, in a fresh
    process (``--memory-child``)."""
    import gc

    sized = replace(site, resolution_m=resolution_for(points))
    gc.collect()
    if _reset_peak_rss():
        n, dt = _screen(sized)
        return {"points": n, "rss_mb": _peak_rss_since_reset_mb(), "screen_s": dt,
                "where": "this process"}
    import subprocess

    cmd = [sys.executable, str(Path(__file__).resolve()), "--memory-child", repr(points)]
    done = subprocess.run(cmd, capture_output=True, text=True, check=True)
    return {**json.loads(done.stdout.strip().splitlines()[-1]), "where": "a fresh process"}


def screen_memory_child(points: float) -> int:
    """In a fresh process: screen the invented site at about ``points`` points and print
    ``{"points", "rss_mb", "screen_s"}`` as JSON (the fallback of :func:`screen_memory`)."""
    with tempfile.TemporaryDirectory(prefix="siteexposure-bench-mem-") as tmp:
        n, dt = _screen(build_site(Path(tmp), "far-field", resolution_for(points)))
    print(json.dumps({"points": n, "rss_mb": rss_mb(), "screen_s": dt}))
    return 0


def demo_run(quick: bool, out_dir: Path) -> tuple[float | None, dict, list[str]]:
    """Time the demo's stages; a stage whose module is not there is skipped with a note."""
    import importlib.util

    notes, stages = [], {}
    need = ("siteexposure.readers.site_toml", "siteexposure.engine.orchestrator")
    if any(importlib.util.find_spec(m) is None for m in need):
        return None, stages, ["demo skipped: the site reader or the orchestrator is missing"]
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.readers.site_toml import read_site
    from siteexposure.resources import sample_sites_dir

    path = sample_sites_dir() / "office_roof.toml"
    if not path.is_file():
        return None, stages, [f"demo skipped: {path} not found"]
    t0 = time.perf_counter()
    site = read_site(path)
    if quick:
        site = replace(site, resolution_m=max(site.resolution_m, 2.0), antennas=tuple(
            replace(a, model="far-field") for a in site.antennas))
        notes.append("quick: demo site at 2 m resolution with the far-field model for every "
                     "antenna (the full demo sets up array-synthesis columns)")
    stages["read_s"] = time.perf_counter() - t0
    t = time.perf_counter()
    res = evaluate_site(site)
    stages["screen_s"] = time.perf_counter() - t
    zones = []
    if importlib.util.find_spec("siteexposure.engine.zones"):
        from siteexposure.engine.zones import compute_zones

        t = time.perf_counter()
        zones = compute_zones(res)
        stages["zones_s"] = time.perf_counter() - t
    else:
        notes.append("zones skipped: siteexposure.engine.zones not present")
    maps = []
    if quick:
        notes.append("quick: maps, GIS files and the PDF report skipped (they take about a minute "
                     "on two cores; run without --quick for the whole demo)")
        return time.perf_counter() - t0, stages, notes
    if importlib.util.find_spec("siteexposure.writers.bundle"):
        from siteexposure.writers.bundle import write_all_outputs

        t = time.perf_counter()
        written = write_all_outputs(res, zones, out_dir)
        maps = [p for p in written if Path(p).suffix.lower() == ".png"]
        stages["maps_gis_s"] = time.perf_counter() - t
    else:
        notes.append("maps skipped: siteexposure.writers.bundle not present")
    if importlib.util.find_spec("siteexposure.writers.report_pdf"):
        from siteexposure.writers.report_pdf import write_report

        t = time.perf_counter()
        write_report(res, zones, out_dir / "demo_report.pdf", map_files=maps)
        stages["report_s"] = time.perf_counter() - t
    else:
        notes.append("report skipped: siteexposure.writers.report_pdf not present")
    return time.perf_counter() - t0, stages, notes


def machine() -> dict:
    info = {"cpu_count": os.cpu_count(), "platform": platform.platform(),
            "processor": platform.processor() or platform.machine(),
            "python": platform.python_version(), "numpy": np.__version__,
            "openblas_coretype_set": "OPENBLAS_CORETYPE" in os.environ,
            "load_average_start": list(os.getloadavg())}
    try:
        import numba

        info.update(numba_version=numba.__version__, numba_threads=numba.get_num_threads())
    except ImportError:
        info.update(numba_version=None, numba_threads=0)
    return info


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--json", action="store_true", help="print one JSON object on stdout")
    ap.add_argument("--quick", action="store_true", help="smaller sizes, fewer repeats")
    ap.add_argument("--repeats", type=int, default=None, help="rounds per timing (best kept)")
    ap.add_argument("--memory-child", type=float, default=None, metavar="POINTS",
                    help=argparse.SUPPRESS)  # internal: one screening run in a fresh process
    args = ap.parse_args(argv)
    if args.memory_child is not None:
        return screen_memory_child(args.memory_child)
    quick = args.quick
    repeats = args.repeats or (2 if quick else 5)
    n_main, n_mem = (3e5, (2.5e5, 1e6)) if quick else (1.05e6, (1.05e6, 4.2e6))
    n_plain, n_array, n_array_ant = (3e4, 4e3, 1) if quick else (2e5, 5e4, 4)
    out = {"quick": quick, "repeats": repeats, "machine": machine(), "notes": []}
    if quick:
        out["notes"].append(f"quick: smaller grids ({n_main / 1e6:.2g} M points for throughput, "
                            f"{n_mem[0] / 1e6:.2g} M and {n_mem[1] / 1e6:.2g} M for memory), "
                            f"{repeats} repeats")
    from siteexposure.physics import fastpath

    t_all = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="siteexposure-bench-") as tmp:
        tmp = Path(tmp)
        log(f"bench: building the invented site ({'quick' if quick else 'full'} sizes)")
        site = build_site(tmp, "far-field", resolution_for(n_main))
        eng = Engine(site)
        state = "native"  # the engine's column_ratios calls the fused kernel
        out.update(numba=fastpath.fast_available(), fastpath_hook=state,
                   antennas=len(site.antennas), combos=len(eng.table.combos),
                   far_field_points=eng.n_points)
        # warm-up: compile (or load from numba's cache) before anything is timed
        t = time.perf_counter()
        with fast_engine(state):
            eng.run(eng.cols[:64])
        out["jit_compile_s"] = time.perf_counter() - t
        log(f"bench: warm-up {out['jit_compile_s']:.1f} s (numba compile or cache load)")
        # memory at two sizes: a screening run in a fresh process each, then the engine loop
        # traced in this one
        log(f"bench: peak memory of screening runs at {n_mem[0]:,.0f} and {n_mem[1]:,.0f} "
            "points")
        child = [screen_memory(site, n) for n in n_mem]
        mem = []
        for n in n_mem:
            e = Engine(replace(site, resolution_m=resolution_for(n)))
            log(f"bench: traced engine loop at {e.n_points:,} points")
            mem.append((e.n_points, *peak_memory(e, state)))
            del e
        work = [m[1] - m[2] for m in mem]
        out.update(memory_points=[c["points"] for c in child],
                   peak_memory_1m_mb=child[0]["rss_mb"], peak_memory_4m_mb=child[1]["rss_mb"],
                   memory_ratio_4m_vs_1m=child[1]["rss_mb"] / child[0]["rss_mb"],
                   memory_growth_bytes_per_point=(child[1]["rss_mb"] - child[0]["rss_mb"])
                   * 2**20 / (child[1]["points"] - child[0]["points"]),
                   screen_s=[c["screen_s"] for c in child],
                   peak_memory_measured_in=child[0]["where"],
                   engine_traced_points=[m[0] for m in mem],
                   engine_traced_peak_mb=[m[1] for m in mem],
                   engine_traced_ratio_4m_vs_1m=mem[1][1] / mem[0][1],
                   result_memory_mb=[m[2] for m in mem], working_memory_mb=work,
                   working_memory_ratio_4m_vs_1m=work[1] / work[0], rss_high_water_mb=rss_mb(),
                   memory_method="peak_memory_*: resident-set high-water mark (VmHWM) of this "
                                 "process while it screens the site (evaluate_site) at that "
                                 "grid, reset just before (/proc/self/clear_refs), everything "
                                 "the process holds included (interpreter, libraries, compiled "
                                 "code, grids, results); where no reset exists, ru_maxrss of a "
                                 "fresh process doing the same; engine_traced_*: tracemalloc peak of the "
                                 "numpy allocations of one engine loop in this process, its "
                                 "result array (n_combo x n_column values, growing with the "
                                 "grid) included; working_memory_*: the same less the result; "
                                 "numba's scratch rows are not traced (a few 10 kB per thread); "
                                 "rss_high_water_mb: ru_maxrss of this process")
        # far field vs bare numpy, interleaved
        log(f"bench: far field vs bare numpy, {eng.n_points:,} points x "
            f"{len(eng.sources)} sources, best of {repeats}")
        pairs = eng.n_points * len(eng.sources)

        def fast_run():
            with fast_engine(state):
                eng.run()

        def fast_run_1thread():
            import numba

            n = numba.get_num_threads()
            numba.set_num_threads(1)
            try:
                fast_run()
            finally:
                numba.set_num_threads(n)

        cpu: dict = {}
        tasks = {"bare": lambda: bare_pass(eng), "far_field": fast_run,
                 "bare_einsum": lambda: bare_pass_einsum(eng)}
        if out["numba"]:
            tasks["far_field_1thread"] = fast_run_1thread
        best = best_times(tasks, repeats, cpu)
        if out["numba"]:
            out.update(far_field_1thread_pairs_per_s=pairs / best["far_field_1thread"],
                       ratio_vs_bare_numpy_1thread=best["bare"] / best["far_field_1thread"])
        out.update(far_field_pairs_per_s=pairs / best["far_field"],
                   bare_pairs_per_s=pairs / best["bare"],
                   ratio_vs_bare_numpy=best["bare"] / best["far_field"],
                   bare_einsum_pairs_per_s=pairs / best["bare_einsum"],
                   far_field_cpu_ns_per_pair=cpu["far_field"] / pairs * 1e9,
                   bare_cpu_ns_per_pair=cpu["bare"] / pairs * 1e9,
                   cpu_ratio_vs_bare_numpy=cpu["bare"] / cpu["far_field"])
        # the plain numpy engine path, on a part of the same grid
        sub = eng.cols[: int(n_plain / HEIGHTS)]
        log(f"bench: engine loop without the fast path, {len(sub) * HEIGHTS:,} points")
        with numba_disabled():
            t_plain = best_times({"plain": lambda: eng.run(sub)}, max(1, repeats // 2))["plain"]
            r_plain = eng.run(sub)
        with fast_engine(state):
            r_fast = eng.run(sub)
        both = np.isfinite(r_plain) & np.isfinite(r_fast)
        out["fast_vs_plain_max_rel_diff"] = float(np.max(np.abs(r_fast[both] / r_plain[both] - 1.0),
                                                         initial=0.0))
        out["fast_vs_plain_nan_mismatch"] = int(np.sum(np.isnan(r_plain) != np.isnan(r_fast)))
        out["engine_numpy_pairs_per_s"] = len(sub) * HEIGHTS * len(eng.sources) / t_plain
        out["engine_numpy_ratio_vs_bare_numpy"] = out["engine_numpy_pairs_per_s"] / out[
            "bare_pairs_per_s"]
        # array synthesis per sub-source
        from siteexposure.physics.array import n_sub_sources
        from siteexposure.physics.sources import array_model_available

        if array_model_available():
            arr_site = replace(site, antennas=tuple(replace(a, model="array")
                                                    for a in site.antennas[:n_array_ant]))
            ae = Engine(arr_site)
            cols = ae.cols[:: max(1, int(len(ae.cols) / (n_array / HEIGHTS)))]
            t = time.perf_counter()
            ae.run(cols[:1])
            out["array_build_s"] = time.perf_counter() - t
            n_sub = [n_sub_sources(s.radiator.aperture_height_m, s.radiator.wavelength_m)
                     for s in ae.sources]
            log(f"bench: array synthesis, {len(cols) * HEIGHTS:,} points x {sum(n_sub)} "
                f"sub-sources of {len(n_sub)} antennas")
            t_arr = best_times({"array": lambda: ae.run(cols)}, max(1, repeats // 2))["array"]
            out.update(array_sub_sources=n_sub, array_points=len(cols) * HEIGHTS,
                       array_pairs_per_s=len(cols) * HEIGHTS * sum(n_sub) / t_arr)
            out["array_ratio_vs_bare_numpy"] = out["array_pairs_per_s"] / out["bare_pairs_per_s"]
        else:
            out["notes"].append("array synthesis skipped: siteexposure.physics.array missing")
            out.update(array_pairs_per_s=None, array_ratio_vs_bare_numpy=None)
        # the demo
        log("bench: demo site (screen, zones, maps, report)")
        demo_dir = tmp / "demo"
        demo_dir.mkdir()
        out["demo_run_s"], out["demo_stages_s"], notes = demo_run(quick, demo_dir)
        out["notes"].extend(notes)
    out["machine"]["load_average_end"] = list(os.getloadavg())
    out["bench_total_s"] = time.perf_counter() - t_all
    if args.json:
        print(json.dumps(out, indent=2, default=float))
    else:
        print_human(out)
    return 0


def print_human(out: dict) -> None:
    def fmt(v, unit=""):
        return "-" if v is None else (f"{v:,.3g}{unit}" if isinstance(v, float) else f"{v}{unit}")

    m = out["machine"]
    print(f"siteexposure engine benchmark ({'quick' if out['quick'] else 'full'}), "
          f"{m['cpu_count']} CPUs, numba {m['numba_version'] or 'absent'} "
          f"({m['numba_threads']} threads), fast-path hook {out['fastpath_hook']}")
    rows = (
        ("far-field pairs/s (engine loop, fast path)", fmt(out["far_field_pairs_per_s"])),
        ("bare numpy K/r^2 pairs/s", fmt(out["bare_pairs_per_s"])),
        ("bare numpy, einsum distances, pairs/s", fmt(out["bare_einsum_pairs_per_s"])),
        ("CPU ns per pair: far field / bare", f"{out['far_field_cpu_ns_per_pair']:.3g} / "
                                              f"{out['bare_cpu_ns_per_pair']:.3g}"),
        ("ratio_vs_bare_numpy", fmt(out["ratio_vs_bare_numpy"])),
        ("the same with one numba thread", fmt(out.get("ratio_vs_bare_numpy_1thread"))),
        ("engine loop without fast path pairs/s", fmt(out["engine_numpy_pairs_per_s"])),
        ("fast vs plain: max relative difference", f"{out['fast_vs_plain_max_rel_diff']:.2g} "
                                                   f"({out['fast_vs_plain_nan_mismatch']} NaN "
                                                   "flags differ)"),
        ("array synthesis sub-source pairs/s", fmt(out["array_pairs_per_s"])),
        ("array_ratio_vs_bare_numpy", fmt(out["array_ratio_vs_bare_numpy"])),
        (f"peak memory, screening {out['memory_points'][0]:,} points",
         fmt(out["peak_memory_1m_mb"], " MB")),
        (f"peak memory, screening {out['memory_points'][1]:,} points",
         fmt(out["peak_memory_4m_mb"], " MB")),
        ("memory ratio", fmt(out["memory_ratio_4m_vs_1m"])),
        ("memory added per further point", fmt(out["memory_growth_bytes_per_point"], " B")),
        ("engine loop traced: peak at both sizes", " / ".join(
            fmt(v, " MB") for v in out["engine_traced_peak_mb"])),
        ("engine loop traced: working memory at both", " / ".join(
            fmt(v, " MB") for v in out["working_memory_mb"])),
        ("demo run", fmt(out["demo_run_s"], " s")),
        ("JIT warm-up", fmt(out["jit_compile_s"], " s")),
    )
    for k, v in rows:
        print(f"  {k:<46} {v}")
    for note in out["notes"]:
        print(f"  note: {note}")


if __name__ == "__main__":
    sys.exit(main())
