"""Unit tests of siteexposure.physics.fastpath: the fused far-field kernel and its reference.

The kernel must give the quantity of the package's own far-field model
(:func:`siteexposure.physics.sources.power_density` with the far-field model, summed as
:func:`siteexposure.engine.evaluate.weighted_sums` sums it) to 1e-9 relative, with the
same NaN flags within the stand-off of the body, with or without numba. The arctangent of
the kernel is checked against numpy's ``arctan2`` (the C library's, ISO C Annex F).
Every site and pattern below is random or invented for the test.
"""

from __future__ import annotations

import math
import subprocess
import sys

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from siteexposure.engine.evaluate import Source, densities
from siteexposure.errors import InputError, PatternError
from siteexposure.physics import fastpath
from siteexposure.physics.exposure import weighted_sums
from siteexposure.physics.body import to_antenna_frame_points
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.radiator import Radiator
from siteexposure.physics.regions import standoff_m
from siteexposure.physics.sources import choose_model
from siteexposure.physics.synthesis import TablePattern
from siteexposure.readers.pattern_csv import read_pattern_csv, write_pattern_csv

REL = 1e-9
ACCELERATED = fastpath._numba is not None  # the compiled kernel exists in this environment


def _random_pattern(rng, method: str, h_step: float, v_step: float) -> TablePattern:
    """Random but valid cuts: the crossings agree within 0.9 dB (not exactly, as in real
    files), the peak is the data's maximum."""
    ha = np.arange(0.0, 360.0, h_step)
    va = np.arange(-90.0, 90.0 + 0.5 * v_step, v_step)
    peak = rng.uniform(0.0, 20.0)
    h = peak - np.cumsum(rng.uniform(-1.5, 1.5, ha.size)).clip(-3, 30) - rng.uniform(0, 3)
    vf = peak - rng.uniform(0.0, 30.0, va.size)
    vb = vf - rng.uniform(0.0, 25.0, va.size)
    i0 = int(np.argmin(np.abs(va)))
    vf[i0] = h[0] + rng.uniform(-0.9, 0.9)
    vb[i0] = np.interp(180.0, ha, h, period=360.0) + rng.uniform(-0.9, 0.9)
    vb[0], vb[-1] = vf[0] + rng.uniform(-0.9, 0.9), vf[-1] + rng.uniform(-0.9, 0.9)
    top = max(h.max(), vf.max(), vb.max())
    return TablePattern(ha, h, va, vf, va, vb, peak_gain_dbi=top, method=method)


def _engine_reference(rads, pts, w):
    """The engine's existing path: per-source far-field densities, then the NaN-aware sum."""
    srcs = [Source(f"s{i}", r, choose_model(r, "far-field")) for i, r in enumerate(rads)]
    return weighted_sums(densities(srcs, pts), w), srcs


def _assert_same(got, want, rel=REL):
    np.testing.assert_array_equal(np.isnan(got), np.isnan(want))
    ok = np.isfinite(want)
    np.testing.assert_allclose(got[ok], want[ok], rtol=rel, atol=0.0)


# -- the arctangent --------------------------------------------------------------------------


def test_atan2_kernel_matches_numpy_on_random_and_special_values():
    """Reference: numpy.arctan2 (C99 atan2, ISO/IEC 9899:2018 Annex F.10.1.4 signed zeros)."""
    rng = np.random.default_rng(7)
    y = np.concatenate([rng.normal(size=2000) * 10.0 ** rng.integers(-6, 6, 2000),
                        [0.0, -0.0, 0.0, -0.0, 1.0, -1.0, 0.0, -0.0, 1.0, 1.0, 3.0]])
    x = np.concatenate([rng.normal(size=2000) * 10.0 ** rng.integers(-6, 6, 2000),
                        [0.0, 0.0, -0.0, -0.0, 0.0, -0.0, -2.0, -2.0, 1.0, -1.0, 3.0]])
    got = np.array([fastpath.atan2_kernel(a, b) for a, b in zip(y, x, strict=True)])
    want = np.arctan2(y, x)
    np.testing.assert_allclose(got, want, rtol=0.0, atol=4e-15)
    np.testing.assert_array_equal(np.signbit(got), np.signbit(want))


