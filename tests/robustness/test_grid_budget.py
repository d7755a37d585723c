"""Grids and models too large for memory or time are refused up front, with advice.

``engine.orchestrator.check_grid_size`` estimates, before anything is allocated, the
evaluation points of each area (a bound on the run time), the memory of the run (the stored
ratio grids of every area, cells x (limit set, population) keys x 8 bytes, plus the largest
area's working arrays, one evaluation chunk and the contouring work), and the set-up of the
array-synthesis models; a site over the budget gets one line with the estimate, the budget
and a coarser resolution that fits. The memory model is checked here against a measured
run (tracemalloc), and the advice by checking that the resolution it names passes.
"""

from __future__ import annotations

import re
import time
import tracemalloc
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import sitegen
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.containers import Area
from siteexposure.engine import grid


def _site(tmp_path: Path, doc: dict):
    from siteexposure.readers.site_toml import read_site

    with sitegen.soft_warnings_ignored():
        return read_site(sitegen.write_site(tmp_path, doc))


def _suggested(line: str) -> float:
    return float(re.search(r"about ([0-9.e+-]+) m would fit", line).group(1))


def _passes(site) -> bool:
    from siteexposure.engine.orchestrator import check_grid_size
    from siteexposure.errors import InputError

    try:
        check_grid_size(site)
    except InputError:
        return False
    return True


def test_a_huge_area_at_a_fine_resolution_is_refused_fast(tmp_path):
    """20 km x 20 km at 1 mm (4e14 cells): one line, exit 2, well under 2 s, and the
    resolution it advises passes the check."""
    doc = sitegen.base_site()
    doc["site"]["resolution_m"] = 0.001
    doc["area"][0]["outline"] = [[-1e4, -1e4], [1e4, -1e4], [1e4, 1e4], [-1e4, 1e4]]
    site_file = sitegen.write_site(tmp_path, doc)
    sitegen.run_cli(["limits", "--set", "fcc-1310", "--json"])  # imports done before timing
    start = time.perf_counter()
    run = sitegen.run_cli(["screen", site_file, "--json", "--no-progress"])
    elapsed = time.perf_counter() - start
    line = sitegen.assert_one_line_error(run)
    assert elapsed < 2.0, elapsed
    assert run.stdout == ""
    # cells 20,000,003^2 - 1 (lattice with margin); outline samples: per 20 km edge
    # 2e7 along it plus 2e7 + 2 cells it crosses (engine.grid.estimate_samples)
    assert line.startswith(f'Error: {site_file}: area "Deck" at resolution_m = 0.001 needs about '
                           "1,200,000,960,000,072 evaluation points ((400,000,160,000,016 cells + "
                           "160,000,008 outline samples) x 3 averaging heights; limit 20,000,000 "
                           "per area")
    site = _site(tmp_path, doc)
    advice = _suggested(line)
    assert _passes(replace(site, resolution_m=advice))
    assert not _passes(replace(site, resolution_m=advice / 1.06))  # and it is not far off


def test_many_areas_over_the_memory_budget_are_refused_with_a_resolution_that_fits(tmp_path):
    """Twenty 340 m roofs at 0.25 m under three limit sets: each area is under the point
    limit, but together their stored grids exceed the 2 GB budget."""
    doc = sitegen.base_site()
    doc["site"]["limits"] = ["fcc-1310", "icnirp-2020", "ieee-c95.1-2019"]
    doc["site"]["resolution_m"] = 0.25
    doc["area"] = [{"name": f"Roof {i}", "access": "public", "floor_m": 0.0,
                    "outline": [[400.0 * i, 0.0], [400.0 * i + 340, 0.0],
                                [400.0 * i + 340, 340.0], [400.0 * i, 340.0]]}
                   for i in range(20)]
    site_file = sitegen.write_site(tmp_path, doc)
    start = time.perf_counter()
    run = sitegen.run_cli(["screen", site_file, "--json", "--no-progress"])
    assert time.perf_counter() - start < 2.0
    line = sitegen.assert_one_line_error(run)
    budget = grid.memory_budget_bytes()
    assert re.fullmatch(
        rf"Error: {re.escape(str(site_file))}: the area grids at resolution_m = 0\.25 need about "
        rf"[0-9.]+ GB of memory \(budget {budget / 1024**3:.2f} GB\): 37,209,920 cells and "
        # outline samples per roof: 4 edges x (1360 along + 1362 crossed cells)
        r"217,760 outline samples, each holding 6 stored ratios \(limit sets x populations\), "
        r"plus working arrays; expected a "
        r"coarser resolution_m \(about [0-9.]+ m would fit\) or smaller areas", line), line
    site = _site(tmp_path, doc)
    assert _passes(replace(site, resolution_m=_suggested(line)))


