"""Solve the second set of reference cases (PyNEC, and the aperture integral for ``dish``)
and store each as ``<case>.npz`` next to this file (see README.md for the keys)."""

from __future__ import annotations

import json
import time

import dish_reference as dish
import generate_nec_reference as gen
import nec_points as npt
import numpy as np
from nec_case import Case, body_box
from pattern3d import nec_sphere

CLEARANCE_WL = 0.05  # points closer than this to a wire axis are dropped (as for the first four)
NEC_NULL_DB = -999.99  # NEC's gain for no field


def upper_half_ratio(ctx, result_index: int) -> float:
    """P_rad / P_in over a ground plane: (1/4 pi) int G dOmega over the upper half-space
    (theta 0..90 deg, 1 deg grid)."""
    ctx.rp_card(0, 91, 361, 0, 0, 0, 0, 0.0, 0.0, 1.0, 1.0, 0.0, 0.0)
    rp = ctx.get_radiation_pattern(result_index)
    g = 10.0 ** (np.asarray(rp.get_gain(), dtype=float) / 10.0)[:, :-1]
    th = np.deg2rad(np.asarray(rp.get_theta_angles(), dtype=float))
    ring = g.sum(axis=1) * np.deg2rad(1.0) * np.sin(th)
    return float(np.trapezoid(ring, th) / (4.0 * np.pi))


def pynec_fields_at(ctx, pts_nec: np.ndarray, first_index: int):
    """NEC's near E and H (peak phasors) at arbitrary points given in NEC coordinates."""
    n = pts_nec.shape[0]
    for x, y, z in pts_nec:
        ctx.ne_card(0, 1, 1, 1, float(x), float(y), float(z), 0.0, 0.0, 0.0)
    for x, y, z in pts_nec:
        ctx.nh_card(0, 1, 1, 1, float(x), float(y), float(z), 0.0, 0.0, 0.0)
    e = np.empty((n, 3), dtype=complex)
    h = np.empty((n, 3), dtype=complex)
    for i in range(n):
        for out, j in ((e, first_index + i), (h, first_index + n + i)):
            nf = ctx.get_near_field_pattern(j)
            out[i] = (nf.get_field_x()[0], nf.get_field_y()[0], nf.get_field_z()[0])
    return e, h, first_index + 2 * n


def fence_clearance_m(case: Case) -> float:
    """Clearance kept for the mast-base fence points: one segment length or 5 radii (the NEC
    thin-wire near field is used at a segment length and more from the axis)."""
    tag, nseg, x1, y1, z1, x2, y2, z2, rad = case.wires[0]
    seg = float(np.linalg.norm(np.subtract((x2, y2, z2), (x1, y1, z1)))) / nseg
    return max(seg, 5.0 * rad)


def case_points(case: Case, body: dict, r_ff: float, with_cylinders: bool = True):
    """All sample sets of a new case in the stored frame, filtered (above ground, off the
    wires); returns xyz, group, kind, group labels."""
    lam = case.wavelength_m
    ps = npt.PointSets()
    npt.add_spheres(ps, lam, r_ff)
    if with_cylinders:
        npt.add_cylinders(ps, lam, body)
    npt.add_body_shells(ps, lam, body)
    if "below" in case.special:
        z_bottom = body["offset_m"][2] - 0.5 * body["height_m"]
        npt.add_below_array(ps, z_bottom)
    if "fence" in case.special:
        npt.add_base_fence(ps, case.ground_z_m)
    xyz, group, kind = ps.arrays()
    keep = np.ones(xyz.shape[0], dtype=bool)
    if case.ground:
        keep &= xyz[:, 2] > case.ground_z_m + 1e-9
    if case.wires:
        clear = npt.wire_clearance_m(xyz, case.wires_stored())
        need = np.where(kind == 4, fence_clearance_m(case) if "fence" in case.special else 0.0,
                        CLEARANCE_WL * lam)
        keep &= clear >= need
    return xyz[keep], group[keep], kind[keep], ps.labels


