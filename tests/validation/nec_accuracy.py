"""Error distributions of the field models against the PyNEC method-of-moments reference.

Run from the repository root to rewrite ``tests/data/nec/accuracy.md``::

    .venv/bin/python tests/validation/nec_accuracy.py

Each model is given only what a user has: the solver's far-field cuts as a pattern CSV v1
file, the aperture height (and width), the input power. Its density is compared with the
solver's near field (``tests/data/nec/<case>.npz``, built by ``generate_nec_reference.py``).

Reference quantity: the plane-wave-equivalent density ``|E_rms|^2 / eta0`` of NEC's near
electric field (what an E-field probe reading is compared with); the magnitude of the
time-averaged Poynting vector ``|Re(E x H*)| / 2`` is reported alongside. Points are judged
only where the reference is within 20 dB of the strongest reference value at the same range
(the same shell radius, or the same horizontal distance for the cylinder set). Points a model
declares not assessable are counted apart: never a pass, never an error figure.

Regions by distance ``r`` from the radiation centre: reactive-adjacent ``lambda/2 <= r <
lambda``; radiating near field ``lambda <= r < R_ff``; far field ``r >= R_ff`` with ``R_ff =
max(2 L^2/lambda, 3 lambda, 5 L)``, ``L`` the largest aperture dimension (for the cases of
``NEW_CASES``: the largest dimension of the body box, depth included; stored in the meta).

Second set (``NEW_CASES``): the reference quantity for the newer criteria is ``s_ref_w_m2 =
max(S_E, S_H)`` with ``S_H = eta0 |H_rms|^2``, and the judged mask ``judged_new`` keeps the
points at least lambda/2 from the origin, at least lambda/(2 pi) from the body box and above
the ground (where there is one), and of those the ones whose ``s_ref`` is within 20 dB of the
strongest such point of the same group.
"""

from __future__ import annotations

import json
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

DATA = Path(__file__).resolve().parents[1] / "data" / "nec"
CASES = ("dipole", "collinear", "panel", "panel_tilt6")
NEW_CASES = ("yagi3", "yagi6", "lpda", "fm4", "fm4_slant", "short_dipole", "small_loop",
             "monopole_mf", "dish")
MODELS = ("far-field", "cylindrical", "array", "auto")
REGIONS = ("lambda/2..lambda", "radiating near field", "far field")
JUDGE_DB = 20.0
LOW_DB, HIGH_DB = -1.5, 3.0


@dataclass
class CaseData:
    name: str
    meta: dict
    xyz_m: np.ndarray
    s_e_w_m2: np.ndarray  # |E_rms|^2 / eta0
    s_poynting_w_m2: np.ndarray  # |Re(E x H*)| / 2
    group: np.ndarray
    region: np.ndarray  # index into REGIONS, -1 closer than lambda/2
    judged: np.ndarray
    s_h_w_m2: np.ndarray | None = None  # eta0 |H_rms|^2
    s_ref_w_m2: np.ndarray | None = None  # max(S_E, S_H): the newer criteria's reference
    body_distance_m: np.ndarray | None = None  # from the body box surface, 0 inside
    judged_new: np.ndarray | None = None  # see the module docstring
    kind: np.ndarray | None = None  # point-set code per point (meta["point_sets"] names them)


def body_distance(xyz: np.ndarray, body: dict) -> np.ndarray:
    """Distance of points from the surface of the body box in the meta, 0 inside. [m]"""
    half = 0.5 * np.array([body["depth_m"], body["width_m"], body["height_m"]], dtype=float)
    q = np.abs(xyz - np.asarray(body["offset_m"], dtype=float)) - half
    return np.linalg.norm(np.maximum(q, 0.0), axis=-1)


def _within_of_group_max(s: np.ndarray, group: np.ndarray, candidate: np.ndarray) -> np.ndarray:
    """Candidates whose value is within JUDGE_DB of the largest candidate of their group."""
    out = np.zeros(s.shape, dtype=bool)
    for g in np.unique(group[candidate]):
        sel = (group == g) & candidate
        out[sel] = s[sel] >= s[sel].max() * 10.0 ** (-JUDGE_DB / 10.0)
    return out


