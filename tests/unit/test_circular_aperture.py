"""Unit tests of siteexposure.physics.circular_aperture (the dish model)."""

from __future__ import annotations

import numpy as np
import pytest

from siteexposure.constants import C0
from siteexposure.physics import circular_aperture as ca
from siteexposure.physics.aperture import uniform_circular_aperture_on_axis_w_m2
from siteexposure.physics.patterns import parametric_pattern
from siteexposure.physics.radiator import Radiator


def test_taper_exponent_gives_the_taper_efficiency():
    """(2n+1)/(n+1)^2 is the taper efficiency of (1 - (r/a)^2)^n (its two moments over the
    disc; Balanis 4th ed. sec. 12.10 tabulates 1, 0.75 and 0.56 for n = 0, 1, 2; from
    memory)."""
    for eta in (1.0, 0.75, 0.5555555555, 0.6, 0.3):
        n = ca.taper_exponent(eta)
        assert (2 * n + 1) / (n + 1) ** 2 == pytest.approx(eta, rel=1e-9)
    assert ca.taper_exponent(0.75) == pytest.approx(1.0)


def test_uniform_aperture_on_axis_matches_the_closed_form():
    """A uniform 1.2 m aperture at 18 GHz, on its axis beyond one metre: the ring integral
    equals the closed form 4P/(pi a^2) sin^2(k (sqrt(z^2 + a^2) - z)/2) (scalar diffraction on
    the axis, unit obliquity; e.g. Hansen, Microwave Scanning Antennas, vol. I, ch. 1; from
    memory) to 1 % from 2 m (1.7 D) out; at 1 m the obliquity the closed form leaves out
    makes 4 %."""
    lam = C0 / 18e9
    k = 2 * np.pi / lam
    z = np.array([2.0, 5.0, 10.0, 20.0, 50.0, 100.0])
    u2 = np.empty(z.size)
    ca._ring_integral(z, np.zeros_like(z), 0.6, 0.0, k, u2)
    e0_sq = 1.0 * 376.730313668 / (np.pi * 0.36)  # P = 1 W over a uniform aperture
    s = e0_sq * u2 / 376.730313668
    ref = uniform_circular_aperture_on_axis_w_m2(1.0, 0.6, lam, z)
    big = ref > 0.05 * ref.max()  # away from the exact on-axis zeros
    np.testing.assert_allclose(s[big], ref[big], rtol=0.01)


def test_compiled_and_plain_sums_agree_and_the_far_field_is_the_pattern():
    """The compiled sum equals its plain reference; beyond 2 D^2/lambda the model hands over to
    the far-field formula with the pattern (OET-65 Ed. 97-01 eq. (3)), and just inside it the
    ring integral on the axis is within 0.5 dB of that formula with the aperture's gain."""
    lam = C0 / 11.2e9
    k = 2 * np.pi / lam
    x = np.array([3.0, 8.0, 30.0, 3.0])
    rho = np.array([0.0, 0.4, 1.0, 2.5])
    u2 = np.empty(x.size)
    ca._ring_integral(x, rho, 0.6, 1.3, k, u2)
    np.testing.assert_allclose(u2, ca._ring_integral_reference(x, rho, 0.6, 1.3, k), rtol=1e-9)
    pat = parametric_pattern({"model": "parabolic", "diameter_m": 1.2}, frequency_mhz=11200.0)
    rad = Radiator(np.zeros(3), 90.0, 0.0, 0.0, 11.2e9, 10.0, pat, diameter_m=1.2)
    dish = ca.CircularAperture(rad)
    r_ff = dish.far_field_range_m
    s = dish.density(np.array([[0.95 * r_ff, 0.0, 0.0], [1.05 * r_ff, 0.0, 0.0]]))
    g = 10 ** (pat.peak_gain_dbi / 10)
    ff = 10.0 * g / (4 * np.pi * np.array([0.95, 1.05]) ** 2 / 1.0 / r_ff**-2)
    assert 10 * np.log10(s[0] / ff[0]) == pytest.approx(0.0, abs=0.5)
    assert s[1] == pytest.approx(ff[1], rel=1e-9)
    assert np.isnan(dish.density(np.array([[-1.0, 0.0, 0.0]])))[0]