def _gain_components(ctx, index: int, theta_deg: float, phi_deg: float) -> dict:
    """Total, vertical (E_theta) and horizontal (E_phi) power gain in one direction (RP
    output format 1), NEC's axial ratio (minor/major) and sense (0 linear, 1 right, 2 left)."""
    ctx.rp_card(0, 1, 1, 1, 0, 0, 0, theta_deg, phi_deg, 0.0, 0.0, 0.0, 0.0)
    rp = ctx.get_radiation_pattern(index)
    return {"total_dbi": float(np.ravel(rp.get_gain())[0]),
            "vertical_dbi": float(np.ravel(rp.get_gain_vert())[0]),
            "horizontal_dbi": float(np.ravel(rp.get_gain_horiz())[0]),
            "axial_ratio": float(np.ravel(rp.get_pol_axial_ratio())[0]),
            "sense": int(np.ravel(rp.get_pol_sense_index())[0])}


def sinusoidal_dipole_input_resistance_ohm(length_m: float, wavelength_m: float) -> float:
    """Input resistance of a thin centre-fed dipole with sinusoidal current (induced EMF):
    radiation resistance at the current maximum (Balanis, Antenna Theory, 4th ed., eq. (4-70),
    number from memory) referred to the feed, R_in = R_r / sin^2(kl/2) (eq. (4-79), from
    memory). [ohm]"""
    from scipy.special import sici

    kl = 2.0 * np.pi * length_m / wavelength_m
    g = np.euler_gamma
    si, ci = sici(kl)
    si2, ci2 = sici(2.0 * kl)
    rr = 60.0 * (g + np.log(kl) - ci + 0.5 * np.sin(kl) * (si2 - 2.0 * si)
                 + 0.5 * np.cos(kl) * (g + np.log(0.5 * kl) + ci2 - 2.0 * ci))
    return float(rr / np.sin(0.5 * kl) ** 2)


def extra_checks(ctx, case: Case, cuts: dict, first_rp: int, xyz, e, h, kind) -> dict:
    """Case-specific facts for the README and the tests' cross-checks."""
    lam = case.wavelength_m
    out = dict(case.checks)
    h_az, h_g = cuts["h_angle_deg"], cuts["h_gain_dbi"]
    out["gain_front_dbi"] = float(h_g[np.argmin(np.abs(h_az - 0.0))])
    out["gain_back_dbi"] = float(h_g[np.argmin(np.abs(h_az - 180.0))])
    out["front_to_back_db"] = out["gain_front_dbi"] - out["gain_back_dbi"]
    if case.kind == "fm-array":
        out["horizon_front"] = _gain_components(ctx, first_rp, 90.0, 0.0)
        out["zenith"] = _gain_components(ctx, first_rp + 1, 0.0, 0.0)
        out["nadir"] = _gain_components(ctx, first_rp + 2, 180.0, 0.0)
        out["horizon_back"] = _gain_components(ctx, first_rp + 3, 90.0, 180.0)
    if case.name == "short_dipole":
        ln = float(case.wires[0][7] - case.wires[0][4])
        out["length_m"] = ln
        out["rr_triangular_ohm"] = 20.0 * np.pi**2 * (ln / lam) ** 2
        out["rin_sinusoidal_ohm"] = sinusoidal_dipole_input_resistance_ohm(ln, lam)
    if case.name == "small_loop":
        circ = 2.0 * np.pi * case.checks["circle_radius_m"]
        out["rr_circle_ohm"] = 20.0 * np.pi**2 * (circ / lam) ** 4
        out["rr_polygon_area_ohm"] = 320.0 * np.pi**4 * case.checks["polygon_area_m2"] ** 2 / lam**4
    if case.name == "monopole_mf":
        fence = kind == 4
        out.update(_monopole_checks(case, xyz[fence], e[fence], h[fence]))
    return out


