"""Unit tests of siteexposure.physics.aperture (OET-65 dish model and the closed form)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from siteexposure.constants import C0
from siteexposure.errors import InputError
from siteexposure.physics import aperture as ap
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.radiator import Radiator


def _f699(gain_dbi, d_m):
    """Rec. ITU-R F.699-8 reference dish pattern (the package's ``parabolic`` model)."""
    return parametric_pattern(
        {"model": "parabolic", "gain_dbi": gain_dbi, "diameter_m": d_m}, frequency_mhz=F_HZ / 1e6
    )


F_HZ = 18e9
LAM = C0 / F_HZ
D = 1.8  # D/lambda = 108, inside the F.699 range D/lambda > 100


def _dish(gain_dbi=48.0, power_w=1.0, d=D, **kw):
    return Radiator(
        np.zeros(3), 0.0, 0.0, 0.0, F_HZ, power_w, _f699(gain_dbi, d), diameter_m=d, **kw
    )


def _axis(x):
    x = np.atleast_1d(np.asarray(x, dtype=float))
    return np.stack([np.zeros_like(x), x, np.zeros_like(x)], axis=-1)  # boresight north


def test_efficiency_and_region_bounds():
    """OET-65 Ed. 97-01 Sec. 2: G = eta (pi D/lambda)^2, R_nf = D^2/(4 lambda),
    R_ff = 0.6 D^2/lambda, S_nf = 16 eta P/(pi D^2)."""
    g = 0.55 * (np.pi * D / LAM) ** 2
    assert ap.aperture_efficiency(g, D, LAM) == pytest.approx(0.55, rel=1e-12)
    assert ap.far_field_onset_m(D, LAM) / ap.near_field_extent_m(D, LAM) == pytest.approx(2.4)
    assert ap.near_field_power_density_w_m2(10.0, 1.0, D) == pytest.approx(
        4 * 10.0 / (np.pi * (D / 2) ** 2)
    )


def test_on_axis_regions_constant_then_1_over_r_then_1_over_r2():
    g = 10**4.8
    r_nf, r_ff = ap.near_field_extent_m(D, LAM), ap.far_field_onset_m(D, LAM)
    s = ap.on_axis_power_density_w_m2(1.0, g, D, LAM, [0.1 * r_nf, 0.9 * r_nf])
    assert s[0] == s[1]
    s = ap.on_axis_power_density_w_m2(1.0, g, D, LAM, [1.1 * r_nf, 2.2 * r_nf])
    assert s[0] / s[1] == pytest.approx(2.0)
    s = ap.on_axis_power_density_w_m2(1.0, g, D, LAM, [r_ff, 2 * r_ff])
    assert s[0] / s[1] == pytest.approx(4.0)


def test_transition_meets_far_field_within_0_12_db():
    """From the published constants: S_t(R_ff) / S_ff(R_ff) = 16 * 1.44 / (2.4 pi^2), about
    -0.12 dB, whatever the gain (OET-65 Ed. 97-01 aperture formulas)."""
    for g_dbi in (30.0, 38.0, 45.0):
        r_ff = ap.far_field_onset_m(D, LAM)
        below, above = ap.on_axis_power_density_w_m2(
            1.0, 10 ** (g_dbi / 10), D, LAM, [r_ff * (1 - 1e-12), r_ff]
        )
        assert below / above == pytest.approx(16 * 1.44 / (2.4 * np.pi**2), rel=1e-9)


def test_dish_model_on_axis_matches_the_formula_and_off_axis_is_reduced():
    rad = _dish(power_w=5.0)
    r_nf = ap.near_field_extent_m(D, LAM)
    g = 10**4.8
    s = ap.aperture_power_density(rad, _axis([0.5 * r_nf, 1.5 * r_nf]))
    np.testing.assert_allclose(
        s, ap.on_axis_power_density_w_m2(5.0, g, D, LAM, [0.5 * r_nf, 1.5 * r_nf]), rtol=1e-12
    )
    on = s[0]
    # inside one diameter of the axis: the on-axis value; beyond: at least 20 dB less...
    tube = ap.aperture_power_density(rad, np.array([[0.9 * D, 0.5 * r_nf, 0.0]]))[0]
    assert tube == on
    off = ap.aperture_power_density(rad, np.array([[2 * D, 0.5 * r_nf, 0.0], [0.0, -0.5, 0.0]]))
    assert np.all(off <= on)
    # ... but never below 1 % of it (the OET-65 off-axis statement, from memory)
    np.testing.assert_allclose(off[0], ap.OFF_AXIS_REDUCTION * on, rtol=1e-12)


def test_far_field_follows_the_dish_pattern():
    rad = _dish(power_w=5.0)
    r = 3 * ap.far_field_onset_m(D, LAM)
    psi = np.deg2rad(np.array([0.0, 1.0, 10.0]))
    pts = r * np.stack([np.sin(psi), np.cos(psi), np.zeros(3)], axis=-1)
    s = ap.aperture_power_density(rad, pts)
    expect = 5.0 * rad.pattern.gain(-psi, 0.0 * psi) / (4 * np.pi * r * r)
    np.testing.assert_allclose(s, expect, rtol=1e-12)


def test_closed_form_peak_and_far_limit():
    """Uniform circular aperture on axis: maxima 4P/(pi a^2); far out P G/(4 pi z^2) with
    G = (pi D/lambda)^2 (Hansen 1964 Ch. 1; Balanis Ch. 12; from memory)."""
    a = D / 2
    z = np.linspace(0.5 * a, 2 * ap.near_field_extent_m(D, LAM), 200001)
    s = ap.uniform_circular_aperture_on_axis_w_m2(1.0, a, LAM, z)
    assert s.max() == pytest.approx(4 / (np.pi * a * a), rel=1e-6)
    z_last = (a * a - LAM**2 / 4) / LAM
    assert ap.uniform_circular_aperture_on_axis_w_m2(1.0, a, LAM, z_last) == pytest.approx(
        4 / (np.pi * a * a), rel=1e-12
    )
    far = 1e4 * D**2 / LAM
    assert ap.uniform_circular_aperture_on_axis_w_m2(1.0, a, LAM, far) == pytest.approx(
        (np.pi * D / LAM) ** 2 / (4 * np.pi * far**2), rel=1e-6
    )


def test_missing_diameter_raises():
    rad = Radiator(np.zeros(3), 0.0, 0.0, 0.0, F_HZ, 1.0, _f699(48.0, D))
    with pytest.raises(InputError, match="diameter"):
        ap.aperture_power_density(rad, np.zeros((1, 3)))


@settings(max_examples=40, deadline=None)
@given(p1=st.floats(1e-3, 1e3), p2=st.floats(1e-3, 1e3), seed=st.integers(0, 2**16))
def test_linear_in_power_and_additive(p1, p2, seed):
    pts = np.random.default_rng(seed).uniform(-20, 20, (32, 3))
    s = [ap.aperture_power_density(_dish(power_w=p), pts) for p in (p1, p2, p1 + p2)]
    np.testing.assert_allclose(s[0] + s[1], s[2], rtol=1e-12)
