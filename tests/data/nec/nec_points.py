"""Sample point sets of the reference cases (stored frame: boresight +x, +y left, +z up).

Each set is a list of groups; a group is the set of points judged together (the reference
within 20 dB of the group's strongest value): one sphere radius, one cylinder distance, one
body-shell distance, one depth under an array, one fence distance.
"""

from __future__ import annotations

import numpy as np
from nec_case import box_half_and_centre, largest_dimension_m

SHELL_ELEV_DEG = np.array(
    [-90, -60, -40, -30, -20, -15, -12, -9, -6, -4, -2, 0, 2, 4, 6, 9, 12, 15, 20, 30, 40, 60, 90],
    dtype=float,
)
AZ_STEP_DEG = 15.0
#: point-set codes stored in the ``kind`` array of every case
KIND_NAMES = {0: "sphere", 1: "cylinder", 2: "body shell", 3: "below array", 4: "base fence",
              5: "aperture axis", 6: "aperture radial cut"}
BODY_SHELL_WL = (1.0 / (2.0 * np.pi), 1.5 / (2.0 * np.pi), 0.25, 0.5, 1.0, 2.0)
BELOW_DEPTHS_M = (10.0, 12.5, 15.0, 17.5, 20.0, 22.5, 25.0)
BELOW_OFFSETS_M = (0.0, 1.0, 2.0, 4.0)
FENCE_DISTANCES_M = (2.0, 3.0, 5.0, 7.5, 10.0, 15.0, 20.0, 30.0)
FENCE_HEIGHTS_M = (0.1, 1.0, 2.0)
N_AZ_SPECIAL = 8  # azimuths (every 45 deg) of the below-array and fence points


