"""Small containers for a site description. They hold validated values in SI-friendly
units and hand them to the physics functions; they do nothing clever themselves.

The site reader (:mod:`siteexposure.readers.site_toml`) builds these from a TOML file;
Python users may build them directly.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from siteexposure.constants import DBD_TO_DBI, MHZ
from siteexposure.physics.pattern_base import GainPattern
from siteexposure.physics.radiator import Radiator

ACCESS_WORDS = ("public", "worker", "none")
MODEL_WORDS = ("auto", "far-field", "cylindrical", "array", "aperture")
POLARIZATION_WORDS = ("vertical", "horizontal", "slant", "circular")
POPULATION_FOR_ACCESS = {"public": "general", "worker": "occupational"}


@dataclass(frozen=True)
class Averaging:
    """Spatial averaging along a vertical line standing on the floor of each area.

    ``method`` is ``"vertical-line"`` (mean of the points) or ``"peak"`` (their maximum);
    the ``points`` heights are evenly spaced from ``bottom_m`` to ``top_m`` inclusive.
    """

    method: str = "vertical-line"
    bottom_m: float = 0.0
    top_m: float = 2.0
    points: int = 10

    def heights_m(self) -> np.ndarray:
        """Heights of the averaging points above the floor. [m]"""
        if self.points == 1:
            return np.array([0.5 * (self.bottom_m + self.top_m)])
        return np.linspace(self.bottom_m, self.top_m, self.points)


@dataclass(frozen=True)
class Area:
    """A surface people stand on."""

    name: str
    access: str  #: public | worker | none
    floor_m: float  #: standing surface height above site ground [m]
    outline_en: np.ndarray  #: (k, 2) polygon vertices, local east/north [m], not closed

    @property
    def population(self) -> str | None:
        """``general`` for public areas, ``occupational`` for worker areas, None otherwise."""
        return POPULATION_FOR_ACCESS.get(self.access)


@dataclass(frozen=True)
class Receptor:
    """A named point (a window, a balcony), evaluated exactly at ``at_m``, no averaging."""

    name: str
    at_m: np.ndarray  #: (3,) east, north, height above site ground [m]
    access: str = "public"

    @property
    def population(self) -> str | None:
        return POPULATION_FOR_ACCESS.get(self.access)


@dataclass(frozen=True)
class Antenna:
    """One transmitting antenna and its transmitter chain."""

    id: str
    operator: str
    position_m: np.ndarray  #: (3,) east, north, height of the radiation centre [m]
    azimuth_deg: float  #: boresight, clockwise from true north [deg]
    mechanical_tilt_deg: float  #: positive = down [deg]
    electrical_tilt_deg: float  #: positive = down; applied to parametric patterns [deg]
    frequency_mhz: float
    tx_power_w: float  #: per carrier at the transmitter output [W]
    pattern: GainPattern
    carriers: int = 1
    line_loss_db: float = 0.0
    activity: float = 1.0  #: time-averaging factor 0..1
    pattern_source: str = ""  #: file path or parametric model description
    aperture_height_m: float | None = None
    aperture_width_m: float | None = None
    diameter_m: float | None = None
    aperture_depth_m: float | None = None  #: body depth along boresight (dish: feed) [m]
    body_offset_m: tuple[float, float, float] = (0.0, 0.0, 0.0)  #: body centre, antenna frame [m]
    polarization: str = "vertical"  #: vertical | horizontal | slant | circular
    ground_plane: bool = False  #: a monopole on a conducting ground at the body's lower end
    model: str = "auto"
    reflection_factor: float = 1.0  #: field-strength-squared factor F of S = P G F / (4 pi r^2)

    @property
    def frequency_hz(self) -> float:
        return self.frequency_mhz * MHZ

    @property
    def net_power_w(self) -> float:
        """P = tx_power * carriers * activity * 10^(-line_loss/10). [W]"""
        return self.tx_power_w * self.carriers * self.activity * 10.0 ** (-self.line_loss_db / 10.0)

    @property
    def peak_gain_dbi(self) -> float:
        return float(self.pattern.peak_gain_dbi)

    @property
    def eirp_w(self) -> float:
        """Effective isotropic radiated power at the pattern peak, time-averaged. [W]"""
        return self.net_power_w * 10.0 ** (self.peak_gain_dbi / 10.0)

    @property
    def erp_w(self) -> float:
        """Effective radiated power relative to a half-wave dipole (EIRP / 1.64). [W]"""
        return self.eirp_w / 10.0 ** (DBD_TO_DBI / 10.0)

    def radiator(self) -> Radiator:
        """The physics-level description the field models take."""
        return Radiator(
            position_m=np.asarray(self.position_m, dtype=float),
            azimuth_deg=float(self.azimuth_deg),
            mechanical_tilt_deg=float(self.mechanical_tilt_deg),
            electrical_tilt_deg=float(self.electrical_tilt_deg),
            frequency_hz=self.frequency_hz,
            power_w=self.net_power_w,
            pattern=self.pattern,
            aperture_height_m=self.aperture_height_m,
            aperture_width_m=self.aperture_width_m,
            diameter_m=self.diameter_m,
            aperture_depth_m=self.aperture_depth_m,
            body_offset_m=tuple(float(v) for v in self.body_offset_m),
            polarization=self.polarization,
            ground_plane=bool(self.ground_plane),
            reflection_factor=self.reflection_factor,
        )


@dataclass(frozen=True)
class Site:
    """A whole site: where it is, who can stand where, and what transmits."""

    name: str
    origin_lat: float  #: WGS84 latitude of the local origin [deg]
    origin_lon: float  #: WGS84 longitude of the local origin [deg]
    limits: tuple[str, ...]
    antennas: tuple[Antenna, ...]
    areas: tuple[Area, ...] = ()
    points: tuple[Receptor, ...] = ()
    averaging: Averaging = field(default_factory=Averaging)
    resolution_m: float = 0.25
    zone_levels: tuple[float, ...] = ()  #: extra exposure-ratio contour levels beyond 1
    address: str = ""
    preparer: str = ""
    source_path: Path | None = None
    input_files: tuple[tuple[str, str], ...] = ()  #: (path, sha256) of the site and pattern files

    def antenna(self, antenna_id: str) -> Antenna:
        for ant in self.antennas:
            if ant.id == antenna_id:
                return ant
        raise KeyError(antenna_id)

    @property
    def operators(self) -> tuple[str, ...]:
        seen: dict[str, None] = {}
        for ant in self.antennas:
            seen.setdefault(ant.operator, None)
        return tuple(seen)
