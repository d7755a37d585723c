"""Full-sphere gain table appended to a pattern CSV v1 file (``<case>_3d.csv``).

Layout (the project's 3-D table design): after the cuts table, a header line
``azimuth_deg,elevation_deg,gain_dbi`` and one row per grid cell, azimuth-major then
elevation; azimuth clockwise from boresight seen from above (0..360), elevation -90..+90 in
the antenna frame. The reader is written elsewhere; this module writes the text and checks it
against the format rules (full grid, poles, coverage, agreement with the cuts and the peak).
"""

from __future__ import annotations

import numpy as np

HEADER_3D = "azimuth_deg,elevation_deg,gain_dbi"
MAX_GAP_DEG = 15.0
PEAK_TOLERANCE_DB = 0.5
CROSSING_TOLERANCE_DB = 1.0
POLE_TOLERANCE_DB = 1.0
STEP_DEG = 2.0


def nec_sphere(ctx, result_index: int, step_deg: float = STEP_DEG):
    """NEC power gain on a full-sphere grid: (az_deg (n_az,), el_deg (n_el,), gain_dbi
    (n_az, n_el)) with az = -phi (mod 360) and el = 90 deg - theta."""
    n_th = int(round(180.0 / step_deg)) + 1
    n_ph = int(round(360.0 / step_deg))
    ctx.rp_card(0, n_th, n_ph, 0, 0, 0, 0, 0.0, 0.0, step_deg, step_deg, 0.0, 0.0)
    rp = ctx.get_radiation_pattern(result_index)
    g = np.asarray(rp.get_gain(), dtype=float).reshape(n_th, n_ph)  # (theta, phi)
    th = np.asarray(rp.get_theta_angles(), dtype=float)
    ph = np.asarray(rp.get_phi_angles(), dtype=float)
    az = np.round(np.mod(-ph, 360.0), 9)
    el = 90.0 - th
    ia, ie = np.argsort(az), np.argsort(el)
    return az[ia], el[ie], g[:, ia].T[:, ie]


def floored(gain_dbi: np.ndarray, peak_dbi: float, floor_db: float) -> np.ndarray:
    """Gains floored at ``peak - floor_db`` and rounded to 0.01 dB, as in the cuts."""
    return np.round(np.maximum(gain_dbi, peak_dbi - floor_db), 2)


def table_text(az_deg, el_deg, gain_dbi) -> str:
    """The 3-D table: header and rows, azimuth-major then elevation."""
    rows = [HEADER_3D]
    for i, a in enumerate(az_deg):
        rows.extend(f"{a:g},{e:g},{g:.2f}" for e, g in zip(el_deg, gain_dbi[i], strict=True))
    return "\n".join(rows) + "\n"


def _gaps_ok(values: np.ndarray, periodic: bool) -> bool:
    v = np.sort(values)
    gaps = np.diff(v)
    if periodic:
        gaps = np.append(gaps, v[0] + 360.0 - v[-1])
    return bool(np.all(gaps <= MAX_GAP_DEG + 1e-9))


def check_table(az_deg, el_deg, gain_dbi, peak_gain_dbi: float, cuts: dict) -> list[str]:
    """Problems of a 3-D table against the format rules ([] when it is valid).

    ``cuts`` holds the (floored, rounded) cuts as written to the same file: ``h_angle_deg``,
    ``h_gain_dbi``, ``v_front_elev_deg``, ``v_front_gain_dbi``, ``v_back_elev_deg``,
    ``v_back_gain_dbi``.
    """
    az, el, g = np.asarray(az_deg, float), np.asarray(el_deg, float), np.asarray(gain_dbi, float)
    out = []
    if g.shape != (az.size, el.size):
        return [f"gain grid shape {g.shape}, expected {(az.size, el.size)}"]
    if len(set(az)) != az.size or len(set(el)) != el.size:
        out.append("repeated azimuth or elevation in the grid")
    if az.min() < 0 or az.max() > 360 or el.min() != -90 or el.max() != 90:
        out.append("grid does not span az 0..360, el -90..+90")
    if not (_gaps_ok(az[az < 360.0], True) and _gaps_ok(el, False)):
        out.append(f"grid gap above {MAX_GAP_DEG} deg")
    if not np.all(np.isfinite(g)) or g.min() < -150.0 or g.max() > 80.0:
        out.append("gain outside -150..80 dBi or not finite")
    for e in (-90.0, 90.0):
        col = g[:, np.flatnonzero(el == e)[0]]
        if col.max() - col.min() > POLE_TOLERANCE_DB:
            out.append(f"pole el {e:g}: gains differ by {col.max() - col.min():.2f} dB")
    if abs(g.max() - peak_gain_dbi) > PEAK_TOLERANCE_DB:
        out.append(f"table peak {g.max():.2f} dBi vs stated {peak_gain_dbi:.2f} dBi")
    crossings = (("h_angle_deg", "h_gain_dbi", None, 0.0),
                 ("v_front_elev_deg", "v_front_gain_dbi", 0.0, None),
                 ("v_back_elev_deg", "v_back_gain_dbi", 180.0, None))
    for ak, gk, a_fix, e_fix in crossings:
        for ang, gc in zip(np.asarray(cuts[ak], float), np.asarray(cuts[gk], float), strict=True):
            if a_fix is None:
                ia, ie = np.flatnonzero(np.isclose(az, ang)), np.flatnonzero(el == e_fix)
            else:
                ia, ie = np.flatnonzero(np.isclose(az, a_fix)), np.flatnonzero(np.isclose(el, ang))
            if ia.size and ie.size and abs(g[ia[0], ie[0]] - gc) > CROSSING_TOLERANCE_DB:
                out.append(f"{gk} at {ang:g} deg: cut {gc:.2f} dBi, table "
                           f"{g[ia[0], ie[0]]:.2f} dBi")
    return out