def _monopole_checks(case: Case, xyz, e, h) -> dict:
    """Image dipole of length 2h in free space, the short-monopole formulas, and the change
    of the fence fields (points ``xyz``, fields ``e``, ``h``) when the mast is cut into twice
    as many segments."""
    from nec_new_cases import monopole_mf_case

    lam = case.wavelength_m
    hgt = case.checks["height_m"]
    tag, nseg, *_rest, rad = case.wires[0]
    dip = Case("image_dipole", case.frequency_mhz, "free-space dipole of length 2h")
    dip.wires.append((1, 2 * nseg + 1, 0.0, 0.0, -hgt, 0.0, 0.0, hgt, rad))
    dip.feeds.append((1, nseg + 1, 1.0 + 0.0j))
    _, z_dip = gen.input_power_w(gen.build_context(dip))
    fine = monopole_mf_case(2 * nseg)
    ctx = gen.build_context(fine)
    _, z_fine = gen.input_power_w(ctx)
    e2, h2, _ = pynec_fields_at(ctx, xyz + np.asarray(fine.origin_nec), 0)
    de = 20.0 * np.log10(np.linalg.norm(e2, axis=1) / np.linalg.norm(e, axis=1))
    dh = 20.0 * np.log10(np.linalg.norm(h2, axis=1) / np.linalg.norm(h, axis=1))
    return {
        "image_dipole_impedance_ohm": [z_dip.real, z_dip.imag],
        "rr_short_monopole_ohm": 40.0 * np.pi**2 * (hgt / lam) ** 2,
        "rin_sinusoidal_half_ohm": 0.5 * sinusoidal_dipole_input_resistance_ohm(2 * hgt, lam),
        "impedance_with_twice_the_segments_ohm": [z_fine.real, z_fine.imag],
        "fence_e_change_db_with_twice_the_segments": [float(de.min()), float(de.max())],
        "fence_h_change_db_with_twice_the_segments": [float(dh.min()), float(dh.max())],
    }


def _meta_common(name, description, kind, polarization, lam, body, r_ff, labels) -> dict:
    return {
        "name": name,
        "description": description,
        "kind": kind,
        "polarization": polarization,
        "wavelength_m": lam,
        "body": body,
        "far_field_range_m": r_ff,
        "point_sets": {str(k): v for k, v in npt.KIND_NAMES.items()},
        "group_labels": labels,
    }


def solve_new_case(case: Case) -> dict:
    """Solve one new NEC case and write ``<name>.npz``; returns its meta."""
    t0 = time.perf_counter()
    lam = case.wavelength_m
    ctx = gen.build_context(case)
    ip = ctx.get_input_parameters(0)
    p_in = float(np.sum(np.asarray(ip.get_power(), dtype=float)))
    zs = [complex(z) for z in np.ravel(ip.get_impedance())]
    cuts = gen.far_field_cuts(ctx, 0)
    ratio = gen.radiated_over_input(ctx, 3) if not case.ground else upper_half_ratio(ctx, 3)
    az, el, g3 = nec_sphere(ctx, 4)
    if case.ground:  # NEC gives no field below a ground plane (its output there is not set)
        for side in ("front", "back"):
            cuts[f"v_{side}_gain_dbi"][cuts[f"v_{side}_elev_deg"] < 0.0] = NEC_NULL_DB
        g3[:, el < 0.0] = NEC_NULL_DB
    body = body_box(case)
    r_ff = npt.far_field_range_m(lam, body)
    xyz, group, kind, labels = case_points(case, body, r_ff)
    e, h, _ = pynec_fields_at(ctx, xyz + np.asarray(case.origin_nec, dtype=float), 0)
    checks = extra_checks(ctx, case, cuts, 5, xyz, e, h, kind)
    peak = float(max(np.max(cuts[k]) for k in ("h_gain_dbi", "v_front_gain_dbi",
                                                "v_back_gain_dbi")))
    meta = _meta_common(case.name, case.description, case.kind, case.polarization, lam, body,
                        r_ff, labels)
    meta.update({
        "frequency_mhz": case.frequency_mhz,
        "aperture_height_m": case.aperture_height_m,
        "aperture_width_m": case.aperture_width_m,
        "electrical_tilt_deg": case.electrical_tilt_deg,
        "ground_z_m": case.ground_z_m,
        "origin_nec_m": [float(v) for v in case.origin_nec],
        "n_wires": len(case.wires),
        "n_segments": int(sum(w[1] for w in case.wires)),
        "n_feeds": len(case.feeds),
        "feeds": [[t, s, v.real, v.imag] for t, s, v in case.feeds],
        "tl_cards": [list(map(float, c)) for c in case.tls],
        "input_power_w": p_in,
        "feed_impedance_ohm": [zs[0].real, zs[0].imag],
        "feed_impedances_ohm": [[z.real, z.imag] for z in zs],
        "radiated_over_input": ratio,
        "peak_gain_dbi": max(peak, float(g3.max())),
        "peak_gain_cuts_dbi": peak,
        "checks": checks,
        "clearance_m": CLEARANCE_WL * lam,
        "sources": case.sources,
        "pynec_version": gen.pynec_version(),
        "seconds": round(time.perf_counter() - t0, 1),
    })
    _save(case.name, meta, xyz, e, h, group, kind, cuts, (az, el, g3))
    return meta


