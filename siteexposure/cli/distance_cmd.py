"""``siteexposure distance``: compliance distance of one antenna for one limit set and population.

* Always: the boresight distance from the far-field formula, ``R = sqrt(P G F / (4 pi S))``
  (FCC OET Bulletin 65, Ed. 97-01, eq. (4) solved for R), with ``S`` the limit of the chosen
  set and population at the frequency.
* With ``--aperture-height``: the antenna becomes a line source (a sector panel with the
  3GPP TR 38.901 pattern form when ``--hpbw-h`` is below 360, an ITU-R F.1336 omni
  otherwise) and the near-field-aware distances in front, behind, to the sides, above and
  below come from the field model ``--model`` (default ``auto``), measured as
  :mod:`siteexposure.physics.keepout` describes.
* ``--json``: one JSON object on stdout with ``limit_w_m2``, ``distance_m`` (``boresight``
  always; ``front``, ``behind``, ``left``, ``right``, ``above``, ``below`` with an aperture
  height), the inputs echoed, the models used, notes and the cautions.
"""

from __future__ import annotations

import math
from typing import Any

import typer

from siteexposure.cli.app import app

POPULATIONS = ("general", "occupational")
DISTANCE_MODELS = ("auto", "far-field", "cylindrical", "array")


def _positive(option: str, value: float | None, what: str, hi: float = math.inf) -> None:
    from siteexposure.errors import InputError

    if value is None:
        return
    if not (math.isfinite(value) and 0.0 < value <= hi):
        rng = f"within (0, {hi:g}]" if math.isfinite(hi) else "greater than 0"
        raise InputError(f"{option}: value {value!r}; expected {what} {rng}")


def _check_inputs(
    freq: float,
    power_w: float,
    gain_dbi: float | None,
    gain_dbd: float | None,
    population: str,
    model: str,
    aperture_height: float | None,
    hpbw_h: float | None,
    hpbw_v: float | None,
    reflection: float,
) -> float:
    """Validate the options; return the peak gain in dBi."""
    from siteexposure.constants import DBD_TO_DBI
    from siteexposure.errors import InputError

    _positive("--freq", freq, "a frequency in MHz")
    _positive("--power-w", power_w, "a net power into the antenna in watts")
    if (gain_dbi is None) == (gain_dbd is None):
        given = "both" if gain_dbi is not None else "neither"
        raise InputError(
            f"--gain-dbi / --gain-dbd: {given} given; expected exactly one (dBi = dBd + 2.15)"
        )
    gain = gain_dbi if gain_dbi is not None else gain_dbd + DBD_TO_DBI
    option = "--gain-dbi" if gain_dbi is not None else "--gain-dbd"
    if not (math.isfinite(gain) and -30.0 <= gain <= 70.0):
        raise InputError(
            f"{option}: value {gain_dbi if gain_dbi is not None else gain_dbd!r}; "
            "expected a peak gain within -30..70 dBi"
        )
    if population not in POPULATIONS:
        raise InputError(
            f"--population: value {population!r}; expected one of {', '.join(POPULATIONS)}"
        )
    if model not in DISTANCE_MODELS:
        raise InputError(f"--model: value {model!r}; expected one of {', '.join(DISTANCE_MODELS)}")
    _positive("--aperture-height", aperture_height, "an aperture height in metres", 1000.0)
    _positive("--hpbw-h", hpbw_h, "a horizontal half-power beamwidth in degrees", 360.0)
    _positive("--hpbw-v", hpbw_v, "a vertical half-power beamwidth in degrees", 180.0)
    if not (math.isfinite(reflection) and 1.0 <= reflection <= 4.0):
        raise InputError(
            f"--reflection-factor: value {reflection!r}; expected a field-squared "
            "factor within 1..4 (1 free space, 2.56 OET-65 ground reflection)"
        )
    if aperture_height is None and model != "auto" and model != "far-field":
        raise InputError(
            f"--model: value {model!r} needs --aperture-height; expected "
            "--aperture-height M or --model far-field"
        )
    return float(gain)


