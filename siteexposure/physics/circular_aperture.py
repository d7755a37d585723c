"""Near field of a dish as a tapered circular aperture (Fresnel-Bessel integral).

The OET-65 aperture model (:mod:`siteexposure.physics.aperture`) is a conservative screening
envelope: the on-axis maximum of a uniform aperture, ``4 P / A``, held all along the near
field and a whole diameter off axis. This model computes the field itself, from what a user
has of a dish: its diameter ``D``, its gain (hence its aperture efficiency ``eta = G /
(pi D / lambda)^2``) and the power.

Model
-----
* **Illumination**: ``A(rho') = (1 - (rho'/a)^2)^n``, ``a = D/2``, with ``n`` chosen so that
  the taper efficiency equals the aperture efficiency: ``(2 n + 1)/(n + 1)^2 = eta``, i.e.
  ``n = [(1 - eta) + sqrt(1 - eta)] / eta`` (parabolic-taper family; the efficiency of
  ``(1 - t)^n`` follows from its two moments, common practice). A loss of efficiency to
  spill-over or blockage is thus taken as taper, which concentrates the power towards the
  axis: the conservative reading. ``eta`` is clipped to 0.2 .. 1.
* **Field**: the scalar aperture field, normalised so that ``P = int |E_ap|^2 / eta0 dA``,
  propagated by the Fresnel-Bessel form of the Rayleigh-Sommerfeld integral with the exact
  distance from each ring of the aperture::

      U(rho, x) = int_0^a A(rho') (x / R^2) (j k + 1/R) exp(-j k R) J0(k rho rho' / R) rho' drho'
      R = sqrt(x^2 + rho^2 + rho'^2)

  (the first Rayleigh-Sommerfeld solution, its azimuthal integral over each ring taken as the
  Bessel function, which holds while the second-order term of the distance, ``k (rho a)^2 /
  (2 R^3)``, stays below :data:`MAX_SECOND_ORDER_RAD`) (Goodman, Introduction to Fourier
  Optics, 3rd ed., eqs. 3-41 and 4-13 in axisymmetric form; Balanis, Antenna Theory, 4th ed.,
  sec. 12.10; from memory). ``S = |U|^2 / eta0`` (plane-wave equivalent, E and H equal). The
  integral runs over enough rings for its phase (``k R`` and the Bessel argument) to be
  sampled at least four times a radian.
* **Near the aperture plane off its axis** (around the rim, where the Bessel form does not
  hold) the same field from the angular spectrum of the illumination, exact for the first
  Rayleigh-Sommerfeld solution: ``U = int F(kappa) J0(kappa rho) exp(-j kx x) kappa dkappa``,
  ``kx = sqrt(k^2 - kappa^2)`` (evanescent beyond ``k``), with the Hankel transform ``F(kappa)
  = a^2 2^n Gamma(n+1) J_{n+1}(kappa a) / (kappa a)^(n+1)`` of the taper (Goodman sec. 3.10;
  Abramowitz and Stegun 11.4.10; from memory), integrated over ``kappa = k sin(alpha)`` and
  ``k cosh(beta)`` at four samples a radian of every phase in it (converged to 0.01 dB).
* **Within a wavelength of the aperture plane** the field one wavelength in front, never
  less than the illumination itself (the field on the plane, Kirchhoff's boundary value):
  the evanescent waves there would cost ten times as much (1874 of the reference's judged
  points lie there; they are part of the accuracy table's dish rows).
* **Regions**: in front of the aperture plane out to the far-field
  range ``2 D^2/lambda``, within two diameters of the axis and further off it wherever the
  Bessel form holds or the angular spectrum is cheap, the integral (which holds the
  near-field plateau, the Fresnel oscillation on the axis, the transition, the edge of the
  beam and the rim); beyond the far-field range the far-field formula with the user's
  pattern, ``P G F / (4 pi r^2)``; elsewhere (off the beam in the near field, behind the
  aperture plane) nothing: the dish model takes the OET-65
  off-axis rule there and ``auto`` never less than the bound.

Validated against a direct Rayleigh-Sommerfeld integral of a uniform 1.2 m aperture at 18 GHz
(tests/data/nec/dish_reference.py): accuracy in tests/data/nec/accuracy.md.

References
----------
.. [1] J. W. Goodman, "Introduction to Fourier Optics", 3rd ed., Roberts, 2005, ch. 3-4
   (Rayleigh-Sommerfeld and Fresnel diffraction; from memory).
.. [2] C. A. Balanis, "Antenna Theory: Analysis and Design", 4th ed., Wiley, 2016, sec. 12.10
   (circular apertures, tapered illuminations and their efficiencies; from memory).
.. [3] M. Abramowitz, I. A. Stegun, "Handbook of Mathematical Functions", 10th printing, 1972,
   eqs. 9.4.1 and 9.4.3 (polynomial approximations of J0, error below 5e-8).
"""

