"""One reference antenna for the method-of-moments runs: wires, feeds, frame and body box.

Frame of every case (the antenna frame of the package, NEC's axes): boresight +x, +y left of
boresight, +z up; the stored origin is the point a user would give as the antenna position
(the radiation centre). NEC's own origin is ``origin_nec`` in the stored frame's axes: it is
zero except over a ground plane, where NEC needs the ground at its z = 0.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

C0 = 299792458.0  # only for building geometry in metres; the tests use siteexposure.constants


@dataclass
class Case:
    """One reference antenna: wires, feeds and the facts a user would know about it."""

    name: str
    frequency_mhz: float
    description: str
    wires: list = field(default_factory=list)  # (tag, nseg, x1, y1, z1, x2, y2, z2, radius)
    feeds: list = field(default_factory=list)  # (tag, segment, complex voltage)
    aperture_height_m: float = 0.0
    aperture_width_m: float = 0.0
    electrical_tilt_deg: float = 0.0
    # added with the second set of cases (defaults keep the first four as they were)
    polarization: str = "vertical"  # vertical | horizontal | slant | circular
    kind: str = ""  # descriptive word ("yagi", "lpda", ...), not for the models
    tls: list = field(default_factory=list)  # NEC TL cards: (tag1, seg1, tag2, seg2, z0, ...)
    ground: bool = False  # perfectly conducting ground plane at NEC z = 0 (GN 1)
    origin_nec: tuple = (0.0, 0.0, 0.0)  # stored origin in NEC coordinates
    special: tuple = ()  # extra point sets: "below" (under an array), "fence" (mast base)
    checks: dict = field(default_factory=dict)  # design facts and formula values for the README
    sources: str = ""  # where the dimensions come from

    @property
    def wavelength_m(self) -> float:
        return C0 / (self.frequency_mhz * 1e6)

    @property
    def ground_z_m(self) -> float | None:
        """Height of the ground plane in the stored frame (None in free space)."""
        return -float(self.origin_nec[2]) if self.ground else None

    def wires_stored(self) -> np.ndarray:
        """(n, 7) end points and radius of every wire in the stored frame."""
        w = np.array([wi[2:9] for wi in self.wires], dtype=float)
        o = np.asarray(self.origin_nec, dtype=float)
        w[:, 0:3] -= o
        w[:, 3:6] -= o
        return w


def body_box(case: Case) -> dict:
    """Axis-aligned box around all conductors (wire cylinders with their radius), stored frame.

    Returns ``{"height_m", "width_m", "depth_m", "diameter_m", "offset_m"}``: height along z,
    width along y, depth along x (boresight), offset = box centre minus the origin. A wire of
    radius ``a`` and unit direction ``u`` reaches ``a sqrt(1 - u_i^2)`` beyond its end points
    along axis ``i`` (flat ends, as NEC models them).
    """
    w = case.wires_stored()
    p1, p2, rad = w[:, 0:3], w[:, 3:6], w[:, 6]
    u = (p2 - p1) / np.linalg.norm(p2 - p1, axis=1)[:, None]
    reach = rad[:, None] * np.sqrt(np.clip(1.0 - u * u, 0.0, 1.0))
    lo = np.minimum(p1, p2) - reach
    hi = np.maximum(p1, p2) + reach
    lo, hi = lo.min(axis=0), hi.max(axis=0)
    if case.ground:  # the image is not part of the body; the mast stands on the ground
        lo[2] = max(lo[2], case.ground_z_m)
    size = hi - lo
    centre = 0.5 * (hi + lo)
    return box_dict(depth=size[0], width=size[1], height=size[2], offset=centre)


def box_dict(*, depth: float, width: float, height: float, offset, diameter: float | None = None
             ) -> dict:
    return {
        "height_m": float(height),
        "width_m": float(width),
        "depth_m": float(depth),
        "diameter_m": None if diameter is None else float(diameter),
        "offset_m": [float(round(v, 12)) + 0.0 for v in offset],
    }


def box_half_and_centre(body: dict) -> tuple[np.ndarray, np.ndarray]:
    """Half extents (x, y, z) and centre of a body box from its meta dict."""
    half = 0.5 * np.array([body["depth_m"], body["width_m"], body["height_m"]], dtype=float)
    return half, np.asarray(body["offset_m"], dtype=float)


def distance_to_box_m(points: np.ndarray, body: dict) -> np.ndarray:
    """Distance of each point from the box surface, 0 inside. [m]"""
    half, centre = box_half_and_centre(body)
    q = np.abs(np.asarray(points, dtype=float) - centre) - half
    return np.linalg.norm(np.maximum(q, 0.0), axis=-1)


def largest_dimension_m(body: dict) -> float:
    """Largest body dimension L (height, width, depth or diameter). [m]"""
    vals = [body["height_m"], body["width_m"], body["depth_m"], body.get("diameter_m") or 0.0]
    return float(max(vals))
