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
  (2 R^3)``, stays below :data:`MAX_SECOND_ORDER_RAD`; closer to the aperture plane off its
  axis, around the rim, the aperture is summed on a polar grid in its own plane)

  (Goodman, Introduction to Fourier Optics, 3rd ed., eqs. 3-41 and 4-13 in axisymmetric form;
  Balanis, Antenna Theory, 4th ed., sec. 12.10; from memory). ``S = |U|^2 / eta0`` (plane-wave
  equivalent, E and H equal). The integral runs over enough rings for its phase (``k R`` and
  the Bessel argument) to be sampled at least four times a radian.
* **Regions**: in front of the aperture plane out to the far-field range ``2 D^2/lambda``, the
  integral (which holds the near-field plateau, the Fresnel oscillation on the axis, the
  transition and the edge of the beam); beyond it the far-field formula with the user's
  pattern, ``P G F / (4 pi r^2)``; behind the aperture plane the model is not validated (the
  dispatcher bounds it).

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
MAX_SECOND_ORDER_RAD = 0.3  #: (the literal in _point: numba compiles it in) [rad]
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
def _point(xi, ri, a, n_exp, k):  # pragma: no cover - compiled
    """``|U|^2`` per unit ``E0^2`` at one point (module notes)."""
    r_min = math.sqrt(xi * xi + ri * ri)
    r_max = math.sqrt(xi * xi + ri * ri + a * a)
    span = k * (r_max - r_min) + k * ri * a / r_min
    q = k * (ri * a) ** 2 / (2.0 * r_min**3)
    re = 0.0
    im = 0.0
    if q <= 0.3:  # each ring's azimuthal integral is the Bessel function
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
    # close to the aperture plane off its axis: the aperture summed in its own plane, on a
    # polar grid two samples per radian of the phase across it (the field there is a local
    # quantity: the rings far from the point's projection cancel)
    m = int(min(3000.0, max(64.0, 2.0 * span + 64.0)))
    n_phi = int(min(1000.0, max(16.0, k * (ri + a) + 16.0)))  # over half the ring: symmetric
    h = a / m
    dphi = math.pi / n_phi
    for j in range(m):
        rp = (j + 0.5) * h
        t = rp / a
        amp = (1.0 - t * t) ** n_exp * rp * h / n_phi
        for p in range(n_phi):
            cp = math.cos((p + 0.5) * dphi)
            rr = math.sqrt(xi * xi + ri * ri + rp * rp - 2.0 * ri * rp * cp)
            w = amp * (xi / (rr * rr))
            c = math.cos(k * rr)
            s = math.sin(k * rr)
            re += w * (k * s + c / rr)
            im += w * (k * c - s / rr)
    return re * re + im * im


@_jit(parallel=True, cache=True)
def _ring_integral(x, rho, a, n_exp, k, out):  # pragma: no cover - compiled
    """``|U|^2`` per unit ``E0^2`` at axial distances ``x`` and radii ``rho``."""
    for i in _prange(x.size):
        out[i] = _point(x[i], rho[i], a, n_exp, k)


def _ring_integral_reference(x, rho, a, n_exp, k) -> np.ndarray:
    """Plain-Python reference of :func:`_ring_integral` (the same sums, without numba)."""
    out = np.empty(x.size)
    fn = getattr(_point, "py_func", _point)
    for i in range(x.size):
        out[i] = fn(float(x[i]), float(rho[i]), a, n_exp, k)
    return out


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
        # E0^2 with P = (E0^2 / eta0) pi a^2 / (2 n + 1)
        self.e0_sq = float(rad.power_w) * ETA0 * (2.0 * self.n + 1.0) / (np.pi * self.a**2)
        self.far_field_range_m = max(2.0 * float(d) ** 2 / lam,
                                     far_field_range_m(lam, rad.body.largest_dimension_m))

    def density(self, points_enu) -> np.ndarray:
        """Plane-wave-equivalent density ``F |U|^2 / eta0`` at site-frame points; the far-field
        formula with the pattern beyond the far-field range; NaN behind the aperture plane. [W/m^2]"""
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
        near = ~far & (xa > 0.0)
        if near.any():
            x, rr = np.ascontiguousarray(xa[near]), np.ascontiguousarray(rho[near])
            if fast_available():
                u2 = np.empty(x.size)
                _ring_integral(x, rr, self.a, self.n, self.k, u2)
            else:
                u2 = _ring_integral_reference(x, rr, self.a, self.n, self.k)
            out[near] = self.rad.reflection_factor * self.e0_sq * u2 / ETA0
        return out
