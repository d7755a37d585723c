"""Unit tests of the engine's building blocks: grids, weighted sums, governing rows."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.containers import Area, Averaging
from siteexposure.engine.combos import governing
from siteexposure.engine.grid import build_grid, grid_axes
from siteexposure.physics.exposure import weighted_sums


def _area(outline, floor=0.0, access="public"):
    return Area("a", access, floor, np.asarray(outline, float))


def test_grid_cells_are_centres_on_a_lattice_anchored_at_the_origin():
    east, north = grid_axes(np.array([[0, 0], [2, 0], [2, 1], [0, 1]], float), 0.5)
    assert np.allclose(np.mod(east / 0.5, 1.0), 0.5)
    assert east.min() < 0 < 2 < east.max()  # one cell of margin each side
    assert np.allclose(np.diff(north), 0.5)


def test_grid_inside_mask_counts_cells_of_a_rectangle():
    g = build_grid(_area([[0, 0], [4, 0], [4, 2], [0, 2]]), 0.5)
    assert int(g.inside.sum()) == 8 * 4
    assert g.evaluate.sum() > g.inside.sum()
    assert np.all(g.evaluate[g.inside])


def test_grid_of_an_l_shape_excludes_the_notch():
    g = build_grid(_area([[0, 0], [4, 0], [4, 4], [2, 4], [2, 2], [0, 2]]), 1.0)
    assert int(g.inside.sum()) == 16 - 4


def test_averaging_heights_are_even_and_include_both_ends():
    h = Averaging("vertical-line", 0.0, 2.0, 10).heights_m()
    assert h[0] == 0.0 and h[-1] == 2.0 and len(h) == 10
    assert np.allclose(np.diff(h), 2.0 / 9)


def test_weighted_sums_matches_hand_sum_and_marks_nan_only_where_weighted():
    s = np.array([[1.0, 2.0, np.nan], [10.0, 20.0, 30.0]])
    w = np.array([[0.5, 0.1], [0.0, 1.0]])
    r = weighted_sums(s, w)
    assert r[0, 0] == pytest.approx(0.5 + 1.0)
    assert r[0, 1] == pytest.approx(1.0 + 2.0)
    assert np.isnan(r[0, 2])  # source 0 has weight and is not assessable there
    assert r[1, 2] == pytest.approx(30.0)  # source 0 has no weight in row 1


@settings(max_examples=50, deadline=None)
@given(st.integers(1, 5), st.integers(1, 30), st.integers(1, 4), st.integers(0, 2**31 - 1))
def test_weighted_sum_equals_sum_of_single_sources(n_src, n_pt, n_combo, seed):
    """Superposition: the sum over sources equals the sources summed one by one."""
    rng = np.random.default_rng(seed)
    s = rng.random((n_src, n_pt)) * 10
    w = rng.random((n_combo, n_src))
    total = weighted_sums(s, w)
    parts = sum(weighted_sums(s[i : i + 1], w[:, i : i + 1]) for i in range(n_src))
    assert np.allclose(total, parts)


def test_governing_takes_the_larger_row_and_keeps_nan():
    v = np.array([[1.0, 3.0, np.nan], [2.0, 1.0, 5.0]])
    best, which = governing(v, [0, 1])
    assert best[0] == 2.0 and which[0] == 1
    assert best[1] == 3.0 and which[1] == 0
    assert np.isnan(best[2])


def test_outline_samples_include_the_vertices_and_are_at_most_a_cell_apart():
    from siteexposure.engine.grid import outline_points

    outline = np.array([[0, 0], [2.5, 0], [2.5, 0.3], [0, 0.3]], float)
    pts = outline_points(outline, 1.0)
    assert len(pts) == 3 + 1 + 3 + 1  # ceil(2.5) per long edge, one per short edge
    for v in outline:
        assert np.any(np.all(np.isclose(pts, v), axis=1))
    ring = np.vstack([pts, pts[:1]])
    assert np.all(np.hypot(*np.diff(ring, axis=0).T) <= 1.0 + 1e-12)


def test_a_narrow_arm_gets_a_judged_point_in_every_cell_it_covers():
    """The 0.9 m arm of an L (north 0.55-1.45 m) at a 1 m grid holds no cell centre; each of
    the cells it covers holds a sample inside the area, and all of them are evaluated."""
    import shapely

    outline = [[0, 0.55], [10, 0.55], [10, 1.45], [1.45, 1.45], [1.45, 10], [0, 10]]
    g = build_grid(_area(outline), 1.0)
    poly = shapely.Polygon(outline)
    assert shapely.intersects_xy(poly, g.samples_en[:, 0], g.samples_en[:, 1]).all()
    for k in range(2, 10):  # the arm's cells east of the leg, rows 0-1 and 1-2
        for lo in (0.0, 1.0):
            in_cell = ((g.samples_en[:, 0] > k) & (g.samples_en[:, 0] < k + 1)
                       & (g.samples_en[:, 1] > lo) & (g.samples_en[:, 1] < lo + 1))
            assert in_cell.any(), (k, lo)
            i = int(np.argmin(np.abs(g.east_m - (k + 0.5))))
            j = int(np.argmin(np.abs(g.north_m - (lo + 0.5))))
            assert g.evaluate[j, i] and not g.inside[j, i]


def test_an_outline_without_surface_gets_no_samples():
    g = build_grid(_area([[0, 0], [1, 0], [2, 0]]), 0.5)
    assert g.samples_en.shape == (0, 2) and not g.inside.any()


def test_part_cells_of_a_many_vertex_outline_equal_the_direct_intersection():
    """The k-d cutting of the area in engine.grid finds the same cells covered in part, with
    the same points, as intersecting every cell square with the whole outline (shapely)."""
    import shapely

    t = np.linspace(0.0, 2.0 * np.pi, 3000, endpoint=False)
    r = 6.0 + 0.8 * np.sin(17 * t)
    outline = np.column_stack([r * np.cos(t), r * np.sin(t)])
    res = 0.3
    g = build_grid(_area(outline), res)
    poly = shapely.Polygon(outline)
    ee, nn = np.meshgrid(g.east_m, g.north_m)
    boxes = shapely.box(ee - res / 2, nn - res / 2, ee + res / 2, nn + res / 2)
    area = shapely.area(shapely.intersection(poly, boxes))
    expected = (area > 1e-9 * res * res) & ~g.inside
    from siteexposure.engine.grid import outline_points

    reps = g.samples_en[len(outline_points(outline, res)):]
    assert len(reps) == int(expected.sum()) > 100
    jj, ii = np.nonzero(expected)  # row by row, as the grid
    assert np.all(np.abs(reps[:, 0] - g.east_m[ii]) <= res / 2 + 1e-12)
    assert np.all(np.abs(reps[:, 1] - g.north_m[jj]) <= res / 2 + 1e-12)
    assert shapely.intersects_xy(poly, reps[:, 0], reps[:, 1]).all()
