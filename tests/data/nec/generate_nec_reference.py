"""Build the method-of-moments reference cases with PyNEC and store them compactly.

Run from the repository root::

    .venv/bin/python tests/data/nec/generate_nec_reference.py             # solve and write all
    .venv/bin/python tests/data/nec/generate_nec_reference.py --case lpda # one case
    .venv/bin/python tests/data/nec/generate_nec_reference.py --csv-only  # rewrite pattern files
    .venv/bin/python tests/data/nec/generate_nec_reference.py --meta-only # first four: meta keys

Cases: the first four (dipole, collinear, panel, panel_tilt6; defined and solved here) and
the second set (geometry in nec_new_cases.py, solved in nec_new_solve.py; the aperture case
``dish`` in dish_reference.py). For every case this writes

* ``<case>.npz``: the near-field samples (positions, complex peak E and H phasors in the
  NEC convention, the group each point is judged in, the input power), the far-field cuts
  and the model checks (input impedance, radiated over input power);
* ``<case>.csv``: the far-field cuts as a "pattern CSV v1" file (what a user would have),
  written with :func:`siteexposure.readers.pattern_csv.write_pattern_csv`;
* ``<case>_3d.csv`` (panel_tilt6 and the NEC cases of the second set): the same file with the
  full-sphere gain table appended (pattern3d.py).

Conventions: NEC-2 works with peak phasors and time dependence exp(+j w t); input power is
``0.5 Re(V I*)`` summed over the feeds, so a plane-wave-equivalent power density is
``|E_peak|^2 / (2 eta0)`` = ``|E_rms|^2 / eta0``. NEC's gain is power gain relative to the
input power; with perfectly conducting wires it equals directivity.

Geometry frame of every case: antenna axis along +z, boresight (panels) along +x, +y left of
boresight, origin at the radiation centre (a mast over ground: see nec_case.py); the pattern
files use azimuth clockwise from boresight seen from above
(= minus NEC's phi) and elevation = 90 deg - NEC's theta.

References
----------
G. J. Burke and A. J. Poggio, "Numerical Electromagnetics Code (NEC) - Method of Moments",
Lawrence Livermore National Laboratory, UCID-18834, 1981 (NEC-2 user's guide: GW, EX, RP,
NE, NH, GN and TL cards).
C. A. Balanis, Antenna Theory: Analysis and Design, 4th ed., Wiley, 2016, sec. 4.6
(half-wave dipole: directivity 1.643 = 2.15 dBi, Zin = 73 + j42.5 ohm).
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
if str(HERE) not in sys.path:
    sys.path.insert(0, str(HERE))

from nec_case import C0, Case  # noqa: E402,F401  (C0 kept importable from here)
from nec_points import AZ_STEP_DEG, SHELL_ELEV_DEG  # noqa: E402


def dipole_case() -> Case:
    """Half-wave dipole, 146 MHz, thin wire (a = 1e-5 lambda), 21 segments, centre fed."""
    c = Case("dipole", 146.0, "vertical half-wave dipole in free space")
    lam = c.wavelength_m
    half = 0.25 * lam
    c.wires.append((1, 21, 0.0, 0.0, -half, 0.0, 0.0, half, 1e-5 * lam))
    c.feeds.append((1, 11, 1.0 + 0.0j))
    c.aperture_height_m = 0.5 * lam
    c.aperture_width_m = 0.0
    return c


def collinear_case(n_elem: int = 4, spacing_wl: float = 0.8) -> Case:
    """Vertical collinear array of half-wave dipoles fed in phase, 450 MHz."""
    c = Case(
        "collinear",
        450.0,
        f"vertical collinear array: {n_elem} half-wave dipoles, centre spacing "
        f"{spacing_wl} lambda, each fed with 1 V at 0 deg",
    )
    lam = c.wavelength_m
    half = 0.25 * lam
    for i in range(n_elem):
        zc = (i - 0.5 * (n_elem - 1)) * spacing_wl * lam
        c.wires.append((i + 1, 21, 0.0, 0.0, zc - half, 0.0, 0.0, zc + half, 0.002 * lam))
        c.feeds.append((i + 1, 11, 1.0 + 0.0j))
    c.aperture_height_m = ((n_elem - 1) * spacing_wl + 0.5) * lam
    c.aperture_width_m = 0.0
    return c


def panel_case(tilt_deg: float, n_elem: int = 8, spacing_wl: float = 0.8) -> Case:
    """Column of vertical dipoles 0.25 lambda in front of a flat wire-grid reflector, 1900 MHz.

    The reflector is a square mesh of 0.1 lambda cells, 1.0 lambda wide, extending
    0.5 lambda beyond the outer dipoles' centres; every mesh edge is one segment, so wires
    meet only at segment ends (NEC-2 guide, GW card and wire-grid modelling rules). The
    feeds carry a linear phase progression ``k z_n sin(tilt)`` for a downtilt ``tilt``.
    """
    name = "panel" if tilt_deg == 0 else f"panel_tilt{tilt_deg:g}"
    c = Case(
        name,
        1900.0,
        f"panel: {n_elem} vertical dipoles (0.47 lambda, spacing {spacing_wl} lambda) "
        f"0.25 lambda in front of a 1.0 lambda wide wire-grid reflector; "
        f"electrical downtilt {tilt_deg:g} deg by feed phase progression",
    )
    c.electrical_tilt_deg = float(tilt_deg)
    lam = c.wavelength_m
    k = 2.0 * np.pi / lam
    half = 0.235 * lam
    tag = 1
    zc = [(i - 0.5 * (n_elem - 1)) * spacing_wl * lam for i in range(n_elem)]
    for z in zc:
        c.wires.append((tag, 11, 0.0, 0.0, z - half, 0.0, 0.0, z + half, 0.004 * lam))
        phase = k * z * np.sin(np.deg2rad(tilt_deg))
        c.feeds.append((tag, 6, complex(np.cos(phase), np.sin(phase))))
        tag += 1
    cell = 0.1 * lam
    ny = 10  # 1.0 lambda wide
    ztop = zc[-1] + 0.5 * lam
    nz = int(round(2 * ztop / cell))
    xr = -0.25 * lam
    ys = (np.arange(ny + 1) - 0.5 * ny) * cell
    zs = (np.arange(nz + 1) - 0.5 * nz) * cell
    rr = 0.002 * lam
    for y in ys:  # vertical mesh edges (parallel to the dipoles: they carry the image current)
        for j in range(nz):
            c.wires.append((tag, 1, xr, y, zs[j], xr, y, zs[j + 1], rr))
            tag += 1
    for z in zs:  # horizontal mesh edges
        for i in range(ny):
            c.wires.append((tag, 1, xr, ys[i], z, xr, ys[i + 1], z, rr))
            tag += 1
    c.aperture_height_m = float(zs[-1] - zs[0])
    c.aperture_width_m = float(ys[-1] - ys[0])
    return c


def all_cases() -> list[Case]:
    return [dipole_case(), collinear_case(), panel_case(0.0), panel_case(6.0)]


# --------------------------------------------------------------------------- NEC runs


def build_context(case: Case):
    """A solved PyNEC context for ``case`` (perfectly conducting wires; free space, or a
    perfectly conducting ground plane at NEC z = 0 when ``case.ground``: GE with the ground
    flag and GN 1; transmission lines from ``case.tls`` as TL cards)."""
    import PyNEC

    ctx = PyNEC.nec_context()
    geo = ctx.get_geometry()
    for tag, nseg, x1, y1, z1, x2, y2, z2, rad in case.wires:
        geo.wire(tag, nseg, x1, y1, z1, x2, y2, z2, rad, 1.0, 1.0)
    ctx.geometry_complete(1 if case.ground else 0)
    if case.ground:
        ctx.gn_card(1, 0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0)
    ctx.fr_card(0, 1, case.frequency_mhz, 0.0)
    for card in case.tls:
        ctx.tl_card(*card)
    for tag, seg, v in case.feeds:
        ctx.ex_card(0, tag, seg, 0, v.real, v.imag, 0.0, 0.0, 0.0, 0.0)
    ctx.xq_card(0)
    return ctx


def input_power_w(ctx) -> tuple[float, complex]:
    """Total input power 0.5 Re(V I*) over all feeds, and the first feed's impedance."""
    ip = ctx.get_input_parameters(0)
    p = float(np.sum(np.asarray(ip.get_power(), dtype=float)))
    z = complex(np.asarray(ip.get_impedance())[0])
    return p, z