# -- fast path == plain numpy reference, random sites ------------------------------------------


@st.composite
def _sites(draw):
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    n_src = draw(st.integers(1, 5))
    rads = []
    for _ in range(n_src):
        pat = _random_pattern(rng, draw(st.sampled_from(["additive", "weighted-bilinear"])),
                              draw(st.sampled_from([1.0, 2.0, 0.5, 5.0])),
                              draw(st.sampled_from([1.0, 0.5, 2.0, 0.25])))
        az = draw(st.one_of(st.sampled_from([0.0, 90.0, 180.0, 270.0]),
                            st.floats(0.0, 360.0, allow_nan=False)))
        tilt = draw(st.one_of(st.just(0.0), st.floats(-10.0, 15.0, allow_nan=False)))
        size = draw(st.sampled_from([None, 0.3, 1.2, 2.5]))
        rads.append(Radiator(np.round(rng.uniform(-20, 20, 3), 1), az, tilt, 0.0,
                             rng.uniform(1e8, 6e9), rng.uniform(0.0, 200.0), pat,
                             aperture_height_m=size,
                             reflection_factor=float(rng.choice([1.0, 2.56, 4.0]))))
    n_pt = draw(st.integers(1, 300))
    pts = rng.uniform(-30, 30, (n_pt, 3))
    # points near and inside the stand-off of a body, and straight above/below and level
    # with an antenna (signed zeros in the antenna frame)
    k = rng.integers(0, n_src)
    rr = standoff_m(rads[k].wavelength_m)
    u = rng.normal(size=(6, 3))
    u /= np.linalg.norm(u, axis=1, keepdims=True)
    tip = rads[k].position_m + np.array([0.0, 0.0, 0.5 * (rads[k].aperture_height_m or 0.0)])
    near = tip + np.abs(u) * rr * np.array([0.3, 0.8, 0.99, 1.01, 1.5, 3.0])[:, None]
    special = rads[k].position_m + np.array([[0, 0, 3.0], [0, 0, -2.0], [4.0, 0, 0],
                                             [0, -5.0, 0], [-3.0, 0, 0], [0, 0, 0]])
    pts = np.concatenate([pts, near, special])
    n_c = draw(st.integers(1, 4))
    w = rng.uniform(0.0, 5.0, (n_c, n_src)) * (rng.random((n_c, n_src)) > 0.2)
    return rads, pts, w, k, rr


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_sites())
def test_fast_path_agrees_with_numpy_reference_on_random_sites(site):
    rads, pts, w, k, rr = site
    got = fastpath.far_field_ratio_sums(rads, pts, w, accelerate=ACCELERATED or None)
    want = fastpath.far_field_ratio_sums_reference(rads, pts, w)
    _assert_same(got, want)
    # the stand-off flag travels: within lambda/2pi of the body of source k the sums that
    # weigh source k are NaN, in both
    ant = to_antenna_frame_points(pts, rads[k].position_m, rads[k].azimuth_deg,
                                  rads[k].mechanical_tilt_deg)
    inside = rads[k].body.distance_m(ant) < rr * (1 - 1e-6)
    weighted = w[:, k] != 0
    assert np.all(np.isnan(got[np.ix_(weighted, inside)]))
    assert np.all(np.isnan(want[np.ix_(weighted, inside)]))


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_sites())
def test_fast_path_equals_the_engine_far_field_path(site):
    rads, pts, w, _, _ = site
    # leave out points within 1e-9 of a stand-off: there the engine's frame change and the
    # kernel's fused sums may fall on either side
    keep = np.ones(len(pts), dtype=bool)
    for r in rads:
        rr = standoff_m(r.wavelength_m)
        ant = to_antenna_frame_points(pts, r.position_m, r.azimuth_deg, r.mechanical_tilt_deg)
        keep &= np.abs(r.body.distance_m(ant) / rr - 1.0) > 1e-6
    pts = pts[keep]
    want, srcs = _engine_reference(rads, pts, w)
    _assert_same(fastpath.far_field_ratio_sums(rads, pts, w), want)
    _assert_same(fastpath.ratio_sums(srcs, pts, w), want)


