"""The physics-level description of one radiating antenna, as the field models need it.

It is built from a :class:`siteexposure.containers.Antenna` (``Antenna.radiator()``)
or directly; every quantity is SI and already resolved (net power, linear pattern).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from siteexposure.constants import C0
from siteexposure.physics.pattern_base import GainPattern


@dataclass(frozen=True)
class Radiator:
    """One antenna for the field models.

    Attributes
    ----------
    position_m : ndarray, shape (3,)
        Radiation centre in the site frame (east, north, up). [m]
    azimuth_deg, mechanical_tilt_deg, electrical_tilt_deg : float
        Orientation, see :mod:`siteexposure.physics.orientation`; the electrical tilt is
        the one the field models apply (parametric patterns and array synthesis). [deg]
    frequency_hz : float
        Carrier frequency. [Hz]
    power_w : float
        Net time-averaged power into the antenna terminals. [W]
    pattern : GainPattern
        Directional gain in the antenna frame (linear).
    aperture_height_m, aperture_width_m, diameter_m : float or None
        Physical size of the radiating aperture; ``diameter_m`` for dishes. [m]
    reflection_factor : float
        F of S = P G F / (4 pi r^2); 1 = free space, 2.56 = OET-65 ground reflection. [1]
    """

    position_m: np.ndarray
    azimuth_deg: float
    mechanical_tilt_deg: float
    electrical_tilt_deg: float
    frequency_hz: float
    power_w: float
    pattern: GainPattern
    aperture_height_m: float | None = None
    aperture_width_m: float | None = None
    diameter_m: float | None = None
    reflection_factor: float = 1.0

    @property
    def wavelength_m(self) -> float:
        """Free-space wavelength. [m]"""
        return C0 / self.frequency_hz

    @property
    def largest_dimension_m(self) -> float:
        """Largest aperture dimension D (0 if none given). [m]"""
        dims = [d for d in (self.aperture_height_m, self.aperture_width_m, self.diameter_m) if d]
        return float(max(dims)) if dims else 0.0