def radiated_over_input(ctx, result_index: int) -> float:
    """Integrate NEC's power gain over the sphere: (1/4 pi) sum G dOmega = P_rad / P_in."""
    ctx.rp_card(0, 181, 361, 0, 0, 0, 0, 0.0, 0.0, 1.0, 1.0, 0.0, 0.0)
    rp = ctx.get_radiation_pattern(result_index)
    g = 10.0 ** (np.asarray(rp.get_gain(), dtype=float) / 10.0)  # (n_theta, n_phi)
    th = np.deg2rad(np.asarray(rp.get_theta_angles(), dtype=float))
    ph = np.deg2rad(np.asarray(rp.get_phi_angles(), dtype=float))
    g = g[:, :-1]  # phi = 360 duplicates phi = 0
    dphi = ph[1] - ph[0]
    ring = g.sum(axis=1) * dphi * np.sin(th)
    return float(np.trapezoid(ring, th) / (4.0 * np.pi))


def far_field_cuts(ctx, first_index: int) -> dict:
    """Horizontal cut (elevation 0) and front/back vertical cuts, 1 deg steps, in dBi."""
    out = {}
    ctx.rp_card(0, 1, 360, 0, 0, 0, 0, 90.0, 0.0, 0.0, 1.0, 0.0, 0.0)
    rp = ctx.get_radiation_pattern(first_index)
    nec_phi = np.asarray(rp.get_phi_angles(), dtype=float)
    g = np.asarray(rp.get_gain(), dtype=float).reshape(-1)
    az = np.mod(-nec_phi, 360.0)  # clockwise from boresight seen from above
    order = np.argsort(az)
    out["h_angle_deg"], out["h_gain_dbi"] = az[order], g[order]
    for k, (side, phi0) in enumerate((("front", 0.0), ("back", 180.0))):
        ctx.rp_card(0, 181, 1, 0, 0, 0, 0, 0.0, phi0, 1.0, 0.0, 0.0, 0.0)
        rp = ctx.get_radiation_pattern(first_index + 1 + k)
        th = np.asarray(rp.get_theta_angles(), dtype=float)
        gv = np.asarray(rp.get_gain(), dtype=float).reshape(-1)
        el = 90.0 - th
        order = np.argsort(el)
        out[f"v_{side}_elev_deg"], out[f"v_{side}_gain_dbi"] = el[order], gv[order]
    return out