from __future__ import annotations

import math

import numpy as np

from siteexposure.constants import ETA0
from siteexposure.errors import InputError
from siteexposure.physics.fastpath import _jit, _prange, fast_available
from siteexposure.physics.orientation import antenna_angles, to_antenna_frame

MIN_EFFICIENCY = 0.2
#: the ring integral covers the tube of this many diameters' radius about the axis (the beam
#: and its edge; OET-65 takes one diameter); outside it, off the beam in the near field, the
#: model gives nothing (NaN) and the dish model falls back on the OET-65 off-axis rule [1]
TUBE_DIAMETERS = 2.0
#: nor closer to the aperture plane than this many wavelengths (the surface of the dish's
#: radome or feed window: the bound holds there, and evanescent waves would cost 10x) [1]
NEAR_PLANE_WAVELENGTHS = 1.0
#: off the beam near the aperture plane, the angular spectrum runs where its phase ``k (x + rho
#: + a)`` is at most this (4 samples a radian: 6 300 samples, about 0.2 ms a point); beyond,
#: the OET-65 off-axis rule and the bound (conservative, but a step where they take over) [rad]
MAX_SPECTRUM_PHASE_RAD = 1000.0
#: evanescent waves decaying by more than this many nepers before the point are left out [1]
EVANESCENT_NEPERS = 14.0
SPECTRUM_SAMPLES_PER_LOBE = 32  #: samples of the aperture spectrum per pi/a [1]
MAX_SECOND_ORDER_RAD = 0.1  #: (the literal in _point: numba compiles it in) [rad]
SAMPLES_PER_RAD = 4.0  #: phase samples per radian of the ring integral [1]
MIN_RINGS = 64
MAX_RINGS = 200_000


def taper_exponent(efficiency: float) -> float:
    """``n`` of the illumination ``(1 - (rho/a)^2)^n`` with taper efficiency ``efficiency``. [1]

    Examples
    --------
    >>> round(taper_exponent(0.75), 12), taper_exponent(1.0)
    (1.0, 0.0)
    """
    eta = float(np.clip(efficiency, MIN_EFFICIENCY, 1.0))
    return ((1.0 - eta) + math.sqrt(1.0 - eta)) / eta


@_jit(cache=True, inline="always")
def _j0(x):  # pragma: no cover - compiled
    """Bessel J0 (Abramowitz and Stegun 9.4.1 and 9.4.3)."""
    ax = abs(x)
    if ax <= 3.0:
        t = (x / 3.0) ** 2
        return (1.0 + t * (-2.2499997 + t * (1.2656208 + t * (-0.3163866 + t * (
            0.0444479 + t * (-0.0039444 + t * 0.0002100))))))
    t = 3.0 / ax
    f0 = (0.79788456 + t * (-0.00000077 + t * (-0.00552740 + t * (-0.00009512 + t * (
        0.00137237 + t * (-0.00072805 + t * 0.00014476))))))
    th = (ax - 0.78539816 + t * (-0.04166397 + t * (-0.00003954 + t * (0.00262573 + t * (
        -0.00054125 + t * (-0.00029333 + t * 0.00013558))))))
    return f0 * math.cos(th) / math.sqrt(ax)


@_jit(cache=True, inline="always")
def _interp(table, dk, kappa):  # pragma: no cover - compiled
    """Linear interpolation of the aperture spectrum tabulated every ``dk`` from 0 (zero
    beyond the table's end)."""
    u = kappa / dk
    i = int(u)
    if i >= table.size - 1:
        return 0.0
    f = u - i
    return table[i] * (1.0 - f) + table[i + 1] * f


