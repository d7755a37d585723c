"""Error distributions of the field models against the method-of-moments references.

Run from the repository root to rewrite ``tests/data/nec/accuracy.md``::

    .venv/bin/python tests/validation/nec_accuracy.py

Each model is given only what a user has: the solver's far-field cuts as a pattern CSV v1
file (or, for the ``3-D`` rows, the same file with its full-sphere table), the body's size
and offset, the polarisation word, a ground plane where there is one, and the input power.
Its densities are compared with the solver's near field (``tests/data/nec/<case>.npz``,
built by ``generate_nec_reference.py``; the dish by ``dish_reference.py``).

Reference quantity (issue 12): ``max(S_E, S_H)`` with ``S_E = |E_rms|^2 / eta0`` and ``S_H =
eta0 |H_rms|^2``, compared with the model's ``max(S_E, S_H)``. Judged (``judged_new`` of
:func:`load_case`): points at least lambda/2 from the radiation centre and lambda/(2 pi) from
the body, above the ground, within 20 dB of the strongest such point of their group (the same
range). Points a model declares not assessable are counted as refused: never a pass, never
an error figure. Criteria for ``auto``: at least 95 % of judged points within -1.5 .. +3 dB,
none below -3 dB, at most 5 % refused; in the far field (r >= max(2 L^2/lambda, 3 lambda,
5 L), L the largest body dimension, depth included) within -0.5 .. +1.0 dB.

Regions by distance ``r`` from the radiation centre: ``lambda/2 <= r < lambda``; radiating
near field ``lambda <= r < R_ff``; far field ``r >= R_ff``.
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


ALL_CASES = CASES + NEW_CASES
MODELS = ("far-field", "cylindrical", "array", "aperture", "auto")
FF_LOW_DB, FF_HIGH_DB = -0.5, 1.0


def has_3d(name: str) -> bool:
    return (DATA / f"{name}_3d.csv").exists()


def radiator_for(case: CaseData, three_d: bool = False):
    """The antenna as a user would describe it: pattern file, body, polarisation, power."""
    from siteexposure.physics.radiator import Radiator
    from siteexposure.readers.pattern_csv import read_pattern_csv

    m = case.meta
    b = m["body"]
    if b.get("diameter_m"):
        body = {"diameter_m": float(b["diameter_m"]), "aperture_depth_m": float(b["depth_m"])
                or None}
    else:
        body = {"aperture_height_m": float(b["height_m"]) or None,
                "aperture_width_m": float(b["width_m"]) or None,
                "aperture_depth_m": float(b["depth_m"]) or None,
                "body_offset_m": tuple(float(v) for v in b["offset_m"])}
    file = DATA / (f"{case.name}_3d.csv" if three_d else f"{case.name}.csv")
    return Radiator(
        position_m=np.zeros(3),
        azimuth_deg=90.0,  # NEC +x (boresight) = east; NEC +y (left of boresight) = north
        mechanical_tilt_deg=0.0,
        electrical_tilt_deg=float(m["electrical_tilt_deg"]),
        frequency_hz=float(m["frequency_mhz"]) * 1e6,
        power_w=float(m["input_power_w"]),
        pattern=read_pattern_csv(file),
        polarization=m.get("polarization", "vertical"),
        ground_plane=m.get("ground_z_m") is not None,
        **body,
    )


@dataclass
class Prediction:
    s_w_m2: np.ndarray  # max(S_E, S_H); NaN where refused
    assessable: np.ndarray
    bounded: np.ndarray
    model_id: str


def applicable(case: CaseData, model: str) -> bool:
    b = case.meta["body"]
    dish = bool(b.get("diameter_m"))
    if model == "aperture":
        return dish
    if model == "cylindrical":
        return not dish and bool(b["height_m"])
    if model == "array":
        return not dish
    return True


def predict(case: CaseData, model: str, three_d: bool = False, mask=None) -> Prediction:
    """One model's densities at the case's points, or at ``mask`` of them (the dispatcher's
    composite for auto)."""
    from siteexposure.physics.sources import choose_model, field_densities

    rad = radiator_for(case, three_d)
    choice = choose_model(rad, model)
    pts = case.xyz_m if mask is None else case.xyz_m[mask]
    est = field_densities(rad, choice, pts)
    return Prediction(np.asarray(est.fields.s, dtype=float), est.assessable, est.bounded,
                      choice.model_id)


def errors_db(case: CaseData, pred: Prediction, mask=None) -> np.ndarray:
    """Model minus reference ``max(S_E, S_H)`` in dB (at ``mask`` of the points); NaN where
    refused."""
    ref = case.s_ref_w_m2 if mask is None else case.s_ref_w_m2[mask]
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(pred.assessable, 10.0 * np.log10(pred.s_w_m2 / ref), np.nan)


def summary(err: np.ndarray, n_judged: int) -> dict:
    e = err[np.isfinite(err)]
    out = {"judged": int(n_judged), "assessed": int(e.size)}
    if e.size:
        p5, med, p95 = np.percentile(e, [5, 50, 95])
        out.update(median=med, p5=p5, p95=p95, min=float(e.min()), max=float(e.max()),
                   within=float(np.mean((e >= LOW_DB) & (e <= HIGH_DB))))
    return out


@dataclass
class CaseResult:
    err: np.ndarray  # on judged points
    region: np.ndarray  # on judged points
    model_id: str
    bounded: float  # share of judged points given the bound


def evaluate(name: str, model: str = "auto", three_d: bool = False) -> CaseResult:
    case = load_case(name)
    j = case.judged_new
    pred = predict(case, model, three_d, j)
    return CaseResult(errors_db(case, pred, j), case.region[j], pred.model_id,
                      float(np.mean(pred.bounded)) if j.any() else 0.0)


def criteria(res: CaseResult) -> dict:
    """The issue-12 figures of one case: share within -1.5..+3 dB (of assessed), lowest
    error, share refused, far-field range of errors."""
    e = res.err
    ok = np.isfinite(e)
    ff = e[(res.region == 2) & ok]
    return {
        "within": float(np.mean((e[ok] >= LOW_DB) & (e[ok] <= HIGH_DB))) if ok.any() else 0.0,
        "min": float(e[ok].min()) if ok.any() else float("nan"),
        "max": float(e[ok].max()) if ok.any() else float("nan"),
        "refused": float(np.mean(~ok)) if e.size else 0.0,
        "ff_min": float(ff.min()) if ff.size else float("nan"),
        "ff_max": float(ff.max()) if ff.size else float("nan"),
        "bounded": res.bounded,
    }


def collect(cases=ALL_CASES, models=MODELS, three_d: bool = False) -> dict:
    """{(model, case): CaseResult} for every applicable model of every case."""
    out = {}
    for name in cases:
        if three_d and not has_3d(name):
            continue
        case = load_case(name)
        for model in models:
            if applicable(case, model):
                out[(model, name)] = evaluate(name, model, three_d)
    return out


def _row(label: str, st: dict) -> str:
    if not st.get("assessed"):
        return f"| {label} | {st['judged']} | 0 | - | - | - | - | - | - |"
    return (f"| {label} | {st['judged']} | {st['assessed']} | {st['median']:+.2f} | "
            f"{st['p5']:+.2f} | {st['p95']:+.2f} | {st['min']:+.2f} | {st['max']:+.2f} | "
            f"{100 * st['within']:.1f} % |")


_HEAD = ("| {first} | judged | assessed | median dB | 5th pct dB | 95th pct dB | min dB | max dB | "
         "within -1.5..+3 dB |")


def table(results: dict, title: str) -> list[str]:
    head = [f"### {title}", "", _HEAD.format(first="model, region"),
            "|---|---:|---:|---:|---:|---:|---:|---:|---:|"]
    rows = []
    models = sorted({m for m, _ in results}, key=MODELS.index)
    for model in models:
        keys = [k for k in results if k[0] == model]
        ids = sorted({results[k].model_id for k in keys})
        for ri, reg in enumerate(REGIONS):
            err = np.concatenate([results[k].err[results[k].region == ri] for k in keys])
            rows.append(_row(f"{model} ({'/'.join(ids)}), {reg}", summary(err, err.size)))
    return head + rows + [""]


def per_case_table(results: dict, model: str, title: str) -> list[str]:
    head = [f"### {title}", "",
            "| case | judged | within -1.5..+3 dB | min dB | max dB | refused | far field dB "
            "| bound used |",
            "|---|---:|---:|---:|---:|---:|---:|---:|"]
    rows = []
    for (m, name), res in results.items():
        if m != model:
            continue
        c = criteria(res)
        rows.append(case_row(name, res, c))
    return head + rows + [""]


def case_row(name: str, res: CaseResult, c: dict) -> str:
    return (f"| {name} ({res.model_id}) | {res.err.size} | {100 * c['within']:.1f} % | "
            f"{c['min']:+.2f} | {c['max']:+.2f} | {100 * c['refused']:.1f} % | "
            f"{c['ff_min']:+.2f} .. {c['ff_max']:+.2f} | {100 * c['bounded']:.1f} % |")


def case_lines() -> list[str]:
    out = ["| case | frequency | body H x W x D | polarisation | peak gain | Prad/Pin | R_ff |",
           "|---|---:|---:|---|---:|---:|---:|"]
    for name in ALL_CASES:
        m = load_case(name).meta
        lam = m["wavelength_m"]
        b = m["body"]
        size = (f"D {b['diameter_m'] / lam:.1f} lambda" if b.get("diameter_m") else
                f"{b['height_m'] / lam:.2f} x {b['width_m'] / lam:.2f} x "
                f"{b['depth_m'] / lam:.2f} lambda")
        out.append(f"| {name}: {m['description']} | {m['frequency_mhz']:g} MHz | {size} | "
                   f"{m.get('polarization', 'vertical')} | {m['peak_gain_dbi']:.2f} dBi | "
                   f"{m['radiated_over_input']:.4f} | {m['far_field_range_m'] / lam:.1f} lambda |")
    return out + [""]


def bound_margins() -> list[str]:
    """The envelope bound over the reference at every point outside the stand-off."""
    out = ["### Envelope bound over the reference (every point outside the stand-off)", "",
           "| case | points | min dB | 5th pct dB | median dB |", "|---|---:|---:|---:|---:|"]
    for name in ALL_CASES:
        case = load_case(name)
        m = bound_margin_db(case)
        out.append(f"| {name} | {m.size} | {m.min():+.2f} | {np.percentile(m, 5):+.2f} | "
                   f"{np.median(m):+.2f} |")
    return out + [""]


def bound_margin_db(case: CaseData, three_d: bool = False) -> np.ndarray:
    from siteexposure.physics.bound import EnvelopeBound
    from siteexposure.physics.regions import standoff_m

    rad = radiator_for(case, three_d)
    b = EnvelopeBound.from_radiator(rad).density(case.xyz_m)
    ok = case.body_distance_m >= standoff_m(case.meta["wavelength_m"]) * (1 - 1e-9)
    if case.meta.get("ground_z_m") is not None:
        ok &= case.xyz_m[:, 2] > case.meta["ground_z_m"]
    return 10.0 * np.log10(b[ok] / case.s_ref_w_m2[ok])


#: the package's copy of the tables, which the report quotes (siteexposure/writers/accuracy.py)
PACKAGE_COPY = Path(__file__).resolve().parents[2] / "siteexposure" / "accuracy_table.json"
SUMMARY = (
    "Error = model minus reference max(S_E, S_H) (method-of-moments solutions with PyNEC, a "
    "direct aperture integral for the dish), in dB. Each model got only what a user has: the "
    "far-field cuts as a pattern file, the body's size, the polarisation, a ground plane where "
    "there is one, and the input power. Judged: points at least lambda/2 from the centre and "
    "lambda/(2 pi) from the body, within 20 dB of the strongest such point at the same range. "
    "Regions: lambda/2..lambda; radiating near field lambda..R_ff; far field beyond R_ff = "
    "max(2 L^2/lambda, 3 lambda, 5 L)."
)


def _cells(lines: list[str]) -> list[list[str]]:
    return [[c.strip() for c in ln.strip().strip("|").split("|")] for ln in lines
            if ln.startswith("|") and not ln.startswith("|---")][1:]


def write_markdown(path: Path = DATA / "accuracy.md", copy: Path = PACKAGE_COPY) -> str:
    from siteexposure.atomic import write_text

    res = collect()
    res3 = collect(models=("auto",), three_d=True)
    cases = case_lines()
    auto = per_case_table(res, "auto", "`auto` per reference case (pattern cuts only)")
    auto3 = per_case_table(res3, "auto", "`auto` per reference case (pattern file with its "
                                         "full-sphere table)")
    by_model = table(res, "Every model, all cases, by region")
    bounds = bound_margins()
    write_text(copy, json.dumps({
        "source": "tests/data/nec/accuracy.md",
        "summary": SUMMARY,
        "cases": _cells(cases),
        "auto_by_case": _cells(auto[2:]),
        "auto_by_case_3d": _cells(auto3[2:]),
        "by_model_region": _cells(by_model[2:]),
        "bound_margins": _cells(bounds[2:]),
    }, indent=1, ensure_ascii=False) + "\n")
    lines = [
        "# Accuracy of the field models against method-of-moments references",
        "",
        "Generated by `tests/validation/nec_accuracy.py` from the reference cases in this folder "
        "(see README.md). Error = model minus reference max(S_E, S_H), in dB. Each model got "
        "only what a user has: the far-field cuts as a pattern file (the 3-D rows: with the "
        "full-sphere table), the body's size, the polarisation, a ground plane where there is "
        "one, and the input power. Judged: points at least lambda/2 from the centre and "
        "lambda/(2 pi) from the body, within 20 dB of the strongest such point at the same "
        "range. Refused: judged points a model did not assess.",
        "Regions by distance from the radiation centre: lambda/2..lambda; radiating near field "
        "lambda..R_ff; far field beyond R_ff = max(2 L^2/lambda, 3 lambda, 5 L), L the largest "
        "body dimension.",
        "",
        *cases,
        *auto,
        *auto3,
        *by_model,
        *bounds,
        "A screening estimate, not a measurement.",
        "",
    ]
    text = "\n".join(lines)
    write_text(path, text)
    return text


if __name__ == "__main__":
    sys.stdout.write(write_markdown())