# --------------------------------------------------------------------------- sample points

NULL_FLOOR_DB = 60.0  # pattern files: gains floored at peak - 60 dB (NEC's nulls are -999.99)


def far_field_range_m(case: Case) -> float:
    """Start of the far field used for judging: max(2 L^2 / lambda, 3 lambda, 5 L)."""
    lam = case.wavelength_m
    big = max(case.aperture_height_m, case.aperture_width_m)
    return max(2.0 * big**2 / lam, 3.0 * lam, 5.0 * big)


def shell_ranges_m(case: Case) -> np.ndarray:
    """Ranges from lambda/2 to 2x the far-field start, log spaced, plus lambda marks."""
    lam = case.wavelength_m
    r_ff = far_field_range_m(case)
    base = np.geomspace(0.5 * lam, 2.0 * r_ff, 22)
    extra = np.array([0.5, 0.75, 1.0]) * lam
    return np.unique(np.round(np.concatenate([base, extra]), 9))


def cylinder_samples(case: Case) -> tuple[np.ndarray, np.ndarray]:
    """Horizontal distances and heights for the cylinder set (people beside the antenna)."""
    lam = case.wavelength_m
    h = case.aperture_height_m
    rho = np.array([0.5, 1.0, 2.0, 4.0, 8.0]) * lam
    z = np.array([-0.5 * h - lam, -0.5 * h, -0.25 * h, 0.0, 0.25 * h, 0.5 * h, 0.5 * h + lam])
    return rho, z


