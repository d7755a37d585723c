"""The physical envelope of an antenna: where its body is, and how far a point is from it.

A field model can say nothing reliable closer to the conductors than a fraction of a
wavelength, and a conservative bound needs the distance from the nearest part of the
radiating structure, not from its nominal centre. Both come from this envelope.

Shapes (in the antenna frame of :mod:`siteexposure.physics.orientation`: ``x`` boresight,
``y`` left, ``z`` up; the envelope follows azimuth and mechanical tilt, not the electrical
tilt, which steers the beam but not the body):

* **box** (panels, collinears, dipoles, Yagis, log-periodic arrays, loops): ``depth`` along
  ``x`` (reflector to front of a panel, the boom of a Yagi or log-periodic array), ``width``
  along ``y`` (the element span of a horizontal Yagi), ``height`` along ``z``. A missing
  dimension is zero (a thin wire is a segment, a flat loop a rectangle).
* **dish**: a cylinder of radius ``D/2`` on the ``x`` axis, from the back of the bowl
  (``DISH_BOWL_DEPTH_FRACTION * D`` behind the aperture plane, a deep reflector, f/D about
  0.3) to the feed (``depth_m`` in front of the aperture plane, 0 when not given). The
  radiation centre of a dish is the centre of its aperture plane.

By default the box is centred on the radiation centre (``position`` of the site file);
``offset_m`` (antenna frame) moves the body's centre away from it, e.g. for a panel whose
radome extends further in front of the dipoles than behind them.

All functions are vectorised over points (last axis = 3).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from siteexposure.physics.orientation import antenna_axes

#: Depth of a dish's bowl behind its aperture plane, as a fraction of the diameter:
#: D/(16 f/D) for f/D = 0.31 (a deep prime-focus reflector; common practice). [1]
DISH_BOWL_DEPTH_FRACTION = 0.2


@dataclass(frozen=True)
class Body:
    """The envelope of one antenna in its own frame.

    Attributes
    ----------
    height_m, width_m, depth_m : float
        Box extents along the antenna's z, y and x axes (0 where not given). For a dish,
        ``depth_m`` is how far the feed stands in front of the aperture plane. [m]
    diameter_m : float
        Dish diameter; 0 for a box. [m]
    offset_m : tuple of 3 floats
        Centre of the box (or of the dish's aperture plane) relative to the radiation
        centre, antenna frame (forward, left, up). [m]
    """

    height_m: float = 0.0
    width_m: float = 0.0
    depth_m: float = 0.0
    diameter_m: float = 0.0
    offset_m: tuple[float, float, float] = (0.0, 0.0, 0.0)

    @property
    def is_dish(self) -> bool:
        return self.diameter_m > 0.0

    @property
    def is_point(self) -> bool:
        """No size given at all: the envelope is the radiation centre itself."""
        return not (self.is_dish or self.height_m or self.width_m or self.depth_m)

    def box(self) -> tuple[np.ndarray, np.ndarray]:
        """Centre and half-extents of the body's bounding box, antenna frame. [m]"""
        off = np.asarray(self.offset_m, dtype=float).reshape(3)
        if self.is_dish:
            back = DISH_BOWL_DEPTH_FRACTION * self.diameter_m
            x0, x1 = -back, max(self.depth_m, 0.0)
            r = 0.5 * self.diameter_m
            return off + np.array([0.5 * (x0 + x1), 0.0, 0.0]), np.array([0.5 * (x1 - x0), r, r])
        return off.copy(), 0.5 * np.array([self.depth_m, self.width_m, self.height_m], float)

    @property
    def largest_dimension_m(self) -> float:
        """Largest extent of the body, depth included (L of the far-field range). [m]"""
        _, half = self.box()
        return float(2.0 * half.max())

    @property
    def bounding_radius_m(self) -> float:
        """Radius of the smallest sphere about the radiation centre holding the body. [m]"""
        c, half = self.box()
        return float(np.linalg.norm(np.abs(c) + half))

    def distance_m(self, points_ant) -> np.ndarray:
        """Distance of points (antenna frame) from the body's surface; 0 inside. [m]

        Box: the usual point-to-box distance. Dish: point-to-cylinder distance (radius
        ``D/2`` about the x axis, between the back of the bowl and the feed).
        """
        p = np.asarray(points_ant, dtype=float)
        c, half = self.box()
        q = p - c
        if self.is_dish:
            radial = np.hypot(q[..., 1], q[..., 2]) - half[1]
            axial = np.abs(q[..., 0]) - half[0]
            return np.hypot(np.maximum(radial, 0.0), np.maximum(axial, 0.0))
        out = np.maximum(np.abs(q) - half, 0.0)
        return np.sqrt(np.einsum("...i,...i->...", out, out))

    def nearest_point(self, points_ant) -> np.ndarray:
        """Nearest point of the body to each point (antenna frame); the point if inside. [m]"""
        p = np.asarray(points_ant, dtype=float)
        c, half = self.box()
        q = p - c
        if self.is_dish:
            rho = np.hypot(q[..., 1], q[..., 2])
            scale = np.where(rho > half[1], half[1] / np.maximum(rho, 1e-300), 1.0)
            out = np.stack([np.clip(q[..., 0], -half[0], half[0]), q[..., 1] * scale,
                            q[..., 2] * scale], axis=-1)
            return out + c
        return np.clip(q, -half, half) + c

    def cone_half_angle_rad(self, points_ant) -> tuple[np.ndarray, np.ndarray]:
        """Direction of each point seen from the body's centre, and the half-angle of the
        cone (about that direction) that holds every direction from a body point to it.

        Returns ``(unit vectors (..., 3), alpha [rad])``; ``alpha = pi`` for a point inside the
        body's bounding sphere about its centre (every direction possible).
        """
        p = np.asarray(points_ant, dtype=float)
        c, half = self.box()
        v = p - c
        r = np.sqrt(np.einsum("...i,...i->...", v, v))
        rb = float(np.linalg.norm(half))
        unit = v / np.maximum(r, 1e-300)[..., None]
        with np.errstate(invalid="ignore", divide="ignore"):
            alpha = np.where(r > rb, np.arcsin(np.clip(rb / np.maximum(r, 1e-300), 0.0, 1.0)),
                             np.pi)
        return unit, alpha


def to_antenna_frame_points(points_enu, position_m, azimuth_deg: float, mechanical_tilt_deg: float
                 ) -> np.ndarray:
    """Site-frame points expressed in the antenna frame (offset from the radiation centre). [m]"""
    d = np.asarray(points_enu, dtype=float) - np.asarray(position_m, dtype=float)
    x, y, z = antenna_axes(azimuth_deg, mechanical_tilt_deg)
    return np.stack([d @ x, d @ y, d @ z], axis=-1)


def site_from_antenna(points_ant, position_m, azimuth_deg: float, mechanical_tilt_deg: float
                      ) -> np.ndarray:
    """Antenna-frame points (from the radiation centre) in the site frame. [m]"""
    p = np.asarray(points_ant, dtype=float)
    x, y, z = antenna_axes(azimuth_deg, mechanical_tilt_deg)
    return (np.asarray(position_m, dtype=float) + p[..., :1] * x + p[..., 1:2] * y
            + p[..., 2:3] * z)


#: Aperture length per half-power beamwidth, lambda / HPBW[rad] times this: 0.886 for a
#: uniform line source (Balanis 4th ed. sec. 6.3, from memory), raised by a third because
#: tapered apertures are longer for the same beamwidth (a cosine taper: 1.19; from memory);
#: a longer body is the conservative guess for the bound. [1]
BEAMWIDTH_TO_LENGTH = 1.2


def _half_power_width_rad(angles_rad: np.ndarray, gain: np.ndarray) -> float:
    """Width of the main lobe at half power around the largest sample. [rad]"""
    i = int(np.argmax(gain))
    below = gain < 0.5 * gain[i]
    lo = np.flatnonzero(below[:i])
    hi = np.flatnonzero(below[i:])
    a_lo = angles_rad[lo[-1]] if lo.size else angles_rad[0]
    a_hi = angles_rad[i + hi[0]] if hi.size else angles_rad[-1]
    return float(a_hi - a_lo)


def inferred_body(pattern, wavelength_m: float) -> Body:
    """A body for an antenna given without one, from its pattern's beamwidths.

    Height ``1.2 lambda / HPBW_v`` and width ``1.2 lambda / HPBW_h`` (radians; see
    :data:`BEAMWIDTH_TO_LENGTH`), zero where the beam is wider than a half-wave dipole's
    (about 78 deg: no aperture needed to explain it). Used only to place the far-field range
    and the bound of such an antenna; the model record says so.
    """
    lam = float(wavelength_m)
    el = np.deg2rad(np.arange(-90.0, 90.01, 0.1))
    phi = np.deg2rad(np.arange(-180.0, 180.01, 0.1))
    g_v = np.asarray(pattern.gain(np.zeros_like(el), el), dtype=float)
    i = int(np.argmax(g_v))
    g_h = np.asarray(pattern.gain(np.mod(phi, 2 * np.pi), np.full_like(phi, el[i])), dtype=float)

    def size(width_rad: float) -> float:
        if not np.isfinite(width_rad) or width_rad >= np.deg2rad(78.0) or width_rad <= 0:
            return 0.0
        return BEAMWIDTH_TO_LENGTH * lam / width_rad

    return Body(height_m=size(_half_power_width_rad(el, g_v)),
                width_m=size(_half_power_width_rad(phi, g_h)))
