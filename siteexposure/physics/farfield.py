"""Far-field power density, EIRP helpers and field-region criteria.

The far-field (Friis) density of an antenna is the starting point of every exposure
screen: it is exact in the Fraunhofer region and, on the main beam, an overestimate
closer in, where the gain has not yet formed.

Validity and assumptions
------------------------
* Valid in the far field of the antenna: R >= max(2 D^2/lambda, 3 lambda, 5 D)
  (:func:`far_field_boundary_m`); closer in it assumes the full far-field gain has
  built up, which overstates the density on the main beam and may understate it off
  the main beam (side-lobe directions fill in in the near field).
* Free space, plus an optional field-squared reflection factor ``F`` that models a
  ground (or roof) reflection adding in phase: F = 1 free space, F = 2.56 the OET-65
  factor (field reflection coefficient 0.6 added in phase, 1.6^2 = 2.56), F = 4 a
  perfect reflector.
* Points in the reactive near field (:func:`reactive_near_field_radius_m`) are not
  assessable by this or any of the package's radiating-field models; the dispatcher
  (:mod:`siteexposure.physics.sources`) turns them into NaN plus a False flag.

References
----------
.. [1] R. F. Cleveland, D. M. Sylvar, J. L. Ulcek, "Evaluating Compliance with FCC
   Guidelines for Human Exposure to Radiofrequency Electromagnetic Fields", FCC OET
   Bulletin 65, Edition 97-01, Aug. 1997, Section 2: eqs. (3) S = P G / (4 pi R^2) and
   (4) S = EIRP / (4 pi R^2); eq. (6) S = 2.56 EIRP / (4 pi R^2) with ground reflection
   (equation numbers from memory).
.. [2] C. A. Balanis, "Antenna Theory: Analysis and Design", 3rd ed., Wiley, 2005,
   Sec. 2.2.4 (field regions: reactive near field R < 0.62 sqrt(D^3/lambda), far field
   R > 2 D^2/lambda) and Sec. 2.17 (Friis transmission equation).
.. [3] Naval Air Warfare Center Weapons Division, "Electronic Warfare and Radar Systems
   Engineering Handbook", NAWCWD TP 8347, section "Antenna Near Field", eq. [2]:
   R_ff = 2 D^2 / lambda for a phase error of lambda/16 (22.5 deg).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from siteexposure.constants import DBD_TO_DBI
from siteexposure.physics.orientation import antenna_angles, to_antenna_frame

if TYPE_CHECKING:
    from siteexposure.physics.radiator import Radiator

FREE_SPACE = 1.0  #: reflection factor F of free space [1]
GROUND_REFLECTION_FACTOR = 2.56  #: OET-65 field-squared ground-reflection factor 1.6^2 [1]
PERFECT_REFLECTION_FACTOR = 4.0  #: field doubled by a perfect in-phase reflection, 2^2 [1]
_DIPOLE_GAIN = 10.0 ** (DBD_TO_DBI / 10.0)


def eirp_w(power_w: ArrayLike, gain: ArrayLike) -> np.ndarray:
    """Effective isotropic radiated power ``EIRP = P G``.

    Parameters
    ----------
    power_w : array_like
        Net power into the antenna terminals. [W]
    gain : array_like
        Numeric power gain relative to isotropic (not dBi). [1]

    Returns
    -------
    ndarray
        EIRP. [W]

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2, definition beside eq. (4).

    Examples
    --------
    >>> float(eirp_w(10.0, 10.0))
    100.0
    """
    return np.asarray(power_w, dtype=float) * np.asarray(gain, dtype=float)


def erp_w(power_w: ArrayLike, gain: ArrayLike) -> np.ndarray:
    """Effective radiated power relative to a half-wave dipole, ``ERP = P G / 1.64``. [W]

    Notes
    -----
    EIRP = 1.64 ERP (a half-wave dipole has 2.15 dBi; common practice, also stated in
    FCC OET Bulletin 65, Ed. 97-01, Section 2).
    """
    return eirp_w(power_w, gain) / _DIPOLE_GAIN


def far_field_power_density_w_m2(
    power_w: ArrayLike, gain: ArrayLike, r_m: ArrayLike, reflection_factor: ArrayLike = FREE_SPACE
) -> np.ndarray:
    """Far-field power density ``S = P G F / (4 pi R^2)``.

    Parameters
    ----------
    power_w : array_like
        Net power into the antenna. [W]
    gain : array_like
        Numeric gain toward the field point. [1]
    r_m : array_like
        Distance from the radiation centre. [m]
    reflection_factor : array_like, optional
        Field-squared reflection factor F (1 free space, 2.56 OET-65 ground
        reflection). [1]

    Returns
    -------
    ndarray
        Power density; ``inf`` at ``r_m == 0``. [W/m^2]

    Notes
    -----
    .. math:: S = \\frac{P\\,G\\,F}{4\\pi R^2}

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, eqs. (3), (4) and, with F = 2.56, (6) (equation
    numbers from memory).

    Examples
    --------
    >>> round(float(far_field_power_density_w_m2(100.0, 1.0, 10.0)), 6)
    0.079577
    """
    r = np.asarray(r_m, dtype=float)
    with np.errstate(divide="ignore"):
        return (
            np.asarray(power_w, dtype=float)
            * np.asarray(gain, dtype=float)
            * np.asarray(reflection_factor, dtype=float)
            / (4.0 * np.pi * r * r)
        )


def far_field_distance_for_density_m(
    eirp: ArrayLike, limit_w_m2: ArrayLike, reflection_factor: ArrayLike = FREE_SPACE
) -> np.ndarray:
    """Distance at which the far-field density of an EIRP falls to ``limit_w_m2``.

    Parameters
    ----------
    eirp : array_like
        EIRP toward the direction of interest. [W]
    limit_w_m2 : array_like
        Power-density limit. [W/m^2]
    reflection_factor : array_like, optional
        Field-squared reflection factor F. [1]

    Returns
    -------
    ndarray
        ``R = sqrt(EIRP F / (4 pi S_limit))``. [m]

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, eq. (4) solved for R (and eq. (6) with F = 2.56).
    """
    return np.sqrt(
        np.asarray(eirp, dtype=float)
        * np.asarray(reflection_factor, dtype=float)
        / (4.0 * np.pi * np.asarray(limit_w_m2, dtype=float))
    )


def fraunhofer_distance_m(largest_dimension_m: ArrayLike, wavelength_m: ArrayLike) -> np.ndarray:
    """Far-field (Fraunhofer) distance ``2 D^2 / lambda``. [m]

    References
    ----------
    Balanis, Antenna Theory, 3rd ed., Sec. 2.2.4; NAWCWD TP 8347, "Antenna Near Field",
    eq. [2] (phase error lambda/16 across the aperture).
    """
    d = np.asarray(largest_dimension_m, dtype=float)
    return 2.0 * d * d / np.asarray(wavelength_m, dtype=float)


def far_field_boundary_m(largest_dimension_m: ArrayLike, wavelength_m: ArrayLike) -> np.ndarray:
    """Distance beyond which the far-field formula is trusted: ``max(2D^2/lambda, 3 lambda, 5 D)``.

    Notes
    -----
    2 D^2/lambda bounds the phase error across the aperture (Balanis Sec. 2.2.4);
    3 lambda keeps the reactive terms small and 5 D keeps the angle subtended by the
    antenna small (both common practice for electrically small or large-but-short
    antennas, where 2 D^2/lambda alone is too short).
    """
    d = np.asarray(largest_dimension_m, dtype=float)
    lam = np.asarray(wavelength_m, dtype=float)
    return np.maximum.reduce([fraunhofer_distance_m(d, lam), 3.0 * lam, 5.0 * d])


def reactive_near_field_radius_m(
    largest_dimension_m: ArrayLike, wavelength_m: ArrayLike
) -> np.ndarray:
    """Outer edge of the reactive near field, ``max(lambda / (2 pi), 0.62 sqrt(D^3 / lambda))``.

    Parameters
    ----------
    largest_dimension_m : array_like
        Largest dimension D of the radiating aperture (0 when unknown). [m]
    wavelength_m : array_like
        Free-space wavelength. [m]

    Returns
    -------
    ndarray
        Radius inside which the radiating-field models do not apply. [m]

    References
    ----------
    Balanis, Antenna Theory, 3rd ed., Sec. 2.2.4: R1 = 0.62 sqrt(D^3/lambda) (from
    memory, equation number not confirmed); lambda/(2 pi) is the radian sphere of a small
    antenna (H. A. Wheeler, "The radiansphere around a small antenna", Proc. IRE 47,
    1959; from memory).

    Examples
    --------
    >>> round(float(reactive_near_field_radius_m(0.0, 1.0)), 4)
    0.1592
    """
    d = np.asarray(largest_dimension_m, dtype=float)
    lam = np.asarray(wavelength_m, dtype=float)
    return np.maximum(lam / (2.0 * np.pi), 0.62 * np.sqrt(d**3 / lam))


def farfield_power_density(rad: Radiator, points_enu: ArrayLike) -> np.ndarray:
    """Pattern-aware far-field density of one antenna at site-frame points.

    Parameters
    ----------
    rad : siteexposure.physics.radiator.Radiator
        The antenna: position, orientation, net power, pattern, reflection factor.
    points_enu : array_like, shape (n, 3)
        Field points (east, north, up) in the site frame. [m]

    Returns
    -------
    ndarray, shape (n,)
        ``P G(phi, theta) F / (4 pi r^2)``; ``inf`` at the radiation centre. Masking the
        reactive near field is the dispatcher's job. [W/m^2]

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, eqs. (3) and (6).
    """
    pts = np.asarray(points_enu, dtype=float)
    xa, ya, za = to_antenna_frame(pts - rad.position_m, rad.azimuth_deg, rad.mechanical_tilt_deg)
    r, phi, theta = antenna_angles(xa, ya, za)
    gain = rad.pattern.gain(phi, theta)
    return far_field_power_density_w_m2(rad.power_w, gain, r, rad.reflection_factor)


class FarFieldModel:
    """Field-model face (:mod:`siteexposure.physics.fieldmodels`) of the far-field formula.

    ``S = P G(phi, theta) F / (4 pi r^2)`` with ``r`` from the radiation centre, as a plane
    wave (E and H densities equal). Validated (method-of-moments table of tests/data/nec)
    beyond the far-field range ``max(2 L^2/lambda, 3 lambda, 5 L)`` of the antenna's body;
    closer in it overstates the main beam and can understate a great deal off it (into the
    pattern's nulls), so ``auto`` bounds it there (:mod:`siteexposure.physics.bound`).
    """

    word = "far-field"
    model_id = "far-field-friis"

    def __init__(self, rad: Radiator, body=None) -> None:
        from siteexposure.physics.regions import far_field_range_m

        self.rad = rad
        self.body = rad.body if body is None else body
        self.far_field_range_m = far_field_range_m(rad.wavelength_m, self.body.largest_dimension_m)
        self.notes: tuple[str, ...] = ()

    @classmethod
    def from_radiator(cls, rad: Radiator, cache=None, body=None) -> FarFieldModel:
        return cls(rad, body)

    def fields(self, points_enu):
        from siteexposure.physics.fieldmodels import Fields

        return Fields.plane_wave(farfield_power_density(self.rad, points_enu))

    def validated(self, points_ant, body_distance_m=None) -> np.ndarray:
        p = np.asarray(points_ant, dtype=float)
        return np.einsum("...i,...i->...", p, p) >= self.far_field_range_m**2