class PointSets:
    """Accumulates groups of points with their set code and a label per group."""

    def __init__(self) -> None:
        self.xyz: list[np.ndarray] = []
        self.group: list[np.ndarray] = []
        self.kind: list[np.ndarray] = []
        self.labels: list[str] = []

    def add(self, xyz: np.ndarray, kind: int, label: str) -> None:
        xyz = np.asarray(xyz, dtype=float).reshape(-1, 3)
        if xyz.shape[0] == 0:
            return
        gid = len(self.labels)
        self.labels.append(label)
        self.xyz.append(xyz)
        self.group.append(np.full(xyz.shape[0], gid))
        self.kind.append(np.full(xyz.shape[0], kind))

    def arrays(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        return np.concatenate(self.xyz), np.concatenate(self.group), np.concatenate(self.kind)


def far_field_range_m(wavelength_m: float, body: dict) -> float:
    """Start of the far field used for judging: max(2 L^2/lambda, 3 lambda, 5 L), L the largest
    body dimension (height, width, depth or diameter)."""
    big = largest_dimension_m(body)
    return max(2.0 * big**2 / wavelength_m, 3.0 * wavelength_m, 5.0 * big)


def shell_ranges_m(wavelength_m: float, r_ff: float) -> np.ndarray:
    """Ranges from lambda/2 to 2x the far-field start, log spaced, plus lambda marks (as for
    the first four cases)."""
    lam = wavelength_m
    base = np.geomspace(0.5 * lam, 2.0 * r_ff, 22)
    extra = np.array([0.5, 0.75, 1.0]) * lam
    return np.unique(np.round(np.concatenate([base, extra]), 9))


def sphere_points(r: float, elev_deg=SHELL_ELEV_DEG, az_step_deg: float = AZ_STEP_DEG
                  ) -> np.ndarray:
    """Points on a sphere about the origin: NEC phi 0, 15, ... deg at each elevation (one
    point at each pole)."""
    phi = np.deg2rad(np.arange(0.0, 360.0, az_step_deg))
    out = []
    for el in elev_deg:
        e = np.deg2rad(el)
        ph = phi[:1] if abs(el) == 90.0 else phi
        out.append(np.stack([r * np.cos(e) * np.cos(ph), r * np.cos(e) * np.sin(ph),
                             np.full(ph.shape, r * np.sin(e))], axis=-1))
    return np.concatenate(out)


def add_spheres(ps: PointSets, wavelength_m: float, r_ff: float) -> None:
    for r in shell_ranges_m(wavelength_m, r_ff):
        ps.add(sphere_points(r), 0, f"sphere r = {r:.4g} m")


def long_axis(body: dict) -> int:
    """Index (0 x, 1 y, 2 z) of the body's longest side; z when sides tie."""
    size = [body["depth_m"], body["width_m"], body["height_m"]]
    return int(max(range(3), key=lambda i: (size[i], i)))


def add_cylinders(ps: PointSets, wavelength_m: float, body: dict) -> None:
    """Cylinders around the body's long axis through the box centre: distances 0.5, 1, 2, 4,
    8 lambda from the axis, 24 azimuths, at 0, +-L/4, +-L/2, +-(L/2 + lambda) along it."""
    lam = wavelength_m
    half, centre = box_half_and_centre(body)
    ax = long_axis(body)
    e_ax = np.eye(3)[ax]
    e1, e2 = {2: (np.eye(3)[0], np.eye(3)[1]), 0: (np.eye(3)[1], np.eye(3)[2]),
              1: (np.eye(3)[0], np.eye(3)[2])}[ax]
    length = 2.0 * half[ax]
    ts = np.array([-0.5 * length - lam, -0.5 * length, -0.25 * length, 0.0, 0.25 * length,
                   0.5 * length, 0.5 * length + lam])
    ang = np.deg2rad(np.arange(0.0, 360.0, AZ_STEP_DEG))
    for rho in np.array([0.5, 1.0, 2.0, 4.0, 8.0]) * lam:
        ring = rho * (np.cos(ang)[:, None] * e1 + np.sin(ang)[:, None] * e2)
        pts = (ts[:, None, None] * e_ax + ring[None, :, :]).reshape(-1, 3) + centre
        ps.add(pts, 1, f"cylinder about the {'xyz'[ax]} axis, {rho:.4g} m")


def body_shell_points(body: dict, d: float, n_target: int = 400) -> np.ndarray:
    """Points at distance ``d`` from the body box surface.

    A grid on each face of the box grown by ``d`` (spacing from the grown box's area and
    ``n_target``) is pulled onto the rounded offset surface: each grid point ``p`` becomes
    ``q + d (p - q)/|p - q|`` with ``q`` the box point nearest to ``p``. Face points stay on
    the flat faces; those near the grown box's edges and corners land on the quarter
    cylinders and sphere octants of the offset surface.
    """
    half, centre = box_half_and_centre(body)
    big = half + d
    area = 8.0 * (big[0] * big[1] + big[1] * big[2] + big[0] * big[2])
    step = np.sqrt(area / n_target)
    pts = []
    for ax in range(3):
        u, v = [i for i in range(3) if i != ax]
        gu = np.linspace(-big[u], big[u], max(2, int(np.ceil(2 * big[u] / step)) + 1))
        gv = np.linspace(-big[v], big[v], max(2, int(np.ceil(2 * big[v] / step)) + 1))
        uu, vv = np.meshgrid(gu, gv, indexing="ij")
        for sign in (-1.0, 1.0):
            p = np.zeros((uu.size, 3))
            p[:, ax] = sign * big[ax]
            p[:, u], p[:, v] = uu.ravel(), vv.ravel()
            pts.append(p)
    p = np.unique(np.round(np.concatenate(pts), 9), axis=0)
    q = np.clip(p, -half, half)
    n = p - q
    n /= np.linalg.norm(n, axis=1)[:, None]
    return q + d * n + centre


def add_body_shells(ps: PointSets, wavelength_m: float, body: dict) -> None:
    for f in BODY_SHELL_WL:
        d = f * wavelength_m
        label = {0: "lambda/(2 pi)", 1: "1.5 lambda/(2 pi)"}.get(BODY_SHELL_WL.index(f),
                                                                 f"{f:g} lambda")
        ps.add(body_shell_points(body, d), 2, f"body shell at {label} = {d:.4g} m from the box")


def _rings(offsets, z: float, n_az: int = N_AZ_SPECIAL) -> np.ndarray:
    ang = np.deg2rad(np.arange(n_az) * 360.0 / n_az)
    pts = []
    for rho in offsets:
        a = ang[:1] if rho == 0.0 else ang
        pts.append(np.stack([rho * np.cos(a), rho * np.sin(a), np.full(a.shape, z)], axis=-1))
    return np.concatenate(pts)


def add_below_array(ps: PointSets, z_bottom_m: float) -> None:
    """Points 10..25 m below the lowest conductor, 0..4 m from the vertical axis: one group
    per depth."""
    for depth in BELOW_DEPTHS_M:
        ps.add(_rings(BELOW_OFFSETS_M, z_bottom_m - depth), 3,
               f"below the array, {depth:g} m under its lowest conductor")


def add_base_fence(ps: PointSets, ground_z_m: float) -> None:
    """Points 2..30 m from the mast axis at 0.1, 1 and 2 m above ground: one group per
    distance."""
    ang = np.deg2rad(np.arange(N_AZ_SPECIAL) * 360.0 / N_AZ_SPECIAL)
    for rho in FENCE_DISTANCES_M:
        pts = [np.stack([rho * np.cos(ang), rho * np.sin(ang),
                         np.full(ang.shape, ground_z_m + hgt)], axis=-1)
               for hgt in FENCE_HEIGHTS_M]
        ps.add(np.concatenate(pts), 4, f"mast base fence, {rho:g} m from the axis")


def wire_clearance_m(points: np.ndarray, wires: np.ndarray) -> np.ndarray:
    """Distance of each point to the nearest wire axis; ``wires`` is (n, 7) end points and
    radius in the points' frame. [m]"""
    a, b = wires[:, 0:3], wires[:, 3:6]
    best = np.full(points.shape[0], np.inf)
    for i0 in range(0, a.shape[0], 256):
        aa, bb = a[i0 : i0 + 256], b[i0 : i0 + 256]
        ab = bb - aa
        ap = points[:, None, :] - aa[None, :, :]
        t = np.clip(np.sum(ap * ab, axis=-1) / np.sum(ab * ab, axis=-1), 0.0, 1.0)
        d = np.linalg.norm(ap - t[..., None] * ab[None], axis=-1)
        best = np.minimum(best, d.min(axis=1))
    return best