def distance_result(
    freq_mhz: float,
    power_w: float,
    gain_dbi: float | None = None,
    gain_dbd: float | None = None,
    set_id: str = "fcc-1310",
    population: str = "general",
    aperture_height_m: float | None = None,
    hpbw_h_deg: float | None = None,
    hpbw_v_deg: float | None = None,
    front_to_back_db: float | None = None,
    reflection_factor: float = 1.0,
    model: str = "auto",
) -> dict[str, Any]:
    """Everything the command prints, as one JSON-ready dict (see the module docstring)."""
    import numpy as np

    from siteexposure.constants import DBD_TO_DBI, MHZ, wavelength_m
    from siteexposure.errors import LimitsError
    from siteexposure.physics.farfield import (
        eirp_w,
        erp_w,
        far_field_boundary_m,
        far_field_distance_for_density_m,
    )
    from siteexposure.readers.limit_tables import load_limit_set
    from siteexposure.writers.cautions import CAUTIONS, STATUS_LINE

    gain = _check_inputs(
        freq_mhz,
        power_w,
        gain_dbi,
        gain_dbd,
        population,
        model,
        aperture_height_m,
        hpbw_h_deg,
        hpbw_v_deg,
        reflection_factor,
    )
    _positive("--front-to-back-db", front_to_back_db, "a front-to-back ratio in dB", 100.0)
    lset = load_limit_set(set_id)
    limit = float(np.asarray(lset.power_density_limit_w_m2(freq_mhz, population)).ravel()[0])
    if not (math.isfinite(limit) and limit > 0.0):
        raise LimitsError(
            f"--set {set_id}: no power-density limit for population "
            f"{population!r} at {freq_mhz:g} MHz; expected a frequency the "
            "table covers"
        )
    g_lin = 10.0 ** (gain / 10.0)
    lam = float(wavelength_m(freq_mhz * MHZ))
    boresight = float(far_field_distance_for_density_m(power_w * g_lin, limit, reflection_factor))
    inputs: dict[str, Any] = {
        "frequency_mhz": freq_mhz,
        "power_w": power_w,
        "gain_dbi": round(gain, 6),
        "set": set_id,
        "population": population,
        "reflection_factor": reflection_factor,
    }
    if gain_dbd is not None:
        inputs["gain_dbd"] = gain_dbd
    out: dict[str, Any] = {
        "inputs": inputs,
        "limit_w_m2": limit,
        "limit_set": {"id": lset.id, "title": lset.title},
        "eirp_w": float(eirp_w(power_w, g_lin)),
        "erp_w": float(erp_w(power_w, g_lin)),
        "wavelength_m": lam,
        "distance_m": {"boresight": boresight},
        "models": {
            "boresight": {
                "model_id": "far-field-friis",
                "reason": "far-field formula with the peak gain (OET-65 eq. (4))",
            }
        },
        "notes": [],
    }
    notes: list[str] = out["notes"]
    if aperture_height_m is None:
        if hpbw_h_deg is not None or hpbw_v_deg is not None:
            notes.append(
                "--hpbw-h/--hpbw-v are used only with --aperture-height; the boresight "
                "distance needs the gain alone."
            )
        notes.append(
            "Far-field distance only: give --aperture-height (and --hpbw-h for a sector "
            "antenna) for the near-field-aware distances in every direction."
        )
        r_boundary = None
    else:
        from siteexposure.errors import InputError
        from siteexposure.physics.cylindrical import power_consistent_beamwidth_deg
        from siteexposure.physics.patterns import parametric_pattern
        from siteexposure.physics.radiator import Radiator
        from siteexposure.physics.keepout import KeepOutSearch
        from siteexposure.physics.sources import choose_model, model_notes, standoff_distance_m

        inputs["aperture_height_m"] = aperture_height_m
        sector = hpbw_h_deg is not None and hpbw_h_deg < 360.0
        if sector:
            base: dict[str, Any] = {
                "model": "3gpp-panel",
                "gain_dbi": gain,
                "hpbw_h_deg": hpbw_h_deg,
            }
            if front_to_back_db is not None:
                base["front_to_back_db"] = front_to_back_db
            v_bw = hpbw_v_deg
            if v_bw is None:
                v_bw = power_consistent_beamwidth_deg(
                    lambda bw: parametric_pattern({**base, "hpbw_v_deg": bw}, where="distance")
                )
                if v_bw is None:
                    raise InputError(
                        f"--gain-dbi {gain:g} with --hpbw-h {hpbw_h_deg:g}: no vertical beamwidth "
                        "makes the 3GPP panel form radiate the power put in; expected --hpbw-v DEG"
                    )
                notes.append(
                    f"Vertical beamwidth not given: {v_bw:.3g} deg, the width at which "
                    "the 3GPP panel form with this gain radiates exactly the input power."
                )
            spec: dict[str, Any] = {**base, "hpbw_v_deg": v_bw}
        else:
            spec = {"model": "itu-f1336-omni", "gain_dbi": gain}
            if hpbw_v_deg is not None:
                spec["hpbw_v_deg"] = hpbw_v_deg
            if front_to_back_db is not None:
                notes.append("--front-to-back-db ignored: an omnidirectional antenna has none.")
        pattern = parametric_pattern(spec, frequency_mhz=freq_mhz, where="distance options")
        inputs.update(
            {
                "hpbw_h_deg": hpbw_h_deg if sector else 360.0,
                "hpbw_v_deg": float(pattern.params["hpbw_v_deg"]),
            }
        )
        rad = Radiator(
            np.zeros(3),
            0.0,
            0.0,
            0.0,
            freq_mhz * MHZ,
            power_w,
            pattern,
            aperture_height_m=aperture_height_m,
            reflection_factor=reflection_factor,
        )
        choice = choose_model(rad, model)
        found = KeepOutSearch(rad, choice).boundary(limit)
        keep = found.distances_m
        out["distance_m"].update(keep)
        out["keep_out_box_m"] = found.box_m
        out["keep_out_cylinder_m"] = found.cylinder_m
        r0 = standoff_distance_m(rad)
        out["standoff_m"] = r0
        out["pattern"] = {"model": spec["model"], "source": pattern.source, **pattern.params}
        out["models"]["directions"] = {
            "word": choice.word,
            "model_id": choice.model_id,
            "reason": choice.reason,
        }
        for note in model_notes(rad, choice):
            notes.append(f"The {choice.model_id} model: {note}.")
        r_boundary = float(far_field_boundary_m(aperture_height_m, lam))
        notes.append(
            f"Distances are measured from the antenna's body (a column {aperture_height_m:g} m "
            f"high). Within {r0:.3g} m of it (lambda/2pi, the reactive field of the elements) "
            "nothing is assessed: that zone is part of the keep-out zone."
        )
        if keep["front"] > boresight * (1 + 1e-6):
            notes.append(
                "The near-field-aware front distance exceeds the far-field boresight "
                "distance: the near-field model governs."
            )
    if r_boundary is not None:
        out["far_field_boundary_m"] = r_boundary
        if boresight < r_boundary:
            notes.append(
                f"The boresight distance lies inside the far-field boundary "
                f"({r_boundary:.3g} m), where the far-field formula overstates the main "
                "beam: a conservative figure."
            )
    if reflection_factor != 1.0:
        notes.append(
            f"Reflection factor F = {reflection_factor:g} applied (field-squared; 2.56 is "
            "the OET-65 ground-reflection factor)."
        )
    out["gain_dbd"] = round(gain - DBD_TO_DBI, 6)
    out["status"] = STATUS_LINE
    out["cautions"] = list(CAUTIONS)
    return out