def wire_clearance_m(points: np.ndarray, case: Case) -> np.ndarray:
    """Distance of each point to the nearest wire (to keep samples off the conductors)."""
    a = np.array([w[2:5] for w in case.wires], dtype=float)
    b = np.array([w[5:8] for w in case.wires], dtype=float)
    best = np.full(points.shape[0], np.inf)
    for i0 in range(0, a.shape[0], 256):
        aa, bb = a[i0 : i0 + 256], b[i0 : i0 + 256]
        ab = bb - aa
        ap = points[:, None, :] - aa[None, :, :]
        t = np.clip(np.sum(ap * ab, axis=-1) / np.sum(ab * ab, axis=-1), 0.0, 1.0)
        d = np.linalg.norm(ap - t[..., None] * ab[None], axis=-1)
        best = np.minimum(best, d.min(axis=1))
    return best


def near_fields(ctx, case: Case, first_index: int):
    """E and H phasors on the shell and cylinder sets; returns arrays and the next index."""
    lam = case.wavelength_m
    naz = int(round(360.0 / AZ_STEP_DEG))
    xyz, e, h, group, kind = [], [], [], [], []
    idx = first_index
    gid = 0

    def run(r, theta_deg):
        nonlocal idx
        ctx.ne_card(1, 1, naz, 1, r, 0.0, theta_deg, 0.0, AZ_STEP_DEG, 0.0)
        ctx.nh_card(1, 1, naz, 1, r, 0.0, theta_deg, 0.0, AZ_STEP_DEG, 0.0)
        ne = ctx.get_near_field_pattern(idx)
        nh = ctx.get_near_field_pattern(idx + 1)
        idx += 2
        p = np.stack([np.asarray(ne.get_x()), np.asarray(ne.get_y()), np.asarray(ne.get_z())], -1)
        ev = np.stack([np.asarray(ne.get_field_x()), np.asarray(ne.get_field_y()),
                       np.asarray(ne.get_field_z())], -1)
        hv = np.stack([np.asarray(nh.get_field_x()), np.asarray(nh.get_field_y()),
                       np.asarray(nh.get_field_z())], -1)
        return p, ev, hv

    for r in shell_ranges_m(case):
        for el in SHELL_ELEV_DEG:
            p, ev, hv = run(r, 90.0 - el)
            if abs(el) == 90.0:  # the pole: one point is enough
                p, ev, hv = p[:1], ev[:1], hv[:1]
            xyz.append(p), e.append(ev), h.append(hv)
            group.append(np.full(p.shape[0], gid)), kind.append(np.zeros(p.shape[0], int))
        gid += 1
    rho, zz = cylinder_samples(case)
    for rh in rho:
        for z in zz:
            r = float(np.hypot(rh, z))
            p, ev, hv = run(r, float(np.rad2deg(np.arctan2(rh, z))))
            xyz.append(p), e.append(ev), h.append(hv)
            group.append(np.full(p.shape[0], gid)), kind.append(np.ones(p.shape[0], int))
        gid += 1
    xyz, e, h = np.concatenate(xyz), np.concatenate(e), np.concatenate(h)
    group, kind = np.concatenate(group), np.concatenate(kind)
    keep = wire_clearance_m(xyz, case) >= 0.05 * lam
    return xyz[keep], e[keep], h[keep], group[keep], kind[keep], idx


# --------------------------------------------------------------------------- writing