def test_fast_path_equals_engine_with_pattern_files_and_mixed_sources(tmp_path):
    """Pattern files written and read back; a parametric source and an array-model source
    take the per-source path; the sum still equals the engine's."""
    rng = np.random.default_rng(3)
    files = []
    for i, method in enumerate(["additive", "weighted-bilinear"]):
        p = _random_pattern(rng, method, 1.0, 0.5)
        path = tmp_path / f"invented_{i}.csv"
        write_pattern_csv(path, peak_gain_dbi=p.peak_gain_dbi, h_angle_deg=p.h_angle_deg,
                          h_gain_dbi=p.h_gain_dbi, v_front_elev_deg=p.v_front_elev_deg,
                          v_front_gain_dbi=p.v_front_gain_dbi, v_back_elev_deg=p.v_back_elev_deg,
                          v_back_gain_dbi=p.v_back_gain_dbi)
        files.append(read_pattern_csv(path, method=method))
    panel = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0,
                                "hpbw_v_deg": 7.0})
    rads = [Radiator(np.array([0.0, 0.0, 25.0]), 30.0, 2.0, 0.0, 1.95e9, 120.0, files[0]),
            Radiator(np.array([8.0, 3.0, 24.0]), 200.0, 0.0, 0.0, 7.4e8, 60.0, files[1],
                     aperture_height_m=1.8, reflection_factor=2.56),
            Radiator(np.array([-6.0, 9.0, 26.0]), 310.0, 4.0, 0.0, 2.6e9, 80.0, panel)]
    xs, ys, zs = np.meshgrid(np.linspace(-20, 20, 31), np.linspace(-20, 20, 29),
                             np.linspace(20.0, 27.0, 8), indexing="ij")
    pts = np.column_stack([xs.ravel(), ys.ravel(), zs.ravel()])
    w = rng.uniform(0.1, 2.0, (5, 3))
    want, srcs = _engine_reference(rads, pts, w)
    assert fastpath.fast_eligible(rads[0]) and not fastpath.fast_eligible(rads[2])
    _assert_same(fastpath.ratio_sums(srcs, pts, w), want)


def test_flat_pattern_gives_the_closed_form_far_field_density():
    """OET Bulletin 65, Ed. 97-01, Section 2, eq. (3) (equation number from memory):
    S = P G / (4 pi R^2); a 0 dBi table pattern and F = 2.56 scale it by F (eq. 6)."""
    flat = TablePattern([0, 90, 180, 270], [0, 0, 0, 0], [-90, 0, 90], [0, 0, 0],
                        [-90, 0, 90], [0, 0, 0], peak_gain_dbi=0.0)
    rad = Radiator(np.array([1.0, 2.0, 3.0]), 45.0, 5.0, 0.0, 9e8, 50.0, flat,
                   reflection_factor=2.56)
    pts = np.array([[11.0, 2.0, 3.0], [1.0, -18.0, 3.0], [1.0, 2.0, 43.0]])
    r = np.linalg.norm(pts - rad.position_m, axis=1)
    expected = 50.0 * 2.56 / (4.0 * math.pi * r**2)
    got = fastpath.far_field_ratio_sums([rad], pts, np.array([[1.0]]))[0]
    np.testing.assert_allclose(got, expected, rtol=1e-12)


# -- without numba ---------------------------------------------------------------------------