_ORDER = ("boresight", "along_beam", "front", "behind", "left", "right", "above", "below")
_LABEL = {
    "boresight": "boresight (far-field formula)",
    "along_beam": "along the beam (tilt included), from the body",
    "front": "front (horizontal, at boresight azimuth), from the body",
    "behind": "behind",
    "left": "left",
    "right": "right",
    "above": "above",
    "below": "below",
}


def _render(res: dict[str, Any]) -> None:
    from rich.console import Console
    from rich.table import Table

    from siteexposure.writers.cautions import CAUTIONS

    console = Console()
    inp = res["inputs"]
    console.print(
        f"Limit {res['limit_w_m2']:.4g} W/m² — {res['limit_set']['id']} "
        f"({res['limit_set']['title']}), {inp['population']}, "
        f"{inp['frequency_mhz']:g} MHz",
        soft_wrap=True,
    )
    console.print(
        f"P = {inp['power_w']:g} W, G = {inp['gain_dbi']:.2f} dBi, EIRP = "
        f"{res['eirp_w']:.4g} W, ERP = {res['erp_w']:.4g} W"
    )
    table = Table(title="Compliance distance from the radiation centre")
    table.add_column("Direction")
    table.add_column("Distance (m)", justify="right")
    table.add_column("Model")
    for key in _ORDER:
        if key in res["distance_m"]:
            model = (
                res["models"]["boresight"]["model_id"]
                if key == "boresight"
                else res["models"]["directions"]["model_id"]
            )
            table.add_row(_LABEL[key], f"{res['distance_m'][key]:.2f}", model)
    console.print(table)
    if "directions" in res["models"]:
        console.print(f"Model choice: {res['models']['directions']['reason']}", soft_wrap=True)
    for note in res["notes"]:
        console.print(f"Note: {note}", soft_wrap=True)
    console.print("Cautions:")
    for line in CAUTIONS:
        console.print(f"  - {line}", soft_wrap=True)


