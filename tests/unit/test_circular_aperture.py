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


def rs_on_axis_u2(z, a, k):
    """|U|^2 on the axis of a uniform circular aperture (unit field) by the first
    Rayleigh-Sommerfeld integral, exact on the axis: ``U = exp(-jkz) - (z/R) exp(-jkR)``, ``R =
    sqrt(z^2 + a^2)`` (e.g. Osterberg and Smith, J. Opt. Soc. Am. 51, 1961; from memory). [1]"""
    r = np.hypot(z, a)
    return np.abs(np.exp(-1j * k * z) - (z / r) * np.exp(-1j * k * r)) ** 2


def test_uniform_aperture_on_axis_matches_the_closed_form():
    """A uniform 1.2 m aperture at 18 GHz, on its axis: the ring integral equals the exact
    on-axis Rayleigh-Sommerfeld field (above) to 1 % from 1 m out, and, from 5 m (4 D) out,
    where the obliquity is 1, the closed form 4P/(pi a^2) sin^2(k (sqrt(z^2 + a^2) - z)/2)
    (scalar diffraction on the axis, unit obliquity; e.g. Hansen, Microwave Scanning
    Antennas, vol. I, ch. 1; from memory)."""
    lam = C0 / 18e9
    k = 2 * np.pi / lam
    z = np.array([1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0])
    u2 = np.empty(z.size)
    tab, dk = ca.aperture_spectrum(0.6, 0.0, 14.1 * k)
    ca._ring_integral(z, np.zeros_like(z), 0.6, 0.0, k, tab, dk, u2)
    exact = rs_on_axis_u2(z, 0.6, k)
    big = exact > 0.05 * exact.max()  # away from the exact on-axis zeros
    np.testing.assert_allclose(u2[big], exact[big], rtol=0.01)
    s = u2 / (np.pi * 0.36)  # P = 1 W over a uniform aperture: E0^2/eta0 = 1/(pi a^2)
    ref = uniform_circular_aperture_on_axis_w_m2(1.0, 0.6, lam, z)
    far = big & (z >= 5.0)
    np.testing.assert_allclose(s[far], ref[far], rtol=0.01)


def test_compiled_and_plain_sums_agree_and_the_far_field_is_the_pattern():
    """The compiled sum equals its plain reference; beyond 2 D^2/lambda the model hands over to
    the far-field formula with the pattern (OET-65 Ed. 97-01 eq. (3)), and just inside it the
    ring integral on the axis is within 0.5 dB of that formula with the aperture's gain."""
    lam = C0 / 11.2e9
    k = 2 * np.pi / lam
    x = np.array([3.0, 8.0, 30.0, 3.0])
    rho = np.array([0.0, 0.4, 1.0, 2.5])
    u2 = np.empty(x.size)
    tab, dk = ca.aperture_spectrum(0.6, 1.3, 14.1 * k)
    x = np.append(x, 0.2)  # and one point near the aperture plane (the angular spectrum)
    rho = np.append(rho, 0.7)
    u2 = np.empty(x.size)
    ca._ring_integral(x, rho, 0.6, 1.3, k, tab, dk, u2)
    np.testing.assert_allclose(u2, ca._ring_integral_reference(x, rho, 0.6, 1.3, k, tab, dk),
                               rtol=1e-9)
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


def test_angular_spectrum_near_the_aperture_plane():
    """Near the aperture plane, where the Bessel form of each ring does not hold, the field
    comes from the angular spectrum of the illumination (Goodman, Introduction to Fourier
    Optics, 3rd ed., sec. 3.10, in axisymmetric form; from memory). Checked against: the
    exact on-axis field of a uniform aperture (above, to 1 %), the
    illumination itself a fraction of a wavelength in front of the plane (the field there
    is the aperture field: 1 inside the rim, 0 well outside; Kirchhoff boundary values), and
    the Bessel ring form where both hold (to 0.2 dB at q = 0.05)."""
    lam = C0 / 11.2e9
    k = 2 * np.pi / lam
    a = 0.6
    tab, dk = ca.aperture_spectrum(a, 0.0, 14.1 * k)
    sp = ca._spectrum_point
    z = np.array([0.3, 0.7, 1.5, 3.0, 6.0, 12.0])
    u2 = np.array([sp(zi, 0.0, a, k, tab, dk) for zi in z])
    exact = rs_on_axis_u2(z, a, k)
    big = exact > 0.05 * exact.max()
    np.testing.assert_allclose(u2[big], exact[big], rtol=0.01)
    near = np.array([sp(0.2 * lam, r, a, k, tab, dk) for r in (0.0, 0.3, 0.45, 0.75, 1.0)])
    np.testing.assert_allclose(near[:3], 1.0, atol=0.15)
    assert near[3:].max() < 0.01
    # taper n = 1: the field a fraction of a wavelength in front follows (1 - (r/a)^2)^2
    tab1, dk1 = ca.aperture_spectrum(a, 1.0, 14.1 * k)
    for r in (0.0, 0.2, 0.4):
        assert sp(0.2 * lam, r, a, k, tab1, dk1) == pytest.approx((1 - (r / a) ** 2) ** 2,
                                                                   abs=0.03)
    # where the Bessel form holds too (second-order phase 0.05 rad), both agree
    for x, r in ((20.0, 0.5), (8.0, 0.25)):
        q = k * (r * a) ** 2 / (2 * np.hypot(x, r) ** 3)
        assert q < 0.06
        ring = ca._point.py_func(x, r, a, 1.0, k, np.zeros(2), 1.0)
        spec = sp(x, r, a, k, tab1, dk1)
        assert 10 * np.log10(spec / ring) == pytest.approx(0.0, abs=0.2)