def test_no_numba_env_var_uses_the_reference_and_stays_correct(monkeypatch):
    rng = np.random.default_rng(11)
    rads = [Radiator(rng.uniform(-5, 5, 3), 70.0, 3.0, 0.0, 1.8e9, 40.0,
                     _random_pattern(rng, "additive", 1.0, 1.0)) for _ in range(3)]
    pts = rng.uniform(-15, 15, (200, 3))
    w = rng.uniform(0.0, 1.0, (2, 3))
    want, srcs = _engine_reference(rads, pts, w)
    monkeypatch.setenv(fastpath.NO_NUMBA_ENV, "1")
    assert not fastpath.fast_available()

    def must_not_run(*args):
        raise AssertionError("the compiled kernel ran although SITEEXPOSURE_NO_NUMBA=1")

    monkeypatch.setattr(fastpath, "_ratio_kernel", must_not_run)
    _assert_same(fastpath.far_field_ratio_sums(rads, pts, w), want)
    _assert_same(fastpath.ratio_sums(srcs, pts, w), want)
    monkeypatch.setenv(fastpath.NO_NUMBA_ENV, "0")
    assert fastpath.fast_available() == ACCELERATED


def test_module_works_when_numba_cannot_be_imported():
    """A fresh interpreter in which ``import numba`` fails: the module imports, reports the
    accelerator missing and still gives the engine's numbers."""
    code = """
import sys
sys.modules["numba"] = None  # makes `import numba` raise ImportError
import numpy as np
from siteexposure.physics import fastpath
from siteexposure.physics.radiator import Radiator
from siteexposure.physics.sources import choose_model
from siteexposure.physics.synthesis import TablePattern
from siteexposure.engine.evaluate import Source, densities
from siteexposure.physics.exposure import weighted_sums
assert fastpath._numba is None and not fastpath.fast_available()
p = TablePattern([0, 90, 180, 270], [10, 2, -5, 2], [-90, 0, 90], [-8, 10, -8],
                 [-90, 0, 90], [-8, -5, -8], peak_gain_dbi=10.0)
rad = Radiator(np.array([0.0, 0.0, 10.0]), 30.0, 2.0, 0.0, 1.9e9, 20.0, p)
pts = np.random.default_rng(0).uniform(-10, 10, (50, 3))
w = np.array([[1.0], [0.5]])
want = weighted_sums(densities([Source("a", rad, choose_model(rad, "far-field"))], pts), w)
got = fastpath.far_field_ratio_sums([rad], pts, w)
assert np.allclose(got, want, rtol=1e-12, equal_nan=True)
try:
    fastpath.far_field_ratio_sums([rad], pts, w, accelerate=True)
except Exception as exc:
    assert type(exc).__name__ == "InputError", exc
else:
    raise AssertionError("accelerate=True without numba did not raise")
print("ok")
"""
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=120)
    assert run.returncode == 0, run.stderr
    assert run.stdout.strip() == "ok"


# -- errors and eligibility ----------------------------------------------------------------------


def test_errors_name_the_problem():
    panel = parametric_pattern({"model": "3gpp-panel", "gain_dbi": 17.0, "hpbw_h_deg": 65.0,
                                "hpbw_v_deg": 7.0})
    rad = Radiator(np.zeros(3), 0.0, 0.0, 0.0, 1e9, 1.0, panel)
    with pytest.raises(PatternError, match="source 0 .*TablePattern"):
        fastpath.far_field_ratio_sums([rad], np.ones((2, 3)), np.ones((1, 1)))
    flat = TablePattern([0, 180], [0, 0], [-90, 0, 90], [0, 0, 0], [-90, 0, 90], [0, 0, 0],
                        peak_gain_dbi=0.0)
    ok = Radiator(np.zeros(3), 0.0, 0.0, 0.0, 1e9, 1.0, flat)
    with pytest.raises(InputError, match=r"weights: array of shape \(1, 2\)"):
        fastpath.far_field_ratio_sums([ok], np.ones((2, 3)), np.ones((1, 2)))
    with pytest.raises(InputError, match="field points"):
        fastpath.far_field_ratio_sums([ok], np.ones((2, 2)), np.ones((1, 1)))


