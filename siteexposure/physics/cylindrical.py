"""OET-65 cylindrical near-field model for line-source antennas, joined to the far field.

A vertical line source (a collinear omni or a sector panel whose aperture is much
taller than it is wide) radiates, close in, through a cylinder of its own height:
the power spreads horizontally but hardly vertically, so the density falls as 1/R
rather than 1/R^2.

Model
-----
In the antenna frame (``z`` along the aperture, see
:mod:`siteexposure.physics.orientation`) let ``rho`` be the distance from the
aperture axis, ``h`` the aperture height, ``theta_bw`` the horizontal half-power
beamwidth in degrees (360 for an omni) and ``g_h(phi)`` the horizontal pattern
relative to its maximum:

* near-field cylinder (``|z| <= h/2`` and ``rho < R_c``):
  ``S = F (180 / theta_bw) P / (pi rho h) g_h(phi)``;
* everywhere else: ``S = min(S_cyl, P G(phi, theta) F / (4 pi d^2))`` with ``d`` the
  distance from the point to the aperture segment (equal to ``rho`` beside the
  aperture, to the distance from the nearest end above or below it).

Joining rule (a decision of this project, derived from the two OET-65 formulas)
    The two formulas meet at the crossover distance
    ``R_c = G theta_bw h / 720`` (``G`` the numeric peak gain), where
    ``(180/theta_bw) P/(pi R h) = P G/(4 pi R^2)``. Inside ``R_c`` the far-field
    formula is the larger and overstates the density, because the gain has not
    built up yet; beyond ``R_c`` the cylindrical formula is the larger and overstates
    it, because it ignores vertical spreading. Each formula is used where it is the
    smaller, physically better bound: the cylindrical value inside ``R_c`` and the far
    field beyond. The join is continuous on the main beam. Taking "the larger of the
    two" instead would let the 1/R cylindrical value govern without bound far beyond
    the near field, so it was rejected.

Vertical extent and off-beam points (decision of this project)
    Within the aperture's vertical extent the cylindrical value is uniform in height,
    as OET-65 assumes (it ignores the electrical tilt, which only tilts the phase
    front close in). Above and below the aperture the density is the far-field value
    with the pattern gain toward the point but measured from the nearest end of the
    aperture (never from the centre, which would understate it just above the top),
    and never more than the cylindrical value at the same ``rho``. Behind and beside a
    sector antenna the horizontal pattern ``g_h(phi)`` (front-to-back ratio included)
    scales the cylindrical value.

Validity and assumptions
------------------------
* A line source: aperture height ``h`` much larger than its width and than the
  wavelength; the horizontal pattern has formed (horizontal far-field distance
  ``2 w^2/lambda`` small).
* The formula gives the density spatially averaged over the aperture height; local
  peaks close to the elements can exceed it (a factor of about 2 is quoted for the
  spatial peak; from memory).
* Points on the aperture axis inside its extent (``rho < lambda/(2 pi)``) are NaN;
  the dispatcher also masks the reactive near field.
* ``F`` (reflection factor) multiplies the near-field and far-field values alike.

References
----------
.. [1] FCC OET Bulletin 65, Edition 97-01, Aug. 1997, Section 2, "Near-field
   prediction" for omnidirectional and sector line-source antennas: omni
   S = P / (2 pi R h), sector S = (180 / theta_BW) P / (pi R h) (equations (19)-(20);
   equation numbers from memory, not confirmed).
.. [2] FCC OET Bulletin 65, Edition 97-01, eq. (3), S = P G / (4 pi R^2).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np
from numpy.typing import ArrayLike

from siteexposure.errors import InputError
from siteexposure.physics.orientation import antenna_angles, to_antenna_frame

if TYPE_CHECKING:
    from collections.abc import Callable

    from siteexposure.physics.pattern_base import GainPattern
    from siteexposure.physics.radiator import Radiator

_ELEV_STEP_DEG = 0.05
_AZ_STEP_DEG = 0.1


def cylindrical_power_density_w_m2(
    power_w: ArrayLike,
    rho_m: ArrayLike,
    aperture_height_m: ArrayLike,
    hpbw_h_deg: ArrayLike = 360.0,
    relative_gain: ArrayLike = 1.0,
    reflection_factor: ArrayLike = 1.0,
) -> np.ndarray:
    """OET-65 cylindrical near-field density ``S = F (180/theta_bw) P g_h / (pi rho h)``.

    Parameters
    ----------
    power_w : array_like
        Net power into the antenna. [W]
    rho_m : array_like
        Horizontal distance from the aperture axis. [m]
    aperture_height_m : array_like
        Height of the radiating aperture. [m]
    hpbw_h_deg : array_like, optional
        Horizontal half-power beamwidth; 360 for an omnidirectional antenna. [deg]
    relative_gain : array_like, optional
        Horizontal pattern relative to its maximum toward the point, ``g_h(phi)``. [1]
    reflection_factor : array_like, optional
        Field-squared reflection factor F. [1]

    Returns
    -------
    ndarray
        Spatially averaged power density; ``inf`` at ``rho = 0``. [W/m^2]

    Notes
    -----
    .. math:: S = F\\,\\frac{180}{\\theta_{BW}}\\,\\frac{P}{\\pi R h}\\,g_h(\\phi)

    With ``theta_bw = 360`` this is the omni form ``P / (2 pi R h)``: the power crossing
    the lateral surface of a cylinder of radius R and height h.

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2, near-field formulas for omni and sector
    antennas (equation numbers (19)-(20) from memory).

    Examples
    --------
    >>> round(float(cylindrical_power_density_w_m2(100.0, 2.0, 1.0)), 4)
    7.9577
    """
    rho = np.asarray(rho_m, dtype=float)
    with np.errstate(divide="ignore"):
        return (
            np.asarray(reflection_factor, dtype=float)
            * (180.0 / np.asarray(hpbw_h_deg, dtype=float))
            * np.asarray(power_w, dtype=float)
            * np.asarray(relative_gain, dtype=float)
            / (np.pi * rho * np.asarray(aperture_height_m, dtype=float))
        )


def crossover_distance_m(
    peak_gain: ArrayLike, aperture_height_m: ArrayLike, hpbw_h_deg: ArrayLike = 360.0
) -> np.ndarray:
    """Distance where the cylindrical and far-field formulas agree, ``R_c = G theta_bw h / 720``.

    Parameters
    ----------
    peak_gain : array_like
        Numeric peak gain. [1]
    aperture_height_m : array_like
        Aperture height. [m]
    hpbw_h_deg : array_like, optional
        Horizontal half-power beamwidth. [deg]

    Returns
    -------
    ndarray
        Crossover distance. [m]

    Notes
    -----
    Solving ``(180/theta) P/(pi R h) = P G/(4 pi R^2)`` for R; for an omni antenna
    (theta = 360) ``R_c = G h / 2``.

    References
    ----------
    Derived from FCC OET Bulletin 65, Ed. 97-01, eq. (3) and the sector near-field
    formula of Section 2.
    """
    return (
        np.asarray(peak_gain, dtype=float)
        * np.asarray(hpbw_h_deg, dtype=float)
        * np.asarray(aperture_height_m, dtype=float)
        / 720.0
    )


def power_consistent_beamwidth_deg(
    make_pattern: Callable[[float], GainPattern], lo_deg: float = 0.3, hi_deg: float = 180.0
) -> float | None:
    """Beamwidth at which a family of patterns radiates exactly the power put in.

    Parameters
    ----------
    make_pattern : callable
        ``make_pattern(beamwidth_deg) -> GainPattern`` with the peak gain held fixed.
    lo_deg, hi_deg : float
        Search interval. [deg]

    Returns
    -------
    float or None
        The beamwidth where ``(1/4 pi) oint G dOmega = 1`` (power conservation of a
        lossless pattern), or None where no beamwidth in the interval gives it. [deg]

    Notes
    -----
    Used where a datasheet gives the gain and one beamwidth but not the other: the
    missing one follows from energy conservation, so that the pattern, the gain and the
    power agree (the array-synthesis model normalises to radiated power and would
    otherwise disagree with the far-field formula). The sphere integral is
    :func:`siteexposure.physics.synthesis.directivity_ratio`.
    """
    from scipy.optimize import brentq

    from siteexposure.physics.synthesis import directivity_ratio

    def excess(bw: ArrayLike) -> np.ndarray:
        return directivity_ratio(make_pattern(bw)) - 1.0

    f_lo, f_hi = excess(lo_deg), excess(hi_deg)
    if f_lo * f_hi > 0.0:
        return None
    return float(brentq(excess, lo_deg, hi_deg, xtol=1e-4))


def peak_elevation_rad(pattern: GainPattern) -> float:
    """Elevation of the pattern maximum on the boresight vertical cut (phi = 0). [rad]"""
    theta = np.deg2rad(np.arange(-90.0, 90.0 + _ELEV_STEP_DEG / 2, _ELEV_STEP_DEG))
    g = np.asarray(pattern.gain(np.zeros_like(theta), theta), dtype=float)
    return float(theta[int(np.argmax(g))])


def horizontal_cut(
    pattern: GainPattern, elevation_rad: float | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """The pattern's horizontal cut at the elevation of its main beam.

    Returns
    -------
    phi : ndarray
        Azimuths from boresight, 0 .. 360 deg in 0.1 deg steps. [rad]
    gain : ndarray
        Numeric gain along the cut. [1]
    """
    el = peak_elevation_rad(pattern) if elevation_rad is None else float(elevation_rad)
    phi = np.deg2rad(np.arange(0.0, 360.0, _AZ_STEP_DEG))
    return phi, np.asarray(pattern.gain(phi, np.full_like(phi, el)), dtype=float)


def horizontal_hpbw_deg(pattern: GainPattern, elevation_rad: float | None = None) -> float:
    """Horizontal half-power beamwidth measured on the pattern's main-beam cut. [deg]

    The -3 dB points either side of boresight are found on a 0.1 deg grid and
    interpolated linearly in dB; a cut that never falls to half its maximum (an
    omnidirectional antenna) gives 360.
    """
    _, g = horizontal_cut(pattern, elevation_rad)
    with np.errstate(divide="ignore"):
        rel_db = 10.0 * np.log10(g / g.max())
    half = -10.0 * np.log10(2.0)
    if np.all(rel_db > half) or rel_db[0] <= half:
        # never falls to half power (omni), or boresight is not in the beam: widest form
        return 360.0

    def _edge(db: ArrayLike) -> np.ndarray:
        i = int(np.flatnonzero(db <= half)[0])
        a, b = db[i - 1], db[i]
        return (i - 1 + (a - half) / (a - b)) * _AZ_STEP_DEG

    right = _edge(rel_db)  # clockwise from boresight
    left = _edge(np.concatenate((rel_db[:1], rel_db[:0:-1])))  # counter-clockwise
    return float(min(right + left, 360.0))


def cylindrical_power_density(
    rad: Radiator, points_enu: ArrayLike, hpbw_h_deg: float | None = None
) -> np.ndarray:
    """Density of one line-source antenna at site-frame points, OET-65 cylindrical model.

    Parameters
    ----------
    rad : siteexposure.physics.radiator.Radiator
        The antenna; ``aperture_height_m`` is required.
    points_enu : array_like, shape (n, 3)
        Field points in the site frame (east, north, up). [m]
    hpbw_h_deg : float, optional
        Horizontal half-power beamwidth; measured from ``rad.pattern`` when omitted. [deg]

    Returns
    -------
    ndarray, shape (n,)
        Power density; NaN on the aperture axis inside its extent. [W/m^2]

    Notes
    -----
    See the module docstring for the regions, the joining rule and the treatment of
    points above, below and behind the aperture.

    References
    ----------
    FCC OET Bulletin 65, Ed. 97-01, Section 2 (cylindrical near-field formulas and
    eq. (3)).
    """
    h = rad.aperture_height_m
    if not h or h <= 0:
        raise InputError(
            f"antenna aperture height: {h!r}; the cylindrical model needs a positive "
            "aperture height_m"
        )
    pts = np.asarray(points_enu, dtype=float)
    xa, ya, za = to_antenna_frame(pts - rad.position_m, rad.azimuth_deg, rad.mechanical_tilt_deg)
    r, phi, theta = antenna_angles(xa, ya, za)
    rho = np.hypot(xa, ya)

    el = peak_elevation_rad(rad.pattern)
    bw = horizontal_hpbw_deg(rad.pattern, el) if hpbw_h_deg is None else float(hpbw_h_deg)
    _, cut = horizontal_cut(rad.pattern, el)
    g_cut_max = float(cut.max())
    g_peak = 10.0 ** (float(rad.pattern.peak_gain_dbi) / 10.0)

    g_h = np.asarray(rad.pattern.gain(phi, np.full_like(phi, el)), dtype=float) / g_cut_max
    s_cyl = cylindrical_power_density_w_m2(rad.power_w, rho, h, bw, g_h, rad.reflection_factor)

    beyond = np.maximum(np.abs(za) - 0.5 * h, 0.0)
    d_seg = np.hypot(rho, beyond)
    gain = np.asarray(rad.pattern.gain(phi, theta), dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        s_ff = rad.power_w * gain * rad.reflection_factor / (4.0 * np.pi * d_seg * d_seg)
    inside = np.abs(za) <= 0.5 * h
    r_c = float(crossover_distance_m(g_peak, h, bw))
    s = np.where(inside & (rho < r_c), s_cyl, np.fmin(s_cyl, s_ff))
    on_axis = inside & (rho < rad.wavelength_m / (2.0 * np.pi))
    return np.where(on_axis, np.nan, s)


class CylindricalModel:
    """Field-model face (:mod:`siteexposure.physics.fieldmodels`) of the OET-65 cylindrical
    model, as a plane wave (E and H densities equal).

    Validated, in the method-of-moments table of tests/data/nec, only where it hands over to
    the far field (beyond ``max(2 L^2/lambda, 3 lambda, 5 L)``): closer in it is a spatial
    average over the aperture height that can fall tens of dB below the field off the beam
    and beyond the aperture's ends, so ``auto`` never picks it and, if it were used under
    ``auto``, would bound it there.
    """

    word = "cylindrical"
    model_id = "oet65-cylindrical"

    def __init__(self, rad: Radiator) -> None:
        from siteexposure.physics.regions import far_field_range_m

        if not rad.aperture_height_m or rad.aperture_height_m <= 0:
            raise InputError(f"antenna aperture height: {rad.aperture_height_m!r}; the "
                             "cylindrical model needs a positive aperture height_m")
        self.rad = rad
        self.far_field_range_m = far_field_range_m(rad.wavelength_m,
                                                   rad.body.largest_dimension_m)
        self.notes: tuple[str, ...] = ()

    @classmethod
    def from_radiator(cls, rad: Radiator, cache=None) -> CylindricalModel:
        return cls(rad)

    def fields(self, points_enu):
        from siteexposure.physics.fieldmodels import Fields

        return Fields.plane_wave(cylindrical_power_density(self.rad, points_enu))

    def validated(self, points_ant, body_distance_m=None) -> np.ndarray:
        p = np.asarray(points_ant, dtype=float)
        return np.einsum("...i,...i->...", p, p) >= self.far_field_range_m**2