def test_an_array_model_too_long_to_set_up_is_refused(tmp_path):
    """A 100 m line source at 1950 MHz (about 650 wavelengths) on the array-synthesis model:
    its sphere integral would need gigabytes; refused for `screen` and for `point`."""
    doc = sitegen.base_site()
    doc["antenna"][1].update(model="array", aperture={"height_m": 100.0, "width_m": 0.3},
                             frequency_mhz=1950.0)
    site_file = sitegen.write_site(tmp_path, doc)
    for args in (["screen", site_file, "--json"], ["point", site_file, "--at", "1", "1", "1"]):
        start = time.perf_counter()
        line = sitegen.assert_one_line_error(sitegen.run_cli(args))
        assert time.perf_counter() - start < 2.0
        assert line.startswith(f'Error: {site_file}: antenna "P2": the array-synthesis model of '
                               "this aperture needs about ")
        assert line.endswith('expected model = "cylindrical" (or "far-field") for this '
                             "antenna, or a shorter aperture height_m")
    doc["antenna"][1]["model"] = "cylindrical"  # the advice works
    assert _passes(_site(tmp_path, doc))


def test_memory_estimate_covers_a_measured_run(tmp_path):
    """tracemalloc peak of evaluate_site + compute_zones on a 160 m roof at 0.2 m (about
    640 000 cells, two limit sets): the estimate is above the measured peak and within a
    factor of three of it (so the budget neither lets a run overflow nor refuses a run that
    would have fitted several times over)."""
    from siteexposure.engine.evaluate import BLOCK_ELEMENTS
    from siteexposure.engine.orchestrator import evaluate_site, load_limit_sets
    from siteexposure.engine.zones import compute_zones

    doc = sitegen.base_site()
    doc["site"]["limits"] = ["fcc-1310", "icnirp-2020"]
    doc["site"]["resolution_m"] = 0.2
    doc["area"] = [{"name": "Roof", "access": "public", "floor_m": 0.0,
                    "outline": [[-80.0, -80.0], [80.0, -80.0], [80.0, 80.0], [-80.0, 80.0]]}]
    site = _site(tmp_path, doc)
    cells = [grid.estimate_points(a, site.resolution_m) for a in site.areas]
    n_combos = sum(len(s.regions()) for s in load_limit_sets(site).values()) * 2
    estimate = grid.estimate_memory_bytes(cells, len(site.averaging.heights_m()),
                                          len(site.antennas), 4, n_combos, BLOCK_ELEMENTS)
    tracemalloc.start()
    try:
        with sitegen.soft_warnings_ignored():
            result = evaluate_site(site, mitigation=False)
            compute_zones(result)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert peak < estimate < 3.0 * peak, (peak, estimate)


@settings(max_examples=60, deadline=None, derandomize=True, database=None)
@given(vertices=st.lists(st.tuples(st.floats(-50, 50), st.floats(-50, 50)), min_size=3,
                         max_size=6),
       resolution=st.sampled_from([0.1, 0.25, 0.3, 1.0, 1.7, 5.0]))
def test_cell_count_without_allocation_equals_the_built_grid(vertices, resolution):
    """estimate_points (constant time, no arrays) counts exactly the cells build_grid makes."""
    outline = np.array(vertices, dtype=float)
    area = Area(name="a", access="public", floor_m=0.0, outline_en=outline)
    east, north = grid.grid_axes(outline, resolution)
    assert grid.estimate_points(area, resolution) == east.size * north.size


def test_cell_count_of_absurd_resolutions_does_not_overflow():
    area = Area(name="a", access="public", floor_m=0.0,
                outline_en=np.array([[0.0, 0.0], [1e4, 0.0], [0.0, 1e4]]))
    for res in (1e-300, 5e-324, 0.0, -1.0, float("nan")):
        assert grid.estimate_points(area, res) >= 2**80


def test_memory_budget_is_at_most_2_gb_and_half_the_machine():
    import os

    budget = grid.memory_budget_bytes()
    assert 0 < budget <= 2 * 1024**3
    physical = os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
    assert budget <= physical // 2


@pytest.mark.parametrize("sample", ["office_roof.toml", "parking_dish.toml", "shared_tower.toml"])
def test_the_sample_sites_pass_the_check(sample):
    from siteexposure.readers.site_toml import read_site

    root = Path(__file__).resolve().parents[2] / "sample_sites"
    with sitegen.soft_warnings_ignored():
        assert _passes(read_site(root / sample))


@settings(max_examples=60, deadline=None, derandomize=True, database=None)
@given(vertices=st.lists(st.tuples(st.floats(-20, 20), st.floats(-20, 20)), min_size=3,
                         max_size=8),
       resolution=st.sampled_from([0.1, 0.25, 0.3, 1.0, 1.7, 5.0]))
def test_outline_sample_count_is_bounded_without_allocation(vertices, resolution):
    """estimate_samples (constant memory) is never below the outline samples build_grid makes,
    so the point and memory checks count every averaging line the engine evaluates."""
    outline = np.array(vertices, dtype=float)
    area = Area(name="a", access="public", floor_m=0.0, outline_en=outline)
    built = grid.build_grid(area, resolution)
    assert grid.estimate_samples(area, resolution) >= len(built.samples_en)
    assert grid.estimate_columns(area, resolution) >= int(built.evaluate.sum()) + len(built.samples_en)