@app.command("distance")
def distance(
    freq: float = typer.Option(..., "--freq", help="Carrier frequency (MHz)."),
    power_w: float = typer.Option(
        ..., "--power-w", help="Net time-averaged power into the antenna (W)."
    ),
    gain_dbi: float | None = typer.Option(None, "--gain-dbi", help="Peak gain (dBi)."),
    gain_dbd: float | None = typer.Option(
        None, "--gain-dbd", help="Peak gain (dBd; dBi = dBd + 2.15)."
    ),
    set_id: str = typer.Option(
        "fcc-1310", "--set", help="Limit-set id (see `siteexposure limits`)."
    ),
    population: str = typer.Option("general", "--population", help="general | occupational."),
    aperture_height: float | None = typer.Option(
        None,
        "--aperture-height",
        help="Height of the radiating aperture (m): enables the near-field-aware distances.",
    ),
    hpbw_h: float | None = typer.Option(
        None, "--hpbw-h", help="Horizontal half-power beamwidth (deg); omit or 360 for an omni."
    ),
    hpbw_v: float | None = typer.Option(
        None,
        "--hpbw-v",
        help="Vertical half-power beamwidth (deg); default from the aperture height.",
    ),
    front_to_back: float | None = typer.Option(
        None, "--front-to-back-db", help="Front-to-back ratio of a sector antenna (dB, default 30)."
    ),
    reflection: float = typer.Option(
        1.0,
        "--reflection-factor",
        help="Field-squared reflection factor F (1 free space, 2.56 OET-65 ground reflection).",
    ),
    model: str = typer.Option(
        "auto",
        "--model",
        help="auto | far-field | cylindrical | array (for the directional distances).",
    ),
    as_json: bool = typer.Option(False, "--json", help="Print one JSON object to stdout."),
) -> None:
    """Compliance distance of one antenna for one limit set and population."""
    from rich.console import Console

    with Console(stderr=True).status("computing compliance distances ..."):
        res = distance_result(
            freq,
            power_w,
            gain_dbi,
            gain_dbd,
            set_id,
            population.strip().lower(),
            aperture_height,
            hpbw_h,
            hpbw_v,
            front_to_back,
            reflection,
            model.strip().lower(),
        )
    if as_json:
        from siteexposure.writers.json_out import dumps

        typer.echo(dumps(res), nl=False)
        return
    _render(res)