def load_case(name: str) -> CaseData:
    from siteexposure.constants import ETA0

    with np.load(DATA / f"{name}.npz") as d:
        meta = json.loads(str(d["meta"]))
        xyz = np.asarray(d["xyz_m"], dtype=float)
        e = np.asarray(d["e_peak_v_m"], dtype=complex)
        h = np.asarray(d["h_peak_a_m"], dtype=complex)
        group = np.asarray(d["group"], dtype=int)
        kind = np.asarray(d["kind"], dtype=int)
    s_e = np.sum(np.abs(e) ** 2, axis=1) / (2.0 * ETA0)  # peak phasors: |E_rms|^2 = |E|^2/2
    s_h = ETA0 * np.sum(np.abs(h) ** 2, axis=1) / 2.0  # eta0 |H_rms|^2
    s_ref = np.maximum(s_e, s_h)
    s_p = np.linalg.norm(0.5 * np.real(np.cross(e, np.conj(h))), axis=1)
    lam = meta["wavelength_m"]
    r = np.linalg.norm(xyz, axis=1)
    r_ff = meta["far_field_range_m"]
    region = np.select([r < 0.5 * lam * (1 - 1e-9), r < lam, r < r_ff], [-1, 0, 1], 2)
    judged = np.zeros(r.shape, dtype=bool)
    for g in np.unique(group):
        sel = group == g
        judged[sel] = s_e[sel] >= s_e[sel].max() * 10.0 ** (-JUDGE_DB / 10.0)
    d_body = body_distance(xyz, meta["body"])
    candidate = (r >= 0.5 * lam * (1 - 1e-9)) & (d_body >= lam / (2.0 * np.pi) * (1 - 1e-9))
    if meta.get("ground_z_m") is not None:
        candidate &= xyz[:, 2] > meta["ground_z_m"]
    judged_new = _within_of_group_max(s_ref, group, candidate)
    return CaseData(name, meta, xyz, s_e, s_p, group, region, judged & (region >= 0),
                    s_h_w_m2=s_h, s_ref_w_m2=s_ref, body_distance_m=d_body,
                    judged_new=judged_new, kind=kind)


def radiator_for(case: CaseData):
    """The antenna as a user would describe it: pattern file, aperture size, power."""
    from siteexposure.physics.radiator import Radiator
    from siteexposure.readers.pattern_csv import read_pattern_csv

    m = case.meta
    return Radiator(
        position_m=np.zeros(3),
        azimuth_deg=90.0,  # NEC +x (boresight) = east; NEC +y (left of boresight) = north
        mechanical_tilt_deg=0.0,
        electrical_tilt_deg=float(m["electrical_tilt_deg"]),
        frequency_hz=float(m["frequency_mhz"]) * 1e6,
        power_w=float(m["input_power_w"]),
        pattern=read_pattern_csv(DATA / f"{case.name}.csv"),
        aperture_height_m=float(m["aperture_height_m"]),
        aperture_width_m=float(m["aperture_width_m"]) or None,
    )


def predict(case: CaseData, model: str) -> tuple[np.ndarray, np.ndarray, str]:
    """(density [W/m^2], assessable, model id) of one model at the case's points."""
    from siteexposure.physics.sources import choose_model, power_density

    rad = radiator_for(case)
    choice = choose_model(rad, model)
    s, ok = power_density(rad, choice, case.xyz_m)
    return np.asarray(s, dtype=float), np.asarray(ok, dtype=bool), choice.model_id


def errors_db(case: CaseData, s_model: np.ndarray, ok: np.ndarray, poynting: bool = False):
    ref = case.s_poynting_w_m2 if poynting else case.s_e_w_m2
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(ok, 10.0 * np.log10(s_model / ref), np.nan)


def summary(err: np.ndarray, n_judged: int) -> dict:
    e = err[np.isfinite(err)]
    out = {"judged": int(n_judged), "assessed": int(e.size)}
    if e.size:
        p5, med, p95 = np.percentile(e, [5, 50, 95])
        out.update(median=med, p5=p5, p95=p95, min=float(e.min()), max=float(e.max()),
                   within=float(np.mean((e >= LOW_DB) & (e <= HIGH_DB))))
    return out


