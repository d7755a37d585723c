"""The compiled column sum equals its numpy reference (infinitesimal-dipole fields,
Balanis, Antenna Theory 4th ed. §4.2), with and without numba."""

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.constants import ETA0
from siteexposure.physics import array_kernel as ak


@settings(max_examples=40, deadline=None)
@given(st.integers(1, 30), st.integers(1, 200), st.floats(0.05, 3.0), st.integers(0, 2**31 - 1))
def test_kernel_equals_reference(n_sub, n_pt, lam, seed):
    rng = np.random.default_rng(seed)
    z = np.sort(rng.uniform(-1, 1, n_sub))
    m = rng.normal(size=n_sub) + 1j * rng.normal(size=n_sub)
    rho = rng.uniform(0.05, 20, n_pt)
    za = rng.uniform(-10, 10, n_pt)
    ref = ak.column_density_reference(rho, za, z, m, lam)
    got = ak.column_density(rho, za, z, m, lam)
    assert np.allclose(got, ref, rtol=1e-9, atol=0)


def test_far_field_of_one_element_is_the_short_dipole_formula():
    """|E_t| -> eta k I l sin(theta) / (4 pi r) in the far field (Balanis §4.2.2)."""
    lam, p = 1.0, 2.0 + 0.0j
    k = 2 * np.pi / lam
    r = 2000.0
    th = np.deg2rad([30.0, 60.0, 90.0])
    rho, za = r * np.sin(th), r * np.cos(th)
    s = ak.column_density(rho, za, np.array([0.0]), np.array([p]), lam)
    expected = (ETA0 * k * abs(p) * np.sin(th) / (4 * np.pi * r)) ** 2 / (2 * ETA0)
    assert np.allclose(s, expected, rtol=1e-5)


def test_without_numba_the_reference_runs(monkeypatch):
    monkeypatch.setenv("SITEEXPOSURE_NO_NUMBA", "1")
    assert not ak.fast_available()
    rho, za = np.array([1.0, 2.0]), np.array([0.0, 0.5])
    z, m = np.array([-0.2, 0.2]), np.array([1.0 + 0j, 1.0 + 0j])
    assert np.array_equal(ak.column_density(rho, za, z, m, 0.5), ak.column_density_reference(rho, za, z, m, 0.5))


def test_densities_are_never_negative():
    rng = np.random.default_rng(3)
    s = ak.column_density(rng.uniform(0.01, 5, 500), rng.uniform(-5, 5, 500), np.linspace(-1, 1, 9),
                          rng.normal(size=9) + 1j * rng.normal(size=9), 0.3)
    assert np.all(s >= 0)


def test_fused_array_density_equals_the_numpy_path(monkeypatch):
    """The whole compiled pass (frame, mask, element factor, column sum) against the numpy one."""
    from pathlib import Path

    from siteexposure.physics.array import ArraySynthesis
    from siteexposure.physics.radiator import Radiator
    from siteexposure.readers.pattern_csv import read_pattern_csv

    data = Path(__file__).resolve().parents[1] / "data" / "nec"
    rng = np.random.default_rng(7)
    for name, f_hz, h in (("panel_tilt6", 1900e6, 1.04), ("collinear", 450e6, 1.93)):
        pat = read_pattern_csv(data / f"{name}.csv")
        rad = Radiator(position_m=np.array([1.0, -2.0, 10.0]), azimuth_deg=35.0, mechanical_tilt_deg=3.0,
                       electrical_tilt_deg=pat.electrical_tilt_deg, frequency_hz=f_hz, power_w=50.0,
                       pattern=pat, aperture_height_m=h, reflection_factor=1.0)
        model = ArraySynthesis.from_radiator(rad)
        pts = rad.position_m + rng.normal(size=(3000, 3)) * 6
        monkeypatch.setenv("SITEEXPOSURE_NO_NUMBA", "0")
        s_fast, ok_fast = model.power_density(pts)
        monkeypatch.setenv("SITEEXPOSURE_NO_NUMBA", "1")
        s_ref, ok_ref = model.power_density(pts)
        assert np.array_equal(ok_fast, ok_ref)
        assert np.allclose(s_fast[ok_ref], s_ref[ok_ref], rtol=1e-9, atol=0)
        assert np.all(np.isnan(s_fast[~ok_ref]))
