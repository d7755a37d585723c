"""Smoke test of the benchmark harness: ``benchmarks/bench_engine.py --quick --json``.

Checks that the run completes and that its JSON object carries the documented keys with
finite numbers; it does not judge the figures (no timing assertions).
"""

from __future__ import annotations

import importlib.util
import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

BENCH = Path(__file__).resolve().parents[2] / "benchmarks" / "bench_engine.py"
NUMERIC = (
    "ratio_vs_bare_numpy", "far_field_pairs_per_s", "bare_pairs_per_s",
    "engine_numpy_pairs_per_s", "peak_memory_1m_mb", "peak_memory_4m_mb",
    "memory_ratio_4m_vs_1m", "working_memory_ratio_4m_vs_1m", "jit_compile_s",
    "fast_vs_plain_max_rel_diff", "memory_growth_bytes_per_point",
    "engine_traced_ratio_4m_vs_1m",
)


@pytest.mark.slow
def test_quick_json_run_has_the_documented_keys_with_finite_values():
    run = subprocess.run([sys.executable, str(BENCH), "--quick", "--json"], capture_output=True,
                         text=True, timeout=300)
    assert run.returncode == 0, run.stderr[-2000:]
    out = json.loads(run.stdout)
    for key in NUMERIC:
        assert isinstance(out[key], (int, float)) and math.isfinite(out[key]), key
    assert out["quick"] is True and any("quick" in n for n in out["notes"])
    assert isinstance(out["numba"], bool)
    assert out["fastpath_hook"] in ("native", "emulated")
    assert out["antennas"] >= 20
    m = out["machine"]
    assert isinstance(m["cpu_count"], int) and m["cpu_count"] >= 1
    assert isinstance(m["platform"], str) and m["platform"]
    if importlib.util.find_spec("siteexposure.physics.array"):
        for key in ("array_pairs_per_s", "array_ratio_vs_bare_numpy"):
            assert math.isfinite(out[key]), key
    else:
        assert out["array_pairs_per_s"] is None
    demo_ready = all(importlib.util.find_spec(m) for m in
                     ("siteexposure.readers.site_toml", "siteexposure.engine.orchestrator"))
    if demo_ready:
        assert math.isfinite(out["demo_run_s"]) and out["demo_stages_s"]["screen_s"] >= 0.0
    else:
        assert out["demo_run_s"] is None


def test_memory_child_fallback_prints_its_measurement():
    """The fresh-process memory measurement (used where the high-water mark cannot be reset)."""
    run = subprocess.run([sys.executable, str(BENCH), "--memory-child", "20000"],
                         capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stderr[-2000:]
    out = json.loads(run.stdout.strip().splitlines()[-1])
    assert out["points"] > 10000 and out["rss_mb"] > 0 and out["screen_s"] >= 0
