"""Compliance boundaries of one antenna in three dimensions: where its own field exceeds a limit.

The antenna's density (from :mod:`siteexposure.physics.sources`, the same model, stand-off
and bound as the area evaluation) is evaluated once on rays from the centre of its body:
every direction of a Fibonacci sphere, a fine fan about the beam peak (the actual, tilted
beam), the six directions a crew measures along and the beam axis itself. Along each ray the
outermost sample that exceeds the limit (or is not assessable: the stand-off is keep-out
whatever the field) is refined by bisection. The exceedance zone of the antenna is enclosed

* per direction, by the distance **from the envelope** in front of, behind, to the left and
  right of, above and below the antenna (the front is the horizontal boresight azimuth; left
  as seen from behind the antenna looking along boresight; above and below along the
  vertical): the zone's extent beyond the body's own extent that way;
* along the beam (``along_beam``): from the envelope along the beam-peak direction of the
  pattern as mounted (mechanical and electrical tilt included);
* by two simple shapes a crew can mark out: a **box** aligned with the horizontal boresight
  (its extents forward/back, left/right and up/down from the radiation centre) and a
  **cylinder** about the vertical through the radiation centre (radius, lowest and highest
  height relative to it).

Margin: rays are at most :data:`MAX_RAY_SPACING_DEG` apart over the sphere and
:data:`FINE_STEP_DEG` (azimuth, elevation) about the beam; the box, cylinder and distances are widened by what a
zone could reach between neighbouring rays, for the
ray spacing ``delta`` at the outermost radius ``r`` found, ``r sin(delta/2)`` (the farthest
a direction is from its nearest ray); ``tests/robustness/test_keep_out_encloses.py`` samples
densely outside and finds no exceedance.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from siteexposure.errors import InputError
from siteexposure.physics.body import site_from_antenna, to_antenna_frame_points
from siteexposure.physics.farfield import far_field_distance_for_density_m
from siteexposure.physics.orientation import antenna_axes, direction_from_angles

DIRECTIONS = ("front", "behind", "left", "right", "above", "below")
N_SPHERE_RAYS = 1500
MAX_RAY_SPACING_DEG = 5.6  #: about the spacing of N_SPHERE_RAYS Fibonacci rays (5.2 deg)
FINE_STEP_DEG = (2.0, 1.0)  #: azimuth, elevation steps of the fan about the beam
FINE_HALF_WIDTH_DEG = (60.0, 15.0)  #: azimuth, elevation half-widths of the fan about the beam
RADIUS_RATIO = 1.15  #: ratio of neighbouring radii of the sample grid on each ray
REFINE_ROUNDS = 7


def keep_out_directions_enu(azimuth_deg: float) -> dict[str, np.ndarray]:
    """Unit vectors (east, north, up) of the six crew directions of an antenna. [1]"""
    a = np.deg2rad(float(azimuth_deg))
    front = np.array([np.sin(a), np.cos(a), 0.0])
    left = np.array([-np.cos(a), np.sin(a), 0.0])
    up = np.array([0.0, 0.0, 1.0])
    return {"front": front, "behind": -front, "left": left, "right": -left, "above": up,
            "below": -up}


def _fibonacci(n: int) -> np.ndarray:
    i = np.arange(n) + 0.5
    z = 1.0 - 2.0 * i / n
    phi = np.pi * (1.0 + 5.0**0.5) * i
    rho = np.sqrt(1.0 - z * z)
    return np.column_stack([rho * np.cos(phi), rho * np.sin(phi), z])


def beam_peak_angles(pattern) -> tuple[float, float]:
    """(phi, theta) of the pattern's largest gain on a 0.5 deg grid (antenna frame). [rad]"""
    phi = np.deg2rad(np.arange(0.0, 360.0, 1.0))
    el = np.deg2rad(np.arange(-90.0, 90.01, 0.5))
    g = np.asarray(pattern.gain(phi[:, None], el[None, :]), dtype=float)
    i, j = np.unravel_index(int(np.nanargmax(g)), g.shape)
    return float(phi[i]), float(el[j])


