"""Unit tests of siteexposure.physics.farfield: formulas, scaling laws, field regions."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.special import sici

from siteexposure.constants import C0, DBD_TO_DBI
from siteexposure.physics import farfield as ff
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.radiator import Radiator


def _cin(x: float) -> float:
    """Cin(x) = gamma + ln x - Ci(x) (Balanis, Antenna Theory, 3rd ed., Sec. 4.5; from memory)."""
    return float(np.euler_gamma + np.log(x) - sici(x)[1])


def _panel(gain_dbi=17.0):
    """3GPP TR 38.901 Table 7.3-1 form with whole-panel parameters (the package's model)."""
    return parametric_pattern(
        {"model": "3gpp-panel", "gain_dbi": gain_dbi, "hpbw_h_deg": 65.0, "hpbw_v_deg": 7.0}
    )


def _rad(pattern, power_w=50.0, azimuth=0.0, tilt=0.0, f_hz=900e6, pos=(1.0, 2.0, 30.0), **kw):
    return Radiator(np.array(pos, dtype=float), azimuth, tilt, 0.0, f_hz, power_w, pattern, **kw)


def test_eirp_and_erp_follow_the_dipole_reference():
    """EIRP = P G; ERP = EIRP / 1.64, i.e. 2.15 dB lower (dBi = dBd + 2.15, common practice)."""
    eirp = ff.eirp_w(20.0, 10.0**1.5)
    assert eirp == pytest.approx(20.0 * 10.0**1.5)
    assert 10.0 * np.log10(eirp / ff.erp_w(20.0, 10.0**1.5)) == pytest.approx(2.15, abs=0.005)


def test_far_field_density_inverse_square_and_reflection_forms():
    """OET-65 Ed. 97-01 eq. (3) S = PG/(4 pi R^2); eq. (6) uses 2.56 = 1.6^2, which OET-65
    also writes as 0.64 EIRP / (pi R^2) (equation numbers from memory)."""
    s1 = ff.far_field_power_density_w_m2(100.0, 20.0, 10.0)
    assert s1 == pytest.approx(100.0 * 20.0 / (4.0 * np.pi * 100.0), rel=1e-12)
    s_ground = ff.far_field_power_density_w_m2(100.0, 20.0, 10.0, ff.GROUND_REFLECTION_FACTOR)
    assert s_ground == pytest.approx(0.64 * 2000.0 / (np.pi * 100.0), rel=1e-12)
    assert ff.GROUND_REFLECTION_FACTOR == pytest.approx(1.6**2)
    assert ff.PERFECT_REFLECTION_FACTOR == pytest.approx((1.0 + 1.0) ** 2)
    assert np.isinf(ff.far_field_power_density_w_m2(1.0, 1.0, 0.0))


def test_distance_for_density_inverts_the_density():
    r = ff.far_field_distance_for_density_m(np.array([10.0, 1e4]), 2.0, 2.56)
    s = ff.far_field_power_density_w_m2(1.0, np.array([10.0, 1e4]), r, 2.56)
    np.testing.assert_allclose(s, 2.0, rtol=1e-12)


def test_field_region_criteria():
    """Fraunhofer distance 2D^2/lambda (Balanis Sec. 2.2.4; NAWCWD TP 8347 eq. [2]);
    lambda = 10 m at 30 MHz (issue notes, common practice)."""
    lam = C0 / 30e6
    assert lam == pytest.approx(10.0, rel=1e-3)
    # half-wave dipole at 30 MHz, D = 5 m: 2D^2/lambda = 5 m < 5D = 25 m < 3 lambda = 30 m
    assert ff.fraunhofer_distance_m(5.0, lam) == pytest.approx(2 * 25 / lam)
    assert ff.far_field_boundary_m(5.0, lam) == pytest.approx(3 * lam)
    # a 3 m dish at 12 GHz is governed by 2D^2/lambda
    lam12 = C0 / 12e9
    assert ff.far_field_boundary_m(3.0, lam12) == pytest.approx(18.0 / lam12)


def test_reactive_radius_switches_between_its_two_terms():
    """max(lambda/2pi, 0.62 sqrt(D^3/lambda)) (Balanis Sec. 2.2.4): the two terms are equal
    at D = (lambda^2/(2 pi 0.62))^(2/3) lambda^(1/3)."""
    lam = 0.5
    assert ff.reactive_near_field_radius_m(0.0, lam) == pytest.approx(lam / (2 * np.pi))
    assert ff.reactive_near_field_radius_m(4.0, lam) == pytest.approx(0.62 * np.sqrt(64 / lam))
    d_eq = (lam / (2 * np.pi * 0.62)) ** (2 / 3) * lam ** (1 / 3)
    assert ff.reactive_near_field_radius_m(d_eq, lam) == pytest.approx(lam / (2 * np.pi))


def test_dipole_pattern_radiates_exactly_the_input_power():
    """Integrating P G/(4 pi r^2) over a sphere returns P (power conservation); the dipole
    peak gain is 4 / Cin(2 pi) = 1.643, 2.15 dBi (Balanis 3rd ed. Sec. 4.6; common practice)."""
    dip = parametric_pattern({"model": "half-wave-dipole"})
    assert dip.peak_gain_dbi == pytest.approx(DBD_TO_DBI, abs=0.001)
    assert 10 * np.log10(4.0 / _cin(2.0 * np.pi)) == pytest.approx(dip.peak_gain_dbi, abs=0.001)
    rad = _rad(dip, power_w=7.0, pos=(0.0, 0.0, 0.0))
    n_el, n_az, r = 96, 16, 25.0
    x, w = np.polynomial.legendre.leggauss(n_el)
    el = 0.5 * np.pi * x
    az = np.arange(n_az) * 2 * np.pi / n_az
    E, A = np.meshgrid(el, az, indexing="ij")
    pts = r * np.stack([np.cos(E) * np.sin(A), np.cos(E) * np.cos(A), np.sin(E)], axis=-1)
    s = ff.farfield_power_density(rad, pts.reshape(-1, 3)).reshape(E.shape)
    total = np.sum(s * r * r * np.cos(E) * (0.5 * np.pi * w)[:, None]) * 2 * np.pi / n_az
    assert total == pytest.approx(7.0, rel=1e-4)


def test_peak_follows_azimuth_and_mechanical_tilt():
    """Boresight azimuth is clockwise from north; a downtilt t puts the peak at depression t."""
    rad = _rad(_panel(), azimuth=90.0, tilt=6.0, pos=(0.0, 0.0, 0.0))
    dep = np.deg2rad(np.linspace(0.0, 12.0, 121))
    pts = 40.0 * np.stack([np.cos(dep), np.zeros_like(dep), -np.sin(dep)], axis=-1)  # due east
    s = ff.farfield_power_density(rad, pts)
    assert np.rad2deg(dep[np.argmax(s)]) == pytest.approx(6.0, abs=0.1)
    assert s.max() == pytest.approx(50.0 * 10**1.7 / (4 * np.pi * 1600.0), rel=1e-9)
    north = ff.farfield_power_density(rad, np.array([[0.0, 40.0, 0.0]]))[0]
    assert north < 1e-2 * s.max()


_unit = st.tuples(st.floats(-1, 1), st.floats(-1, 1), st.floats(-1, 1)).filter(
    lambda v: 0.1 < np.linalg.norm(v)
)


@settings(max_examples=60, deadline=None)
@given(
    direction=_unit,
    r=st.floats(1.0, 1e3),
    k=st.floats(1.1, 20.0),
    az=st.floats(0, 360),
    tilt=st.floats(-20, 20),
)
def test_inverse_square_along_any_ray(direction, r, k, az, tilt):
    """S(k r) = S(r) / k^2 along a ray from the radiation centre (far-field law)."""
    rad = _rad(_panel(), azimuth=az, tilt=tilt)
    u = np.asarray(direction) / np.linalg.norm(direction)
    pts = rad.position_m + np.array([r * u, k * r * u])
    s = ff.farfield_power_density(rad, pts)
    assert s[1] == pytest.approx(s[0] / k**2, rel=1e-9)


@settings(max_examples=40, deadline=None)
@given(p1=st.floats(1e-3, 1e4), p2=st.floats(1e-3, 1e4), seed=st.integers(0, 2**16))
def test_linear_in_power_and_additive(p1, p2, seed):
    """Two co-located transmitters add: S(P1) + S(P2) = S(P1 + P2) (superposition of
    incoherent powers)."""
    pts = np.random.default_rng(seed).uniform(-50, 50, (32, 3))
    s = [ff.farfield_power_density(_rad(_panel(), power_w=p), pts) for p in (p1, p2, p1 + p2)]
    np.testing.assert_allclose(s[0] + s[1], s[2], rtol=1e-12)


@settings(max_examples=40, deadline=None)
@given(turn=st.floats(0, 360), seed=st.integers(0, 2**16))
def test_rotating_antenna_and_points_together_changes_nothing(turn, seed):
    pts = np.random.default_rng(seed).uniform(-50, 50, (16, 3))
    rad0 = _rad(_panel(), azimuth=20.0, tilt=4.0, pos=(0.0, 0.0, 0.0))
    rad1 = _rad(_panel(), azimuth=20.0 + turn, tilt=4.0, pos=(0.0, 0.0, 0.0))
    t = np.deg2rad(turn)  # clockwise seen from above
    rot = np.array([[np.cos(t), np.sin(t), 0.0], [-np.sin(t), np.cos(t), 0.0], [0.0, 0.0, 1.0]])
    np.testing.assert_allclose(
        ff.farfield_power_density(rad1, pts @ rot.T),
        ff.farfield_power_density(rad0, pts),
        rtol=1e-9,
    )
