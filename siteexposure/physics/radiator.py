"""The physics-level description of one radiating antenna, as the field models need it.

It is built from a :class:`siteexposure.containers.Antenna` (``Antenna.radiator()``)
or directly; every quantity is SI and already resolved (net power, linear pattern).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from siteexposure.constants import C0
from siteexposure.physics.body import Body
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
    aperture_depth_m : float or None
        Depth of the body along boresight (a dish: the feed in front of the aperture). [m]
    body_offset_m : tuple of 3 floats
        Centre of the body relative to the radiation centre, antenna frame. [m]
    polarization : str
        Orientation of the radiating elements: vertical | horizontal | slant | circular.
    ground_plane : bool
        A monopole on a perfectly conducting ground at the lower end of its body.
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
    aperture_depth_m: float | None = None
    body_offset_m: tuple[float, float, float] = (0.0, 0.0, 0.0)
    polarization: str = "vertical"
    ground_plane: bool = False

    @property
    def wavelength_m(self) -> float:
        """Free-space wavelength. [m]"""
        return C0 / self.frequency_hz

    @property
    def largest_dimension_m(self) -> float:
        """Largest aperture dimension D (0 if none given); depth not included. [m]"""
        dims = [d for d in (self.aperture_height_m, self.aperture_width_m, self.diameter_m) if d]
        return float(max(dims)) if dims else 0.0

    @property
    def body(self) -> Body:
        """The physical envelope (:class:`siteexposure.physics.body.Body`)."""
        return Body(
            height_m=float(self.aperture_height_m or 0.0),
            width_m=float(self.aperture_width_m or 0.0),
            depth_m=float(self.aperture_depth_m or 0.0),
            diameter_m=float(self.diameter_m or 0.0),
            offset_m=tuple(float(v) for v in self.body_offset_m),
        )