def solve_case(case: Case) -> dict:
    import PyNEC  # noqa: F401  (fail early with a clear import error)

    t0 = time.perf_counter()
    ctx = build_context(case)
    p_in, z_in = input_power_w(ctx)
    cuts = far_field_cuts(ctx, 0)
    rad_ratio = radiated_over_input(ctx, 3)
    xyz, e, h, group, kind, _ = near_fields(ctx, case, 0)
    n_seg = sum(w[1] for w in case.wires)
    meta = {
        "name": case.name,
        "description": case.description,
        "frequency_mhz": case.frequency_mhz,
        "wavelength_m": case.wavelength_m,
        "aperture_height_m": case.aperture_height_m,
        "aperture_width_m": case.aperture_width_m,
        "electrical_tilt_deg": case.electrical_tilt_deg,
        "n_wires": len(case.wires),
        "n_segments": int(n_seg),
        "n_feeds": len(case.feeds),
        "input_power_w": p_in,
        "feed_impedance_ohm": [z_in.real, z_in.imag],
        "radiated_over_input": rad_ratio,
        "peak_gain_dbi": float(max(cuts["h_gain_dbi"].max(), cuts["v_front_gain_dbi"].max(),
                                   cuts["v_back_gain_dbi"].max())),
        "far_field_range_m": far_field_range_m(case),
        "pynec_version": pynec_version(),
        "seconds": round(time.perf_counter() - t0, 1),
    }
    np.savez_compressed(
        HERE / f"{case.name}.npz",
        meta=np.array(json.dumps(meta)),
        xyz_m=xyz,
        e_peak_v_m=e.astype(np.complex64),
        h_peak_a_m=h.astype(np.complex64),
        group=group.astype(np.int16),
        kind=kind.astype(np.int8),
        **{k: v for k, v in cuts.items()},
    )
    return meta


def pynec_version() -> str:
    from importlib.metadata import version

    return version("PyNEC")


def write_pattern_file(name: str) -> Path:
    """Write ``<name>.csv`` (pattern CSV v1) from the cuts stored in ``<name>.npz``, and
    ``<name>_3d.csv`` (the same cuts plus the full-sphere table) where the npz holds one."""
    from pattern3d import check_table, floored, table_text

    from siteexposure.readers.pattern_csv import format_pattern_csv, write_pattern_csv

    with np.load(HERE / f"{name}.npz") as d:
        meta = json.loads(str(d["meta"]))
        cuts = {k: np.asarray(d[k]) for k in d.files if k.startswith(("h_", "v_"))}
        sphere = ({k: np.asarray(d[k], dtype=float) for k in
                   ("sphere_az_deg", "sphere_el_deg", "sphere_gain_dbi")}
                  if "sphere_gain_dbi" in d.files else None)
    path = HERE / f"{name}.csv"
    peak = meta["peak_gain_dbi"]
    written = {k: (floored(v, peak, NULL_FLOOR_DB) if k.endswith("_dbi") else v)
               for k, v in cuts.items()}  # NEC's exact nulls (-999.99 dB) floored like a file
    origin = "NEC reference" if meta.get("kind") != "aperture" else "aperture-integral reference"
    args = dict(
        peak_gain_dbi=round(peak, 2),
        h_angle_deg=written["h_angle_deg"],
        h_gain_dbi=written["h_gain_dbi"],
        v_front_elev_deg=written["v_front_elev_deg"],
        v_front_gain_dbi=written["v_front_gain_dbi"],
        v_back_elev_deg=written["v_back_elev_deg"],
        v_back_gain_dbi=written["v_back_gain_dbi"],
        metadata={
            "name": f"{origin} {name}",
            "frequency_mhz": meta["frequency_mhz"],
            "electrical_tilt_deg": meta["electrical_tilt_deg"],
        },
    )
    write_pattern_csv(path, **args)
    if sphere is not None:
        from siteexposure.atomic import write_text

        g3 = floored(sphere["sphere_gain_dbi"], peak, NULL_FLOOR_DB)
        problems = check_table(sphere["sphere_az_deg"], sphere["sphere_el_deg"], g3,
                               round(peak, 2), written)
        if problems:
            raise RuntimeError(f"{name}_3d.csv: " + "; ".join(problems))
        text = format_pattern_csv(**args) + table_text(sphere["sphere_az_deg"],
                                                       sphere["sphere_el_deg"], g3)
        write_text(HERE / f"{name}_3d.csv", text)
    return path


# --------------------------------------------------------------------------- first four: meta

FIRST_KINDS = {"dipole": "dipole", "collinear": "collinear", "panel": "panel",
               "panel_tilt6": "panel"}
SPHERE_FOR = ("panel_tilt6",)  # first-four cases that get a full-sphere table too