def _save(name, meta, xyz, e, h, group, kind, cuts, sphere) -> None:
    extra = {}
    if sphere is not None:
        az, el, g3 = sphere
        extra = {"sphere_az_deg": az, "sphere_el_deg": el,
                 "sphere_gain_dbi": g3.astype(np.float32)}
    path = gen.HERE / f"{name}.npz"
    tmp = path.with_name(path.stem + ".tmp.npz")  # written whole, then renamed
    np.savez_compressed(
        tmp,
        meta=np.array(json.dumps(meta)),
        xyz_m=xyz,
        e_peak_v_m=e.astype(np.complex64),
        h_peak_a_m=h.astype(np.complex64),
        group=group.astype(np.int16),
        kind=kind.astype(np.int8),
        **cuts,
        **extra,
    )
    tmp.replace(path)


# --------------------------------------------------------------------------- aperture


def dish_points(body: dict, r_ff: float):
    """Spheres, cylinders, body shells (front half only), the beam axis and radial cuts."""
    lam = dish.wavelength_m()
    ps = npt.PointSets()
    npt.add_spheres(ps, lam, r_ff)
    npt.add_cylinders(ps, lam, body)
    npt.add_body_shells(ps, lam, body)
    xs = dish.axis_distances_m()
    octave = np.floor(np.log2(xs / (0.5 * lam))).astype(int)
    for o in np.unique(octave):
        sel = xs[octave == o]
        ps.add(np.stack([sel, 0 * sel, 0 * sel], axis=-1), 5,
               f"beam axis, x = {sel[0]:.4g} .. {sel[-1]:.4g} m")
    cut_x, steps = dish.radial_cut_distances_m()
    for x, step in zip(cut_x, steps, strict=True):
        rho = np.arange(0.0, 2.0 * dish.DIAMETER_M + 0.5 * step, step)
        for az in (0.0, 45.0, 90.0):  # NEC phi: 0 = +y (H-plane), 90 = +z (E-plane)
            a = np.deg2rad(az)
            pts = np.stack([np.full(rho.shape, x), rho * np.cos(a), rho * np.sin(a)], axis=-1)
            ps.add(pts, 6, f"radial cut at x = {x:.4g} m toward {az:g} deg from +y")
    xyz, group, kind = ps.arrays()
    xyz = np.where(np.abs(xyz) < 1e-9, 0.0, xyz)
    keep = xyz[:, 0] > 0.0
    return xyz[keep], group[keep], kind[keep], ps.labels


