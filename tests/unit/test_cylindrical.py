"""Unit tests of siteexposure.physics.cylindrical (OET-65 cylindrical model and its join)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.errors import InputError
from siteexposure.physics import cylindrical as cyl
from siteexposure.physics.farfield import far_field_power_density_w_m2
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.radiator import Radiator


def _panel(hpbw_h=65.0, front_to_back_db=30.0):
    """3GPP TR 38.901 Table 7.3-1 form with whole-panel parameters (the package's model)."""
    return parametric_pattern(
        {
            "model": "3gpp-panel",
            "gain_dbi": 17.0,
            "hpbw_h_deg": hpbw_h,
            "hpbw_v_deg": 7.0,
            "front_to_back_db": front_to_back_db,
        }
    )


def _omni(gain_dbi=10.0):
    """Rec. ITU-R F.1336-5 omnidirectional pattern (the package's model)."""
    return parametric_pattern({"model": "itu-f1336-omni", "gain_dbi": gain_dbi})


H = 1.4
F_HZ = 1950e6


def _rad(pattern=None, power_w=80.0, h=H, **kw):
    kw.setdefault("reflection_factor", 1.0)
    return Radiator(
        np.zeros(3),
        0.0,
        0.0,
        0.0,
        F_HZ,
        power_w,
        pattern or _panel(),
        aperture_height_m=h,
        aperture_width_m=0.3,
        **kw,
    )


def _boresight(rho, z=0.0):
    rho = np.atleast_1d(np.asarray(rho, dtype=float))
    return np.stack([np.zeros_like(rho), rho, np.full_like(rho, z)], axis=-1)  # north


def test_omni_and_sector_formulas():
    """OET-65 Ed. 97-01 Sec. 2: omni S = P/(2 pi R h); sector S = (180/theta_BW) P/(pi R h),
    which for theta_BW = 360 is the omni form (equation numbers from memory)."""
    s_omni = cyl.cylindrical_power_density_w_m2(80.0, 3.0, 1.4)
    assert s_omni == pytest.approx(80.0 / (2 * np.pi * 3.0 * 1.4), rel=1e-12)
    s_sec = cyl.cylindrical_power_density_w_m2(80.0, 3.0, 1.4, 65.0)
    assert s_sec == pytest.approx(180.0 / 65.0 * 80.0 / (np.pi * 3.0 * 1.4), rel=1e-12)
    assert s_sec / s_omni == pytest.approx(360.0 / 65.0)


def test_crossover_is_where_the_two_formulas_agree():
    g, bw = 10**1.7, 65.0
    r_c = cyl.crossover_distance_m(g, H, bw)
    assert cyl.cylindrical_power_density_w_m2(1.0, r_c, H, bw) == pytest.approx(
        far_field_power_density_w_m2(1.0, g, r_c), rel=1e-12
    )
    assert cyl.crossover_distance_m(10.0, 2.0) == pytest.approx(10.0)  # omni: G h / 2


def test_hpbw_measured_from_a_3gpp_pattern():
    """The 3GPP form is 3.000 dB down at phi = +-theta_3dB/2 (TR 38.901 Table 7.3-1), so its
    half-power (3.0103 dB) width is theta_3dB sqrt(10 log10(2) / 3)."""
    k = np.sqrt(10 * np.log10(2.0) / 3.0)
    assert cyl.horizontal_hpbw_deg(_panel(hpbw_h=65.0)) == pytest.approx(65.0 * k, abs=0.01)
    assert cyl.horizontal_hpbw_deg(_panel(hpbw_h=33.0)) == pytest.approx(33.0 * k, abs=0.01)
    assert cyl.horizontal_hpbw_deg(_omni()) == 360.0
    assert cyl.peak_elevation_rad(_panel()) == pytest.approx(0.0, abs=1e-9)


def test_omni_power_through_the_cylinder_wall_is_the_input_power():
    """Inside R_c the omni model carries exactly P through the lateral surface 2 pi R h
    (the premise of the OET-65 cylindrical model)."""
    pat = _omni(10.0)
    rad = _rad(pat, power_w=80.0, h=3.0)
    r = 2.0
    assert r < cyl.crossover_distance_m(10.0, 3.0)
    az = np.linspace(0, 2 * np.pi, 72, endpoint=False)
    z = (np.arange(30) + 0.5) / 30 * 3.0 - 1.5
    A, Z = np.meshgrid(az, z, indexing="ij")
    pts = np.stack([r * np.sin(A), r * np.cos(A), Z], axis=-1).reshape(-1, 3)
    s = cyl.cylindrical_power_density(rad, pts)
    total = s.sum() * (2 * np.pi * r / 72) * (3.0 / 30)
    assert total == pytest.approx(80.0, rel=1e-9)


def test_near_field_falls_as_one_over_r_then_joins_the_far_field():
    rad = _rad()
    r_c = float(cyl.crossover_distance_m(10**1.7, H, cyl.horizontal_hpbw_deg(rad.pattern)))
    s = cyl.cylindrical_power_density(rad, _boresight([0.2 * r_c, 0.4 * r_c]))
    assert s[0] / s[1] == pytest.approx(2.0, rel=1e-9)
    s = cyl.cylindrical_power_density(rad, _boresight([2 * r_c, 4 * r_c]))
    assert s[0] / s[1] == pytest.approx(4.0, rel=1e-9)
    # continuous at the crossover and never above either formula on the main beam
    s_in, s_out = cyl.cylindrical_power_density(
        rad, _boresight([r_c * (1 - 1e-9), r_c * (1 + 1e-9)])
    )
    assert s_in == pytest.approx(s_out, rel=1e-6)
    rho = np.geomspace(0.5, 10 * r_c, 50)
    s = cyl.cylindrical_power_density(rad, _boresight(rho))
    s_ff = far_field_power_density_w_m2(80.0, 10**1.7, rho)
    s_cy = cyl.cylindrical_power_density_w_m2(80.0, rho, H, cyl.horizontal_hpbw_deg(rad.pattern))
    np.testing.assert_allclose(s, np.minimum(s_ff, s_cy), rtol=1e-9)


def test_uniform_over_the_aperture_height_and_lower_above_it():
    rad = _rad()
    inside = np.array([[0.0, 2.0, -0.7], [0.0, 2.0, 0.0], [0.0, 2.0, 0.69]])
    s = cyl.cylindrical_power_density(rad, inside)
    np.testing.assert_allclose(s, s[1], rtol=1e-12)
    above = cyl.cylindrical_power_density(rad, np.array([[0, 2.0, z] for z in (1.0, 2.0, 4.0)]))
    assert np.all(above <= s[1]) and np.all(np.diff(above) < 0)


def test_behind_scaled_by_the_front_to_back_ratio():
    rad = _rad(_panel(front_to_back_db=25.0))
    front, back = cyl.cylindrical_power_density(rad, np.array([[0, 2.0, 0.0], [0, -2.0, 0.0]]))
    assert 10 * np.log10(front / back) == pytest.approx(25.0, abs=1e-9)


def test_reflection_factor_scales_near_and_far_alike():
    pts = _boresight([1.0, 100.0])
    s1 = cyl.cylindrical_power_density(_rad(), pts)
    s2 = cyl.cylindrical_power_density(_rad(reflection_factor=2.56), pts)
    np.testing.assert_allclose(s2 / s1, 2.56, rtol=1e-12)


def test_on_the_aperture_axis_is_nan_and_missing_height_raises():
    s = cyl.cylindrical_power_density(_rad(), np.array([[0.0, 0.0, 0.3], [0.0, 0.0, 3.0]]))
    assert np.isnan(s[0]) and np.isfinite(s[1])
    with pytest.raises(InputError, match="aperture height"):
        cyl.cylindrical_power_density(_rad(h=None), np.zeros((1, 3)))


@settings(max_examples=40, deadline=None)
@given(p1=st.floats(1e-3, 1e4), p2=st.floats(1e-3, 1e4), seed=st.integers(0, 2**16))
def test_linear_in_power_and_additive(p1, p2, seed):
    pts = np.random.default_rng(seed).uniform(-30, 30, (32, 3))
    s = [cyl.cylindrical_power_density(_rad(power_w=p), pts) for p in (p1, p2, p1 + p2)]
    np.testing.assert_allclose(s[0] + s[1], s[2], rtol=1e-12)