@_jit(cache=True, inline="always")
def _spectrum_point(xi, ri, a, k, table, dk):  # pragma: no cover - compiled
    """``|U|^2`` per unit ``E0^2`` at one point from the angular spectrum of the aperture
    (module notes): the propagating part over ``kappa = k sin(alpha)``, the evanescent part
    over ``kappa = k cosh(beta)``, each sampled at least four times a radian of its phase."""
    re = 0.0
    im = 0.0
    m = int(min(400000.0, 4.0 * k * (xi + ri + a) * 0.5 * math.pi + 64.0))
    h = 0.5 * math.pi / m
    for j in range(m):
        al = (j + 0.5) * h
        sa = math.sin(al)
        ca = math.cos(al)
        kap = k * sa
        w = _interp(table, dk, kap) * _j0(kap * ri) * k * k * sa * ca * h
        ph = k * ca * xi
        re += w * math.cos(ph)  # exp(-j k_x x)
        im -= w * math.sin(ph)
    # evanescent waves: decay exp(-k sinh(beta) x), negligible past EVANESCENT_NEPERS (14)
    # (and no further than the table, which holds them from the nearest point computed)
    kap_max = min(k * math.cosh(math.asinh(14.0 / max(k * xi, 1e-9))), (table.size - 1) * dk)
    b_max = math.acosh(max(kap_max / k, 1.0))
    m = int(min(400000.0, 4.0 * b_max * ((ri + a) * kap_max + 1.0) + 64.0))
    h = b_max / m
    for j in range(m):
        b = (j + 0.5) * h
        sh = math.sinh(b)
        ch = math.cosh(b)
        kap = k * ch
        re += (_interp(table, dk, kap) * _j0(kap * ri) * k * k * ch * sh * h
               * math.exp(-k * sh * xi))
    return re * re + im * im


@_jit(cache=True, inline="always")
def _point(xi, ri, a, n_exp, k, table, dk):  # pragma: no cover - compiled
    """``|U|^2`` per unit ``E0^2`` at one point (module notes)."""
    r_min = math.sqrt(xi * xi + ri * ri)
    r_max = math.sqrt(xi * xi + ri * ri + a * a)
    span = k * (r_max - r_min) + k * ri * a / r_min
    q = k * (ri * a) ** 2 / (2.0 * r_min**3)
    if q > 0.1:  # close to the aperture plane off its axis: the angular spectrum
        return _spectrum_point(xi, ri, a, k, table, dk)
    re = 0.0
    im = 0.0
    # each ring's azimuthal integral is the Bessel function
    m = int(min(200000.0, max(64.0, 4.0 * span + 64.0)))
    h = a / m
    for j in range(m):
        rp = (j + 0.5) * h
        t = rp / a
        rr = math.sqrt(xi * xi + ri * ri + rp * rp)
        w = (1.0 - t * t) ** n_exp * rp * h * (xi / (rr * rr)) * _j0(k * ri * rp / rr)
        c = math.cos(k * rr)
        s = math.sin(k * rr)
        re += w * (k * s + c / rr)  # (j k + 1/R) exp(-j k R)
        im += w * (k * c - s / rr)
    return re * re + im * im


@_jit(parallel=True, cache=True)
def _ring_integral(x, rho, a, n_exp, k, table, dk, out):  # pragma: no cover - compiled
    """``|U|^2`` per unit ``E0^2`` at axial distances ``x`` and radii ``rho``."""
    for i in _prange(x.size):
        out[i] = _point(x[i], rho[i], a, n_exp, k, table, dk)


def _ring_integral_reference(x, rho, a, n_exp, k, table, dk) -> np.ndarray:
    """Plain-Python reference of :func:`_ring_integral` (the same sums, without numba)."""
    out = np.empty(x.size)
    fn = getattr(_point, "py_func", _point)
    for i in range(x.size):
        out[i] = fn(float(x[i]), float(rho[i]), a, n_exp, k, table, dk)
    return out


def aperture_spectrum(a: float, n_exp: float, kappa_max: float,
                      per_lobe: int = SPECTRUM_SAMPLES_PER_LOBE) -> tuple[np.ndarray, float]:
    """The Hankel transform of the illumination, ``F(kappa) = int_0^a (1 - (r/a)^2)^n
    J0(kappa r) r dr = a^2 2^n Gamma(n + 1) J_{n+1}(kappa a) / (kappa a)^(n+1)`` (Abramowitz
    and Stegun 11.4.10; from memory), tabulated every ``pi / (per_lobe a)`` from 0 to
    ``kappa_max``: the table and its step. [m^2], [1/m]

    Examples
    --------
    >>> t, dk = aperture_spectrum(0.5, 0.0, 10.0)
    >>> round(float(t[0]), 12)  # int_0^a r dr
    0.125
    """
    from scipy.special import gamma, jv

    dk = math.pi / (per_lobe * a)
    kap = np.arange(int(kappa_max / dk) + 2) * dk
    u = np.maximum(kap * a, 1e-12)
    f = a * a * 2.0**n_exp * gamma(n_exp + 1.0) * jv(n_exp + 1.0, u) / u ** (n_exp + 1.0)
    f[0] = a * a / (2.0 * (n_exp + 1.0))
    return np.ascontiguousarray(f), dk