def dish_cuts() -> dict:
    """Far-field cuts of the aperture model (fine steps through the 0.8 deg main beam)."""
    def angles(limit):
        parts = [np.arange(0.0, 3.0, 0.02), np.arange(3.0, 10.0, 0.1), np.arange(10.0, 30.0, 0.5),
                 np.arange(30.0, limit + 1e-9, 1.0)]
        a = np.round(np.concatenate(parts), 6)
        return a

    def gain_dbi(d):
        with np.errstate(divide="ignore"):
            return 10.0 * np.log10(np.maximum(dish.far_field_gain(d), 1e-300))

    right = angles(180.0)
    h_az = np.unique(np.round(np.concatenate([right, 360.0 - right[(right > 0) & (right < 180)]]),
                              6))
    h_az = h_az[h_az < 360.0]
    a = np.deg2rad(h_az)
    h_g = gain_dbi(np.stack([np.cos(a), -np.sin(a), 0 * a], axis=-1))
    up = angles(90.0)
    el = np.unique(np.concatenate([-up, up]))
    e = np.deg2rad(el)
    v_f = gain_dbi(np.stack([np.cos(e), 0 * e, np.sin(e)], axis=-1))
    v_b = gain_dbi(np.stack([-np.cos(e), 0 * e, np.sin(e)], axis=-1))
    return {"h_angle_deg": h_az, "h_gain_dbi": h_g, "v_front_elev_deg": el,
            "v_front_gain_dbi": v_f, "v_back_elev_deg": el, "v_back_gain_dbi": v_b}


def solve_dish() -> dict:
    """Integrate the uniform circular aperture at every sample point and write dish.npz."""
    t0 = time.perf_counter()
    lam = dish.wavelength_m()
    body = dish.body()
    r_ff = npt.far_field_range_m(lam, body)
    xyz, group, kind, labels = dish_points(body, r_ff)
    e, h = dish.aperture_fields(xyz)
    sub = np.arange(0, xyz.shape[0], 97)
    e2, h2 = dish.aperture_fields(xyz[sub], n_rim=2 * dish.N_RIM)
    conv = float(max(np.max(np.abs(e2 - e[sub]) / np.linalg.norm(e[sub], axis=1)[:, None]),
                     np.max(np.abs(h2 - h[sub]) / np.linalg.norm(h[sub], axis=1)[:, None])))
    cuts = dish_cuts()
    g_peak = float(dish.far_field_gain(np.array([[1.0, 0.0, 0.0]]))[0])
    meta = _meta_common("dish", f"uniformly illuminated circular aperture, D = "
                        f"{dish.DIAMETER_M} m, E along z, radiating along +x (aperture "
                        "integration, not NEC)", "aperture", "vertical", lam, body, r_ff, labels)
    meta.update({
        "frequency_mhz": dish.FREQUENCY_MHZ,
        "aperture_height_m": dish.DIAMETER_M,
        "aperture_width_m": dish.DIAMETER_M,
        "diameter_m": dish.DIAMETER_M,
        "electrical_tilt_deg": 0.0,
        "ground_z_m": None,
        "aperture_efficiency": 1.0,
        "input_power_w": dish.INPUT_POWER_W,
        "e0_peak_v_m": dish.e0_peak_v_m(),
        "feed_impedance_ohm": None,
        "radiated_over_input": dish.radiated_over_input(),
        "peak_gain_dbi": 10.0 * np.log10(g_peak),
        "peak_gain_cuts_dbi": 10.0 * np.log10(g_peak),
        "method": "vector Rayleigh-Sommerfeld (first kind, Smythe) rim integral; H from the curl",
        "rim_nodes": dish.N_RIM,
        "rim_convergence_rel": conv,
        "points_behind": "none stored: points with x <= 0 are left out",
        "checks": {"near_field_extent_m": dish.DIAMETER_M**2 / (4.0 * lam),
                   "two_d2_over_lambda_m": 2.0 * dish.DIAMETER_M**2 / lam,
                   "gain_formula_dbi": 10.0 * np.log10((np.pi * dish.DIAMETER_M / lam) ** 2)},
        "seconds": round(time.perf_counter() - t0, 1),
    })
    _save("dish", meta, xyz, e, h, group, kind, cuts, None)
    return meta