def test_irregular_samples_take_the_per_source_path_with_the_same_result():
    """Cut angles on no regular grid of at most MAX_CELLS cells: not eligible, same sums."""
    ha = np.array([0.0, 33.3331, 90.0, 180.0, 270.0, 300.07])
    pat = TablePattern(ha, [12, 9, 3, -4, 3, 8], [-90, 0, 90], [-6, 12, -6], [-90, 0, 90],
                       [-6, -4, -6], peak_gain_dbi=12.0)
    rad = Radiator(np.array([0.0, 0.0, 5.0]), 15.0, 0.0, 0.0, 2e9, 30.0, pat)
    assert not fastpath.fast_eligible(rad)
    pts = np.random.default_rng(5).uniform(-10, 10, (40, 3))
    w = np.array([[2.0]])
    want, srcs = _engine_reference([rad], pts, w)
    _assert_same(fastpath.ratio_sums(srcs, pts, w), want)


@pytest.mark.parametrize("no_numba", [False, True])
def test_reduced_sums_equal_the_engine_column_ratios(monkeypatch, no_numba):
    """Averaging lines (mean) and peaks (max), with lines through a stand-off."""
    from siteexposure.engine.evaluate import column_ratios

    if no_numba:
        monkeypatch.setenv(fastpath.NO_NUMBA_ENV, "1")
    rng = np.random.default_rng(21)
    rads = [Radiator(np.array([x, y, 21.0 + z]), az, tilt, 0.0, f, p,
                     _random_pattern(rng, m, 1.0, 0.5), aperture_height_m=1.3)
            for x, y, z, az, tilt, f, p, m in [
                (2.0, 3.0, 0.5, 20.0, 0.0, 1.9e9, 80.0, "additive"),
                (-4.0, 1.0, 1.0, 140.0, 3.0, 7.4e8, 60.0, "weighted-bilinear"),
                (1.0, -5.0, 0.0, 260.0, 0.0, 2.6e9, 90.0, "additive")]]
    srcs = [Source(f"s{i}", r, choose_model(r, "far-field")) for i, r in enumerate(rads)]
    cols = np.concatenate([rng.uniform(-12, 12, (300, 2)), [[2.0, 3.0], [-4.0, 1.0]]])
    heights = np.linspace(0.0, 2.0, 10)
    w = rng.uniform(0.1, 3.0, (4, 3))
    w[1, 0] = 0.0
    reducers = ["mean", "max", "mean", "max"]
    want = column_ratios(srcs, cols, 20.0, heights, w, reducers)
    assert np.isnan(want).any()  # the lines through an antenna cannot be assessed
    pts = np.empty((len(cols), len(heights), 3))
    pts[..., :2] = cols[:, None, :]
    pts[..., 2] = 20.0 + heights[None, :]
    got = fastpath.reduced_ratio_sums(srcs, pts.reshape(-1, 3), w, len(heights),
                                      np.array([r == "max" for r in reducers]))
    _assert_same(got, want)
    with pytest.raises(InputError, match="averaging lines"):
        fastpath.reduced_ratio_sums(srcs, pts.reshape(-1, 3)[:-1], w, len(heights),
                                    np.zeros(4, dtype=bool))


def test_exactly_behind_an_antenna_at_azimuth_360_agrees_for_weighted_bilinear():
    """Regression: cuts that disagree at a crossing made the weighted bilinear rule jump there,
    and an azimuth of 360 deg put rounding on either side; both paths now take the cut within
    synthesis.PLANE_TOLERANCE_DEG of a cut plane."""
    from siteexposure.physics import synthesis

    assert fastpath._PLANE_TOL == synthesis.PLANE_TOLERANCE_DEG
    rng = np.random.default_rng(11)
    pat = _random_pattern(rng, "weighted-bilinear", 2.0, 1.0)
    rad = Radiator(np.array([0.7, -4.2, 11.6]), 360.0, 0.0, 0.0, 2e9, 50.0, pat)
    pts = rad.position_m + np.array([[0.0, -5.0, 0.0], [0.0, 5.0, 0.0], [0.0, 0.0, 3.0]])
    w = np.array([[1.0]])
    _assert_same(fastpath.far_field_ratio_sums([rad], pts, w),
                 fastpath.far_field_ratio_sums_reference([rad], pts, w))