@dataclass(frozen=True)
class Boundary:
    """The compliance boundary of one antenna for one limit.

    Attributes
    ----------
    distances_m : dict
        ``front``, ``behind``, ``left``, ``right``, ``above``, ``below`` and ``along_beam``:
        how far the zone reaches beyond the body that way (at least the stand-off). [m]
    box_m : dict
        ``forward``, ``back``, ``left``, ``right``, ``up``, ``down``: faces of the box that
        holds the zone, from the radiation centre along the horizontal boresight frame. [m]
    cylinder_m : dict
        ``radius`` about the vertical through the radiation centre, ``down`` and ``up``:
        its bottom and top below and above the radiation centre. [m]
    """

    distances_m: dict
    box_m: dict
    cylinder_m: dict


class KeepOutSearch:
    """Rays of one antenna evaluated once; :meth:`boundary` per limit.

    Parameters
    ----------
    rad : Radiator
    choice : ModelChoice
        The model of the area evaluation (:func:`siteexposure.physics.sources.choose_model`).
    """

    def __init__(self, rad, choice) -> None:
        from siteexposure.physics.sources import _prepared, standoff_distance_m

        self.rad, self.choice = rad, choice
        _, _, body = _prepared(rad, choice)
        self.body = body
        self.standoff = standoff_distance_m(rad)
        centre, half = body.box()
        self.centre_ant = centre
        self.centre_enu = site_from_antenna(centre, rad.position_m, rad.azimuth_deg,
                                            rad.mechanical_tilt_deg)
        self.body_radius = float(np.linalg.norm(half))
        self.beam = beam_peak_angles(rad.pattern)
        x, y, z = antenna_axes(rad.azimuth_deg, rad.mechanical_tilt_deg)
        self.axes = np.stack([x, y, z])  # rows: antenna axes in the site frame
        self.beam_enu = direction_from_angles(*self.beam) @ self.axes
        self.dirs, self.spacing = self._rays()
        self._radii_cache: dict = {}

    # -- rays ---------------------------------------------------------------------------
    def _rays(self) -> tuple[np.ndarray, np.ndarray]:
        sphere = _fibonacci(N_SPHERE_RAYS)
        p0, e0 = self.beam
        dp = np.deg2rad(np.arange(-FINE_HALF_WIDTH_DEG[0], FINE_HALF_WIDTH_DEG[0] + 1e-9,
                                  FINE_STEP_DEG[0]))
        de = np.deg2rad(np.arange(-FINE_HALF_WIDTH_DEG[1], FINE_HALF_WIDTH_DEG[1] + 1e-9,
                                  FINE_STEP_DEG[1]))
        el = np.clip(e0 + de, -np.pi / 2, np.pi / 2)
        fan = direction_from_angles(p0 + dp[:, None], el[None, :]).reshape(-1, 3) @ self.axes
        crew = np.array(list(keep_out_directions_enu(self.rad.azimuth_deg).values()))
        dirs = np.vstack([sphere, fan, crew, self.beam_enu[None, :]])
        dirs = dirs / np.linalg.norm(dirs, axis=1)[:, None]
        # a ray inside the fan's window has fan rays at most the fan's step away
        ant = dirs @ self.axes.T  # antenna-frame components
        phi = np.arctan2(-ant[:, 1], ant[:, 0])
        el = np.arcsin(np.clip(ant[:, 2], -1.0, 1.0))
        d_phi = np.abs((phi - p0 + np.pi) % (2.0 * np.pi) - np.pi)
        inside = ((d_phi <= np.deg2rad(FINE_HALF_WIDTH_DEG[0]))
                  & (np.abs(el - e0) <= np.deg2rad(FINE_HALF_WIDTH_DEG[1])))
        spacing = np.where(inside, np.deg2rad(max(FINE_STEP_DEG)), np.deg2rad(MAX_RAY_SPACING_DEG))
        return dirs, spacing

    def _density(self, points_enu) -> np.ndarray:
        """E- and H-field densities, stacked on a last axis of 2; zero within the stand-off of
        the body, which :meth:`_enclose` holds whatever the field (so that no ray is refined
        for it). [W/m^2]"""
        from siteexposure.physics.sources import body_clearance_m, field_densities

        pts = np.asarray(points_enu, dtype=float).reshape(-1, 3)
        ant = to_antenna_frame_points(pts, self.rad.position_m, self.rad.azimuth_deg,
                                      self.rad.mechanical_tilt_deg)
        inside = body_clearance_m(self.rad, self.body, ant) < self.standoff * (1.0 - 1e-9)
        out = np.zeros((len(pts), 2))
        if (~inside).any():
            est = field_densities(self.rad, self.choice, pts[~inside])
            out[~inside] = np.stack([est.fields.s_e, est.fields.s_h], axis=-1)
        return out

    @staticmethod
    def _ratio(s2: np.ndarray, lim_e: float, lim_h: float) -> np.ndarray:
        """``max(S_E / lim_e, S_H / lim_h)``, NaN where not assessable. [1]"""
        return np.fmax(s2[..., 0] / lim_e, s2[..., 1] / lim_h) + 0.0 * s2.sum(axis=-1)

    def _reach_m(self, limit: float) -> float:
        """A range beyond which even the peak gain, measured from the body's far side,
        gives less than the limit (every model here is bounded by that there). [m]"""
        g_peak = 10.0 ** (float(self.rad.pattern.peak_gain_dbi) / 10.0)
        r_far = float(far_field_distance_for_density_m(self.rad.power_w * g_peak * 4.0, limit,
                                                       self.rad.reflection_factor))
        return max(1.5 * r_far + 2.0 * self.body_radius, 4.0 * (self.body_radius + self.standoff))

    def _samples(self, r_max: float) -> tuple[np.ndarray, np.ndarray]:
        """Densities on every ray at radii ``r0 q^i`` (one fixed geometric grid, so that two
        searches of the same antenna share their samples whatever the limit or power), out
        to at least ``r_max``."""
        r0 = 0.25 * self.standoff
        n = max(2, int(np.ceil(np.log(max(r_max, r0) / r0) / np.log(RADIUS_RATIO))) + 1)
        done = self._radii_cache.get("grid")
        if done is None or len(done[0]) < n + 1:
            radii = np.concatenate([[0.0], r0 * RADIUS_RATIO ** np.arange(n)])
            pts = self.centre_enu + radii[None, :, None] * self.dirs[:, None, :]
            s = self._density(pts.reshape(-1, 3)).reshape(len(self.dirs), len(radii), 2)
            done = (radii, s)
            self._radii_cache["grid"] = done
        return done[0][: n + 1], done[1][:, : n + 1, :]

    # -- the boundary -------------------------------------------------------------------
    def boundary(self, limit_w_m2: float, limit_h_w_m2: float | None = None) -> Boundary:
        """The boundary where this antenna's ``S_E`` reaches ``limit_w_m2`` or its ``S_H``
        reaches ``limit_h_w_m2`` (the same limit when not given). [W/m^2]"""
        lim_e = float(limit_w_m2)
        lim_h = lim_e if limit_h_w_m2 is None else float(limit_h_w_m2)
        for v, given in ((lim_e, limit_w_m2), (lim_h, limit_h_w_m2)):
            if not np.isfinite(v) or v <= 0.0:
                raise InputError(f"power-density limit: {given!r}; expected a positive number")
        limit = min(lim_e, lim_h)
        radii, s = self._samples(self._reach_m(limit))
        over = ~(self._ratio(s, lim_e, lim_h) < 1.0)  # NaN (not assessable) counts as exceeding
        any_over = over.any(axis=1)
        last = np.where(any_over, over.shape[1] - 1 - np.argmax(over[:, ::-1], axis=1), 0)
        lo = radii[last]
        hi = radii[np.minimum(last + 1, len(radii) - 1)]
        rays = np.flatnonzero(any_over & (last < len(radii) - 1))
        for _ in range(REFINE_ROUNDS):
            if rays.size == 0:
                break
            mid = 0.5 * (lo[rays] + hi[rays])
            pts = self.centre_enu + mid[:, None] * self.dirs[rays]
            sm = self._density(pts)
            up = ~(self._ratio(sm, lim_e, lim_h) < 1.0)
            lo[rays] = np.where(up, mid, lo[rays])
            hi[rays] = np.where(up, hi[rays], mid)
        reach = np.where(any_over, hi, 0.0)
        return self._enclose(reach)

    def _enclose(self, reach: np.ndarray) -> Boundary:
        """Box, cylinder and distances holding every ray's outermost exceedance, the body
        and its stand-off, widened by the ray spacing (module docstring)."""
        widen = reach * np.sin(0.5 * self.spacing)
        pts = self.centre_enu + reach[:, None] * self.dirs
        crew = keep_out_directions_enu(self.rad.azimuth_deg)
        frame = np.stack([crew["front"], crew["left"], crew["above"]])
        rel = (pts - self.rad.position_m) @ frame.T  # forward, left, up from the centre
        hi = np.max(rel + widen[:, None], axis=0)
        lo = np.min(rel - widen[:, None], axis=0)
        # the body and its stand-off are keep-out whatever the field
        corners = self._body_corners_enu()
        brel = (corners - self.rad.position_m) @ frame.T
        b_hi, b_lo = brel.max(axis=0), brel.min(axis=0)
        hi = np.maximum(hi, b_hi + self.standoff)
        lo = np.minimum(lo, b_lo - self.standoff)
        dist = {"front": hi[0] - b_hi[0], "behind": b_lo[0] - lo[0], "left": hi[1] - b_hi[1],
                "right": b_lo[1] - lo[1], "above": hi[2] - b_hi[2], "below": b_lo[2] - lo[2]}
        # along the beam: the beam ray's own outermost exceedance, beyond the body that way
        b_ext = float(np.max((corners - self.centre_enu) @ self.beam_enu))
        dist["along_beam"] = max(float(reach[-1] + widen[-1]) - b_ext, self.standoff)
        horiz = np.hypot(rel[:, 0], rel[:, 1]) + widen
        b_h = np.hypot(brel[:, 0], brel[:, 1]).max() + self.standoff
        cyl = {"radius": float(max(horiz.max(), b_h)), "down": float(-lo[2]), "up": float(hi[2])}
        box = {"forward": float(hi[0]), "back": float(-lo[0]), "left": float(hi[1]),
               "right": float(-lo[1]), "up": float(hi[2]), "down": float(-lo[2])}
        return Boundary({k: float(max(v, self.standoff)) if k != "along_beam" else float(v)
                         for k, v in dist.items()}, box, cyl)

    def _body_corners_enu(self) -> np.ndarray:
        c, half = self.body.box()
        signs = np.array([[i, j, k] for i in (-1, 1) for j in (-1, 1) for k in (-1, 1)], float)
        return site_from_antenna(c + signs * half, self.rad.position_m, self.rad.azimuth_deg,
                                 self.rad.mechanical_tilt_deg)

    def exceeds(self, points_enu, limit_w_m2: float, limit_h_w_m2: float | None = None
                ) -> np.ndarray:
        """True where the antenna's own E or H density reaches its limit (or where it is not
        assessable)."""
        lim_h = float(limit_w_m2) if limit_h_w_m2 is None else float(limit_h_w_m2)
        return ~(self._ratio(self._density(points_enu), float(limit_w_m2), lim_h) < 1.0)


def keep_out_distances(rad, choice, limit_w_m2: float) -> dict[str, float]:
    """Distances from the envelope of :class:`Boundary` for one limit (convenience). [m]"""
    return KeepOutSearch(rad, choice).boundary(limit_w_m2).distances_m


__all__ = ["DIRECTIONS", "Boundary", "KeepOutSearch", "keep_out_directions_enu",
           "keep_out_distances", "to_antenna_frame_points"]