def collect(cases=CASES, models=MODELS, poynting: bool = False) -> dict:
    """{(model, case): (errors dB on judged points, region index, model id)}."""
    out = {}
    for name in cases:
        case = load_case(name)
        for model in models:
            s, ok, mid = predict(case, model)
            err = errors_db(case, s, ok, poynting)
            j = case.judged
            out[(model, name)] = (err[j], case.region[j], mid)
    return out


def _row(label: str, st: dict) -> str:
    if not st.get("assessed"):
        return f"| {label} | {st['judged']} | 0 | - | - | - | - | - | - |"
    return (f"| {label} | {st['judged']} | {st['assessed']} | {st['median']:+.2f} | "
            f"{st['p5']:+.2f} | {st['p95']:+.2f} | {st['min']:+.2f} | {st['max']:+.2f} | "
            f"{100 * st['within']:.1f} % |")


def table(results: dict, title: str) -> list[str]:
    head = [f"### {title}", "",
            "| model, region | judged | assessed | median dB | 5th pct dB | 95th pct dB | "
            "min dB | max dB | within -1.5..+3 dB |",
            "|---|---:|---:|---:|---:|---:|---:|---:|---:|"]
    rows = []
    models = sorted({m for m, _ in results}, key=MODELS.index)
    for model in models:
        keys = [k for k in results if k[0] == model]
        ids = sorted({results[k][2] for k in keys})
        for ri, reg in enumerate(REGIONS):
            err = np.concatenate([results[k][0][results[k][1] == ri] for k in keys])
            rows.append(_row(f"{model} ({'/'.join(ids)}), {reg}", summary(err, err.size)))
    return head + rows + [""]


def per_case_table(results: dict, model: str) -> list[str]:
    head = [f"### `{model}` per reference case (all regions)", "",
            "| case | judged | assessed | median dB | 5th pct dB | 95th pct dB | min dB | "
            "max dB | within -1.5..+3 dB |",
            "|---|---:|---:|---:|---:|---:|---:|---:|---:|"]
    rows = []
    for (m, name), (err, _, mid) in results.items():
        if m == model:
            rows.append(_row(f"{name} ({mid})", summary(err, err.size)))
    return head + rows + [""]


def case_lines() -> list[str]:
    out = ["| case | frequency | aperture H x W | peak gain | Prad/Pin | R_ff |",
           "|---|---:|---:|---:|---:|---:|"]
    for name in CASES:
        m = load_case(name).meta
        lam = m["wavelength_m"]
        out.append(f"| {name}: {m['description']} | {m['frequency_mhz']:g} MHz | "
                   f"{m['aperture_height_m'] / lam:.2f} x {m['aperture_width_m'] / lam:.2f} "
                   f"lambda | {m['peak_gain_dbi']:.2f} dBi | {m['radiated_over_input']:.4f} | "
                   f"{m['far_field_range_m'] / lam:.1f} lambda |")
    return out + [""]


def write_markdown(path: Path = DATA / "accuracy.md") -> str:
    from siteexposure.atomic import write_text

    res_e = collect()
    res_p = collect(poynting=True)
    lines = [
        "# Accuracy of the field models against a method-of-moments solver",
        "",
        "Generated by `tests/validation/nec_accuracy.py` from the PyNEC reference cases in this "
        "folder (see README.md). Error = model minus reference, in dB. Each model got only the "
        "solver's far-field cuts as a pattern file, the aperture size and the input power. "
        "Judged: points within 20 dB of the strongest reference value at the same range; "
        "assessed: judged points the model did not flag as not assessable (inside the "
        "reactive radius max(lambda/2pi, 0.62 sqrt(D^3/lambda)) or too close to the aperture).",
        "Regions by distance from the radiation centre: lambda/2..lambda; radiating near field "
        "lambda..R_ff; far field beyond R_ff = max(2 L^2/lambda, 3 lambda, 5 L).",
        "",
        *case_lines(),
        *table(res_e, "Reference |E_rms|^2 / eta0 (plane-wave equivalent of the E field)"),
        *per_case_table(res_e, "auto"),
        *table(res_p, "Reference: magnitude of the time-averaged Poynting vector"),
        "Free space, no ground; a screening estimate, not a measurement.",
        "",
    ]
    text = "\n".join(lines)
    write_text(path, text)
    return text


if __name__ == "__main__":
    sys.stdout.write(write_markdown())
