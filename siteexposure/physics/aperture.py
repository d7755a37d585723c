"""OET-65 model of aperture antennas (dishes): near-field, transition and far-field regions.

Along the beam axis of a circular aperture of diameter D the density is nearly
constant out to ``R_nf = D^2 / (4 lambda)`` (the last on-axis maximum of the Fresnel
zone pattern), then falls as 1/R through a transition region to
``R_ff = 0.6 D^2 / lambda``, and as 1/R^2 in the far field.

Model (OET-65), with aperture efficiency ``eta = G lambda^2 / (pi D)^2``
    * near field, ``R <= R_nf``: ``S_nf = 16 eta P / (pi D^2)``;
    * transition, ``R_nf < R < R_ff``: ``S_t = S_nf R_nf / R``;
    * far field, ``R >= R_ff``: ``S = P G(direction) / (4 pi R^2)``.

Off-axis (OET-65's statement, applied as a decision of this project)
    In the near-field and transition regions the on-axis value holds in front of the
    dish within one diameter of the beam axis (a tube of radius D, twice the dish
    radius: conservative at the beam edge). Farther off-axis, and behind the
    reflector, OET-65 states that the density is at least 20 dB below the on-axis
    value once one is more than about one antenna diameter from the beam axis
    (from memory, not confirmed); there the model takes the larger of 1 % of the
    on-axis value and the far-field value with the dish pattern, never more than the
    on-axis value. In the far field the dish pattern alone sets the off-axis
    reduction.

Validity and assumptions
------------------------
* A circular (or nearly square) aperture of diameter D much larger than the
  wavelength, with the feed and struts not radiating on their own.
* The near-field value is the maximum of an idealised aperture; the true on-axis
  density oscillates below it (see :func:`uniform_circular_aperture_on_axis_w_m2`).
  For a uniformly illuminated aperture the transition formula falls up to about
  0.6 dB below the exact on-axis density just beyond R_nf (measured in
  tests/validation/test_oet65_models.py); tapered illumination (eta < 1) gives more
  margin.
* The reflection factor F multiplies every region. Points inside the reactive near
  field are masked by the dispatcher.
* A gain implying ``eta > 1`` is not clipped: the model then stays conservative.

References
----------
.. [1] FCC OET Bulletin 65, Edition 97-01, Aug. 1997, Section 2, "Aperture antennas":
   near-field extent D^2/(4 lambda), on-axis near-field density 16 eta P/(pi D^2),
   far-field onset 0.6 D^2/lambda, transition density S_nf R_nf / R, far-field
   P G/(4 pi R^2), aperture efficiency from the gain; the off-axis statement of at
   least 20 dB reduction beyond about one diameter from the axis (equation numbers
   (9)-(16) and the wording from memory, not confirmed).
.. [2] R. C. Hansen, "Microwave Scanning Antennas", Vol. I, Academic Press, 1964,
   Ch. 1 (on-axis near field of a uniformly illuminated circular aperture; from
   memory); C. A. Balanis, "Antenna Theory", 3rd ed., Wiley, 2005, Ch. 12 (aperture
   antennas) and Sec. 2.2.4 (field regions).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from siteexposure.errors import InputError
from siteexposure.physics.orientation import antenna_angles, to_antenna_frame

if TYPE_CHECKING:
    from siteexposure.physics.radiator import Radiator

OFF_AXIS_REDUCTION = 0.01  #: OET-65 off-axis near-field reduction, at least 20 dB [1]


def aperture_efficiency(
    gain: ArrayLike, diameter_m: ArrayLike, wavelength_m: ArrayLike
) -> np.ndarray:
    """Aperture efficiency from gain, ``eta = G lambda^2 / (pi D)^2``. [1]

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2 (aperture antennas; from G = eta (pi D /
    lambda)^2).

    Examples
    --------
    >>> round(float(aperture_efficiency(np.pi**2 * 100.0, 1.0, 0.1)), 12)
    1.0
    """
    d = np.asarray(diameter_m, dtype=float)
    lam = np.asarray(wavelength_m, dtype=float)
    return np.asarray(gain, dtype=float) * lam * lam / (np.pi * d) ** 2


def near_field_extent_m(diameter_m: ArrayLike, wavelength_m: ArrayLike) -> np.ndarray:
    """Extent of the aperture near field along the axis, ``R_nf = D^2 / (4 lambda)``. [m]"""
    d = np.asarray(diameter_m, dtype=float)
    return d * d / (4.0 * np.asarray(wavelength_m, dtype=float))


def far_field_onset_m(diameter_m: ArrayLike, wavelength_m: ArrayLike) -> np.ndarray:
    """Start of the aperture far field in the OET-65 model, ``R_ff = 0.6 D^2 / lambda``. [m]"""
    d = np.asarray(diameter_m, dtype=float)
    return 0.6 * d * d / np.asarray(wavelength_m, dtype=float)


def near_field_power_density_w_m2(
    power_w: ArrayLike, efficiency: ArrayLike, diameter_m: ArrayLike
) -> np.ndarray:
    """Maximum on-axis near-field density ``S_nf = 16 eta P / (pi D^2)``. [W/m^2]

    Notes
    -----
    Four times the power spread evenly over the aperture area, times eta: the peak
    of the Fresnel-zone oscillation of a uniform aperture is ``4 P / A``.
    """
    d = np.asarray(diameter_m, dtype=float)
    return (
        16.0
        * np.asarray(efficiency, dtype=float)
        * np.asarray(power_w, dtype=float)
        / (np.pi * d * d)
    )


def on_axis_power_density_w_m2(
    power_w: ArrayLike,
    gain: ArrayLike,
    diameter_m: ArrayLike,
    wavelength_m: ArrayLike,
    r_m: ArrayLike,
    reflection_factor: ArrayLike = 1.0,
) -> np.ndarray:
    """OET-65 on-axis density of a dish at axial distance ``r_m`` (all three regions).

    Parameters
    ----------
    power_w : array_like
        Net power into the antenna. [W]
    gain : array_like
        Numeric peak (on-axis) gain. [1]
    diameter_m : array_like
        Dish diameter D. [m]
    wavelength_m : array_like
        Wavelength. [m]
    r_m : array_like
        Distance along the beam axis from the aperture. [m]
    reflection_factor : array_like, optional
        Field-squared reflection factor F. [1]

    Returns
    -------
    ndarray
        ``S_nf`` (R <= R_nf), ``S_nf R_nf / R`` (R_nf < R < R_ff),
        ``P G / (4 pi R^2)`` (R >= R_ff), times F. [W/m^2]

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2, aperture antennas.
    """
    p = np.asarray(power_w, dtype=float)
    g = np.asarray(gain, dtype=float)
    d = np.asarray(diameter_m, dtype=float)
    lam = np.asarray(wavelength_m, dtype=float)
    r = np.asarray(r_m, dtype=float)
    s_nf = near_field_power_density_w_m2(p, aperture_efficiency(g, d, lam), d)
    r_nf = near_field_extent_m(d, lam)
    r_ff = far_field_onset_m(d, lam)
    with np.errstate(divide="ignore", invalid="ignore"):
        s_t = s_nf * r_nf / r
        s_ff = p * g / (4.0 * np.pi * r * r)
    s = np.where(r <= r_nf, s_nf, np.where(r < r_ff, s_t, s_ff))
    return np.asarray(reflection_factor, dtype=float) * s


def uniform_circular_aperture_on_axis_w_m2(
    power_w: ArrayLike, radius_m: ArrayLike, wavelength_m: ArrayLike, z_m: ArrayLike
) -> np.ndarray:
    """Closed-form on-axis density of a uniformly illuminated circular aperture.

    Parameters
    ----------
    power_w : array_like
        Power through the aperture. [W]
    radius_m : array_like
        Aperture radius a. [m]
    wavelength_m : array_like
        Wavelength. [m]
    z_m : array_like
        Distance from the aperture plane along its axis, z > 0. [m]

    Returns
    -------
    ndarray
        On-axis power density. [W/m^2]

    Notes
    -----
    With a uniform aperture field the scalar diffraction integral on the axis is
    elementary: the aperture acts as a ring source whose edge path is
    ``sqrt(z^2 + a^2)`` and the field is ``E0 (exp(-jkz) - exp(-jk sqrt(z^2+a^2)))``
    (unit obliquity), so

    .. math:: S(z) = \\frac{4P}{\\pi a^2}\\,
              \\sin^2\\!\\Big(\\frac{k}{2}\\big(\\sqrt{z^2+a^2}-z\\big)\\Big)

    Its maxima equal ``4 P / (pi a^2) = 16 P / (pi D^2)`` (OET-65's S_nf with eta = 1),
    the last one at ``z = (a^2 - lambda^2/4) / lambda``, close to ``D^2/(4 lambda)``;
    far out it tends to ``P G / (4 pi z^2)`` with ``G = (pi D / lambda)^2``.
    ``sqrt(z^2+a^2) - z`` is evaluated as ``a^2 / (sqrt(z^2+a^2) + z)`` to avoid
    cancellation.

    References
    ----------
    R. C. Hansen, "Microwave Scanning Antennas", Vol. I, 1964, Ch. 1; C. A. Balanis,
    "Antenna Theory", 3rd ed., 2005, Ch. 12 (both from memory); the derivation above
    is checked against a numerical Rayleigh-Sommerfeld integral in the validation tests.
    """
    p = np.asarray(power_w, dtype=float)
    a = np.asarray(radius_m, dtype=float)
    k = 2.0 * np.pi / np.asarray(wavelength_m, dtype=float)
    z = np.asarray(z_m, dtype=float)
    path = a * a / (np.sqrt(z * z + a * a) + z)
    return 4.0 * p / (np.pi * a * a) * np.sin(0.5 * k * path) ** 2


def aperture_power_density(rad: Radiator, points_enu: ArrayLike) -> np.ndarray:
    """Density of one dish at site-frame points, OET-65 aperture model with off-axis rule.

    Parameters
    ----------
    rad : siteexposure.physics.radiator.Radiator
        The antenna; ``diameter_m`` is required; the boresight is the beam axis.
    points_enu : array_like, shape (n, 3)
        Field points in the site frame (east, north, up). [m]

    Returns
    -------
    ndarray, shape (n,)
        Power density. [W/m^2]

    Notes
    -----
    With axial coordinate ``x``, off-axis distance ``rho``, range ``r`` and
    ``S_ax(x)`` the on-axis value (``S_nf`` for ``x <= R_nf`` and behind the dish)::

        r >= R_ff                    S = F P G(dir) / (4 pi r^2)
        r <  R_ff, x > 0, rho <= D   S = F S_ax(x)
        r <  R_ff, otherwise         S = min(F S_ax, max(0.01 F S_ax, F P G(dir)/(4 pi r^2)))

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2, aperture antennas.
    """
    d = rad.diameter_m
    if not d or d <= 0:
        raise InputError(
            f"antenna aperture diameter_m: {d!r}; the aperture model needs a positive dish diameter"
        )
    lam = rad.wavelength_m
    f = rad.reflection_factor
    g_peak = 10.0 ** (float(rad.pattern.peak_gain_dbi) / 10.0)
    pts = np.asarray(points_enu, dtype=float)
    xa, ya, za = to_antenna_frame(pts - rad.position_m, rad.azimuth_deg, rad.mechanical_tilt_deg)
    r, phi, theta = antenna_angles(xa, ya, za)
    rho = np.hypot(ya, za)

    s_nf = float(near_field_power_density_w_m2(rad.power_w, aperture_efficiency(g_peak, d, lam), d))
    r_nf = float(near_field_extent_m(d, lam))
    r_ff = float(far_field_onset_m(d, lam))
    with np.errstate(divide="ignore", invalid="ignore"):
        s_ax = f * np.where(xa <= r_nf, s_nf, s_nf * r_nf / xa)
        s_pat = (
            f
            * rad.power_w
            * np.asarray(rad.pattern.gain(phi, theta), dtype=float)
            / (4.0 * np.pi * r * r)
        )
    in_tube = (xa > 0.0) & (rho <= d)
    off = np.fmin(s_ax, np.fmax(OFF_AXIS_REDUCTION * s_ax, s_pat))
    near = np.where(in_tube, s_ax, off)
    return np.where(r >= r_ff, s_pat, near)


class ApertureModel:
    """Field-model face (:mod:`siteexposure.physics.fieldmodels`) of the dish model: a tapered
    circular aperture whose field is integrated ring by ring
    (:class:`siteexposure.physics.circular_aperture.CircularAperture`), as a plane wave (E and H
    densities equal). The OET-65 formulas of this module stay as the conservative cross-check
    the tests compare it with.

    It describes the beam of the dish from its aperture plane outwards; behind the aperture
    plane (the bowl, its rim and what is behind it) it takes the OET-65 off-axis rule and is
    validated only in the far field, so ``auto`` bounds it there
    (:mod:`siteexposure.physics.bound`).
    """

    word = "aperture"
    model_id = "circular-aperture"

    def __init__(self, rad: Radiator) -> None:
        from siteexposure.physics.circular_aperture import CircularAperture

        self.rad = rad
        self.dish = CircularAperture(rad)
        self.far_field_range_m = self.dish.far_field_range_m
        self.notes = (f"illumination (1 - (r/a)^2)^{self.dish.n:.2f} for the aperture efficiency "
                      f"{self.dish.efficiency:.2f} its gain implies",)

    @classmethod
    def from_radiator(cls, rad: Radiator, cache=None) -> ApertureModel:
        return cls(rad)

    def fields(self, points_enu):
        """The ring integral in front of the aperture plane about the beam; elsewhere in the
        near field (where it says nothing) the OET-65 off-axis rule of
        :func:`aperture_power_density`. [W/m^2]"""
        from siteexposure.physics.fieldmodels import Fields

        s = self.dish.density(points_enu)
        gap = np.isnan(s)
        if gap.any():
            pts = np.asarray(points_enu, dtype=float).reshape(-1, 3)
            s[gap] = aperture_power_density(self.rad, pts[gap])
        return Fields.plane_wave(s)

    def validated(self, points_ant, body_distance_m=None) -> np.ndarray:
        p = np.asarray(points_ant, dtype=float)
        return (self.dish.computed(p[..., 0], np.hypot(p[..., 1], p[..., 2]))
                | (np.einsum("...i,...i->...", p, p) >= self.far_field_range_m**2))
