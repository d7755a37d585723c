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


@settings(max_examples=20, deadline=None)
@given(st.integers(1, 20), st.integers(1, 100), st.floats(0.05, 3.0), st.integers(0, 2**31 - 1))
def test_kernel_magnetic_field_equals_reference(n_sub, n_pt, lam, seed):
    rng = np.random.default_rng(seed)
    z = np.sort(rng.uniform(-1, 1, n_sub))
    m = rng.normal(size=n_sub) + 1j * rng.normal(size=n_sub)
    rho = rng.uniform(0.05, 20, n_pt)
    za = rng.uniform(-10, 10, n_pt)
    ref_e, ref_h = ak.column_density_reference(rho, za, z, m, lam, with_h=True)
    got_e, got_h = ak.column_density(rho, za, z, m, lam, with_h=True)
    assert np.allclose(got_e, ref_e, rtol=1e-9, atol=0)
    assert np.allclose(got_h, ref_h, rtol=1e-9, atol=0)


def test_magnetic_field_of_one_element_is_the_short_dipole_formula():
    """H_phi = j k I l sin(theta) / (4 pi r) (1 + 1/(j k r)) e^{-jkr} (Balanis 4th ed.
    eq. 4-10c, from memory): at k r = 1 its density is twice the far-field value, and far out
    eta |H|^2 equals |E|^2 / eta (a plane wave)."""
    lam, p = 1.0, 1.5 + 0.5j
    k = 2 * np.pi / lam
    th = np.deg2rad(70.0)
    for r, factor in ((1.0 / k, 2.0), (3000.0, 1.0 + 1.0 / (k * 3000.0) ** 2)):
        s_e, s_h = ak.column_density(np.array([r * np.sin(th)]), np.array([r * np.cos(th)]),
                                     np.array([0.0]), np.array([p]), lam, with_h=True)
        far = ETA0 * (k * abs(p) * np.sin(th) / (4 * np.pi * r)) ** 2 / 2
        assert s_h[0] == np.float64(s_h[0]) and np.isclose(s_h[0], far * factor, rtol=1e-9)
    assert np.isclose(s_e[0], s_h[0], rtol=1e-6)


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


def test_compiled_sine_and_cosine_match_numpy_to_3e_16():
    """The vectorisable sin/cos of the column kernel against numpy's (libm) sin and cos, from
    small phases to SINCOS_MAX_RAD (numpy is the reference library)."""
    rng = np.random.default_rng(11)
    x = np.concatenate([rng.uniform(-4, 4, 4000), rng.uniform(-1e4, 1e4, 4000),
                        rng.uniform(0, 1e6, 4000), rng.uniform(0, ak.SINCOS_MAX_RAD, 4000),
                        np.arange(-8, 9) * (np.pi / 4)])
    got = np.array([ak._sincos(v) for v in x])
    assert np.max(np.abs(got[:, 0] - np.sin(x))) <= 3e-16
    assert np.max(np.abs(got[:, 1] - np.cos(x))) <= 3e-16


def test_kernel_equals_reference_far_out():
    """Phases k R up to ~6e5 rad (30 GHz, 1 km): still the reference to 1e-9. (Farther out
    the two differ by about 1e-16 k R, relative, before interference: the rounding of R
    itself, numpy's hypot against the kernel's sqrt; not the sine and cosine, tested above.)"""
    rng = np.random.default_rng(5)
    z = np.linspace(-0.05, 0.05, 21)
    m = rng.normal(size=21) + 1j * rng.normal(size=21)
    rho = rng.uniform(1e2, 1e3, 500)
    za = rng.uniform(-1e2, 1e2, 500)
    ref = ak.column_density_reference(rho, za, z, m, 0.01)
    assert np.allclose(ak.column_density(rho, za, z, m, 0.01), ref, rtol=1e-9, atol=0)


def test_phases_beyond_the_compiled_range_take_the_reference():
    """k R above SINCOS_MAX_RAD: the numpy reference runs (identical numbers)."""
    lam = 0.01
    rho = np.array([2.0e6, 3.0e6])
    za = np.array([0.0, 10.0])
    z, m = np.array([-0.002, 0.002]), np.array([1.0 + 0j, 0.5 - 0.5j])
    assert not ak.phase_in_range(2 * np.pi / lam, 2.0e6)
    assert np.array_equal(ak.column_density(rho, za, z, m, lam),
                          ak.column_density_reference(rho, za, z, m, lam))


def test_array_model_works_when_numba_cannot_be_imported():
    """A fresh interpreter in which ``import numba`` fails: the array model still gives this
    process's numbers (compiled here when numba is installed) to 1e-9."""
    import json
    import subprocess
    import sys
    from pathlib import Path

    code = """
import sys, json
sys.modules["numba"] = None  # makes `import numba` raise ImportError
import numpy as np
from pathlib import Path
from siteexposure.physics import array_kernel as ak
from siteexposure.physics.array import ArraySynthesis
from siteexposure.physics.radiator import Radiator
from siteexposure.readers.pattern_csv import read_pattern_csv
assert not ak.fast_available()
pat = read_pattern_csv(Path(sys.argv[1]))
rad = Radiator(position_m=np.array([0.0, 0.0, 10.0]), azimuth_deg=80.0, mechanical_tilt_deg=2.0,
               electrical_tilt_deg=pat.electrical_tilt_deg, frequency_hz=1900e6, power_w=40.0,
               pattern=pat, aperture_height_m=1.04, reflection_factor=1.0)
pts = rad.position_m + np.random.default_rng(4).normal(size=(400, 3)) * 5
s, ok = ArraySynthesis.from_radiator(rad).power_density(pts)
print(json.dumps([None if not o else float(v) for v, o in zip(s, ok)]))
"""
    csv = Path(__file__).resolve().parents[1] / "data" / "nec" / "panel_tilt6.csv"
    run = subprocess.run([sys.executable, "-c", code, str(csv)], capture_output=True, text=True,
                         timeout=300)
    assert run.returncode == 0, run.stderr[-2000:]
    got = json.loads(run.stdout.strip().splitlines()[-1])

    from siteexposure.physics.array import ArraySynthesis
    from siteexposure.physics.radiator import Radiator
    from siteexposure.readers.pattern_csv import read_pattern_csv

    pat = read_pattern_csv(csv)
    rad = Radiator(position_m=np.array([0.0, 0.0, 10.0]), azimuth_deg=80.0, mechanical_tilt_deg=2.0,
                   electrical_tilt_deg=pat.electrical_tilt_deg, frequency_hz=1900e6, power_w=40.0,
                   pattern=pat, aperture_height_m=1.04, reflection_factor=1.0)
    pts = rad.position_m + np.random.default_rng(4).normal(size=(400, 3)) * 5
    s, ok = ArraySynthesis.from_radiator(rad).power_density(pts)
    assert [v is not None for v in got] == list(ok)
    sub = np.array([v for v in got if v is not None])
    assert sub.size > 100 and np.allclose(sub, s[ok], rtol=1e-9, atol=0)