def augment_first_four(case: Case) -> dict:
    """Add the second-set meta keys (body box, polarization, kind, ground, point-set names,
    group labels) to a stored first-four case, and for ``panel_tilt6`` the full-sphere gain
    grid from a fresh solve. The stored points and fields are copied unchanged."""
    from nec_case import body_box
    from nec_points import KIND_NAMES
    from nec_points import far_field_range_m as r_ff_body
    from pattern3d import nec_sphere

    path = HERE / f"{case.name}.npz"
    with np.load(path) as d:
        arrays = {k: np.asarray(d[k]) for k in d.files}
    meta = json.loads(str(arrays.pop("meta")))
    body = body_box(case)
    r_ff = r_ff_body(case.wavelength_m, body)
    if abs(r_ff / meta["far_field_range_m"] - 1.0) > 2e-3:
        raise RuntimeError(f"{case.name}: far-field range with the body box {r_ff} m differs "
                           f"from the stored {meta['far_field_range_m']} m")
    labels = [f"sphere r = {r:.4g} m" for r in shell_ranges_m(case)]
    labels += [f"cylinder about the z axis, {rho:.4g} m" for rho in cylinder_samples(case)[0]]
    meta.update({
        "kind": FIRST_KINDS[case.name],
        "polarization": "vertical",
        "body": body,
        "ground_z_m": None,
        "far_field_range_body_m": r_ff,
        "point_sets": {str(k): v for k, v in KIND_NAMES.items()},
        "group_labels": labels,
    })
    if case.name in SPHERE_FOR:
        ctx = build_context(case)
        az, el, g3 = nec_sphere(ctx, 0)
        arrays.update(sphere_az_deg=az, sphere_el_deg=el, sphere_gain_dbi=g3.astype(np.float32))
    tmp = path.with_name(path.stem + ".tmp.npz")
    np.savez_compressed(tmp, meta=np.array(json.dumps(meta)), **arrays)
    with np.load(tmp) as d:  # the stored fields must be untouched
        for k in ("xyz_m", "e_peak_v_m", "h_peak_a_m", "group", "kind"):
            if not np.array_equal(d[k], arrays[k]):
                raise RuntimeError(f"{case.name}: {k} changed while adding meta keys")
    tmp.replace(path)
    return meta


def main(argv: list[str] | None = None) -> int:
    from nec_new_cases import new_nec_cases

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--csv-only", action="store_true", help="only rewrite the pattern files")
    ap.add_argument("--meta-only", action="store_true",
                    help="first four cases: only add the newer meta keys (no new solve)")
    ap.add_argument("--case", action="append", help="limit to these case names")
    args = ap.parse_args(argv)
    known = [c.name for c in all_cases()] + [c.name for c in new_nec_cases()] + ["dish"]
    for name in args.case or []:
        if name not in known:
            print(f"Error: --case {name!r}: unknown case; expected one of {', '.join(known)}",
                  file=sys.stderr)
            return 2
    first = [c for c in all_cases() if not args.case or c.name in args.case]
    new = [c for c in new_nec_cases() if not args.case or c.name in args.case]
    do_dish = not args.case or "dish" in args.case
    for case in first:
        if not args.csv_only:
            if not args.meta_only:
                _report(solve_case(case))
            augment_first_four(case)
        write_pattern_file(case.name)
    if args.meta_only:
        return 0
    from nec_new_solve import solve_dish, solve_new_case

    for case in new:
        if not args.csv_only:
            _report(solve_new_case(case))
        write_pattern_file(case.name)
    if do_dish:
        if not args.csv_only:
            _report(solve_dish())
        write_pattern_file("dish")
    return 0


def _report(meta: dict) -> None:
    z = meta.get("feed_impedance_ohm")
    zt = f"Zin(feed 1) = {z[0]:.4g}{z[1]:+.4g}j ohm, " if z else ""
    print(f"{meta['name']}: {meta.get('n_segments', '-')} segments, {zt}"
          f"Prad/Pin = {meta['radiated_over_input']:.4f}, peak {meta['peak_gain_dbi']:.2f} dBi, "
          f"{meta['seconds']} s", file=sys.stderr)


if __name__ == "__main__":
    raise SystemExit(main())