class CircularAperture:
    """The dish model for one radiator (see the module docstring)."""

    def __init__(self, rad) -> None:
        from siteexposure.physics.regions import far_field_range_m

        d = rad.diameter_m
        if not d or d <= 0:
            raise InputError(f"antenna aperture diameter_m: {d!r}; the aperture model needs a "
                             "positive dish diameter")
        self.rad = rad
        lam = float(rad.wavelength_m)
        self.k = 2.0 * np.pi / lam
        self.a = 0.5 * float(d)
        g = 10.0 ** (float(rad.pattern.peak_gain_dbi) / 10.0)
        self.efficiency = float(np.clip(g / (np.pi * d / lam) ** 2, MIN_EFFICIENCY, 1.0))
        self.n = taper_exponent(self.efficiency)
        # the spectrum as far as the evanescent waves of the nearest point computed need
        self.x_min = NEAR_PLANE_WAVELENGTHS * lam
        self.spectrum, self.dk = aperture_spectrum(
            self.a, self.n, math.hypot(self.k, EVANESCENT_NEPERS / self.x_min))
        # E0^2 with P = (E0^2 / eta0) pi a^2 / (2 n + 1)
        self.e0_sq = float(rad.power_w) * ETA0 * (2.0 * self.n + 1.0) / (np.pi * self.a**2)
        self.far_field_range_m = max(2.0 * float(d) ** 2 / lam,
                                     far_field_range_m(lam, rad.body.largest_dimension_m))

    def computed(self, x_ant, rho) -> np.ndarray:
        """Where the integral runs (inside the far-field range): in front of the aperture plane
        within :data:`TUBE_DIAMETERS` diameters of the axis (the reference covers that tube),
        and further off the axis wherever the Bessel form holds (second-order phase within
        :data:`MAX_SECOND_ORDER_RAD`) or the angular spectrum costs at most
        :data:`MAX_SPECTRUM_PHASE_RAD` (within a wavelength of the plane, the field at one
        wavelength, see :meth:`density`)."""
        x = np.asarray(x_ant, dtype=float)
        r = np.asarray(rho, dtype=float)
        x_c = np.maximum(x, self.x_min)
        r_min = np.hypot(x_c, r)
        bessel = self.k * (r * self.a) ** 2 / (2.0 * r_min**3) <= MAX_SECOND_ORDER_RAD
        cheap = self.k * (x_c + r + self.a) <= MAX_SPECTRUM_PHASE_RAD
        return (x > 0.0) & ((r <= TUBE_DIAMETERS * 2.0 * self.a) | bessel | cheap)

    def density(self, points_enu) -> np.ndarray:
        """Plane-wave-equivalent density ``F |U|^2 / eta0`` at site-frame points in front of the
        aperture plane within :data:`TUBE_DIAMETERS` diameters of the axis; the far-field formula
        with the pattern beyond the far-field range; NaN elsewhere. [W/m^2]"""
        from siteexposure.physics.farfield import farfield_power_density

        pts = np.asarray(points_enu, dtype=float).reshape(-1, 3)
        xa, ya, za = to_antenna_frame(pts - self.rad.position_m, self.rad.azimuth_deg,
                                      self.rad.mechanical_tilt_deg)
        r, _, _ = antenna_angles(xa, ya, za)
        rho = np.hypot(ya, za)
        out = np.full(len(pts), np.nan)
        far = r >= self.far_field_range_m
        if far.any():
            out[far] = farfield_power_density(self.rad, pts[far])
        near = ~far & (xa >= self.x_min) & self.computed(xa, rho)
        # within a wavelength of the aperture plane: the field at one wavelength (the
        # evanescent waves there would cost ten times as much), never below the illumination
        # itself (the field on the aperture plane; Kirchhoff's boundary values)
        plane = ~far & (xa > 0.0) & (xa < self.x_min) & self.computed(xa, rho)
        near |= plane
        if near.any():
            x = np.ascontiguousarray(np.maximum(xa[near], self.x_min))
            rr = np.ascontiguousarray(rho[near])
            if fast_available():
                u2 = np.empty(x.size)
                _ring_integral(x, rr, self.a, self.n, self.k, self.spectrum, self.dk, u2)
            else:
                u2 = _ring_integral_reference(x, rr, self.a, self.n, self.k, self.spectrum,
                                              self.dk)
            t = np.clip(rr / self.a, 0.0, 1.0)
            lit = np.where(rr < self.a, (1.0 - t * t) ** (2.0 * self.n), 0.0)
            u2 = np.where(plane[near], np.maximum(u2, lit), u2)
            out[near] = self.rad.reflection_factor * self.e0_sq * u2 / ETA0
        return out
