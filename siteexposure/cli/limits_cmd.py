"""The `limits` command: show the published limit tables the tool carries.

* no option: every set with its title, source and frequency range;
* ``--set ID`` and/or ``--freq MHZ`` (both repeatable): the limits as rows (set, population,
  region, frequency, S, E, H, averaging time); without ``--freq``, at every band edge and the
  middle of every band; without ``--set``, every set that covers the frequency;
* ``--bands``: each band's published formula instead of values;
* ``--json``: one JSON list of rows on stdout (keys in
  :func:`siteexposure.physics.limits.table_rows`), nothing else there.
"""

from __future__ import annotations

import math
from typing import Any

import typer

from siteexposure.cli.app import app
from siteexposure.errors import InputError

CAUTION = (
    "Caution: the limits shown are copies of the publications, for screening only; the "
    "regulator or authority having jurisdiction decides which limits apply to a site."
)
PLANE_WAVE_NOTE = "† the table gives no S here: plane-wave equivalent of its E and H, the smaller."
FROM_MEMORY_NOTE = (
    "* value not confirmed against a retrieved copy of the publication (from memory); "
    "see limits_tables/README.md."
)


def _fmt(x: Any) -> str:
    """Four significant figures; plain digits (no exponent) from 10^4 up to 10^9."""
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "-"
    if 1e4 <= abs(x) < 1e9:
        return f"{float(f'{x:.4g}'):.0f}"
    return f"{x:.4g}"


def _formula(a: float, b: float, f_ref: float) -> str:
    """``a*(f/f_ref)^b`` written the way the tables write it (f in MHz, f_G in GHz)."""
    if math.isnan(a):
        return "-"
    if b == 0:
        return f"{a:g}"
    var = "f" if f_ref == 1 else "f_G" if f_ref == 1000 else f"(f/{f_ref:g})"
    power = "" if abs(b) == 1 else f"^{abs(b):g}"
    if b > 0:
        return f"{var}{power}" if a == 1 else f"{a:g}·{var}{power}"
    return f"{a:g}/{var}{power}"


def _list_sets(console: Any) -> None:
    from rich.table import Table

    from siteexposure.readers.limit_tables import available_sets, load_limit_set

    sets = [load_limit_set(set_id) for set_id in available_sets()]
    table = Table(title="Limit sets (show one with --set ID, its formulas with --bands)")
    for name in ("Set", "Title", "Range (MHz)", "Regions"):
        table.add_column(name, no_wrap=name == "Set")
    for ls in sets:
        ranges = []
        for population in ls.populations:
            lo, hi = ls.frequency_range_mhz(population, "whole-body")
            ranges.append(f"{population}: {lo:g}-{hi:g}")
        table.add_row(ls.id, ls.title, "\n".join(ranges), ", ".join(ls.regions()))
    console.print(table)
    console.print("Sources:")
    for ls in sets:
        console.print(f"  {ls.id}: {' '.join(ls.publication.split())}", soft_wrap=True)


def _show_bands(console: Any, set_ids: list[str]) -> bool:
    from rich.table import Table

    from siteexposure.readers.limit_tables import load_limit_set

    memory = False
    for set_id in set_ids:
        ls = load_limit_set(set_id)
        b = ls.bands
        table = Table(title=f"{ls.id}: {ls.title}  (f in MHz, f_G in GHz; S in W/m²)")
        for name in ("Population", "Region", "Band", "S", "S_H", "E (V/m)", "H (A/m)", "Avg (min)"):
            table.add_column(name)
        for i in range(len(b)):
            lo = "≤" if b.lower_inclusive[i] else "<"
            hi = "≤" if b.upper_inclusive[i] else "<"
            band = f"{b.f_min_mhz[i]:g} {lo} f {hi} {b.f_max_mhz[i]:g}"
            if b.f_min_mhz[i] == b.f_max_mhz[i]:
                band = f"f = {b.f_min_mhz[i]:g}"
            star = "*" if b.verified[i] == "from memory" else ""
            memory = memory or bool(star)
            avg = _formula(b.averaging_min_a[i], b.averaging_min_b[i], b.f_ref_mhz[i])
            if not math.isnan(b.averaging_h_min_a[i]):
                avg_h = _formula(b.averaging_h_min_a[i], b.averaging_h_min_b[i], b.f_ref_mhz[i])
                avg = f"{avg} (E), {avg_h} (H)"
            table.add_row(
                b.population[i],
                b.region[i],
                band + star,
                _formula(b.s_a[i], b.s_b[i], b.f_ref_mhz[i]),
                _formula(b.sh_a[i], b.sh_b[i], b.f_ref_mhz[i]),
                _formula(b.e_a[i], b.e_b[i], b.f_ref_mhz[i]),
                _formula(b.h_a[i], b.h_b[i], b.f_ref_mhz[i]),
                avg,
            )
        console.print(table)
    return memory


def _show_rows(console: Any, rows: list[dict[str, Any]]) -> bool:
    from rich.table import Table

    memory = plane_wave = False
    for set_id in dict.fromkeys(row["set"] for row in rows):
        mine = [row for row in rows if row["set"] == set_id]
        regions = len({row["region"] for row in mine}) > 1
        table = Table(title=f"{set_id}  (S limit: what exposure ratios divide by)")
        table.add_column("Population", no_wrap=True)
        if regions:
            table.add_column("Region", no_wrap=True)
        for name in ("f MHz", "S W/m²", "E V/m", "H A/m", "Avg min", "S limit W/m²"):
            table.add_column(name, justify="right", no_wrap=name.startswith("S limit"))
        for row in mine:
            star = "*" if row["verified"] == "from memory" else ""
            memory = memory or bool(star)
            avg = _fmt(row["averaging_min"])
            if row["averaging_h_min"] != row["averaging_min"]:
                avg = f"{avg} E, {_fmt(row['averaging_h_min'])} H"
            basis = "" if row["s_source"].startswith("table") else "†"
            plane_wave = plane_wave or bool(basis)
            cells = [row["population"]] + ([row["region"]] if regions else [])
            cells += [
                _fmt(row["frequency_mhz"]) + star,
                _fmt(row["s_w_m2"]),
                _fmt(row["e_v_m"]),
                _fmt(row["h_a_m"]),
                avg,
                _fmt(row["limit_w_m2"]) + basis,
            ]
            table.add_row(*cells)
        console.print(table)
    if plane_wave:
        console.print(PLANE_WAVE_NOTE, soft_wrap=True)
    return memory


@app.command("limits")
def limits(
    set_ids: list[str] | None = typer.Option(
        None, "--set", metavar="ID", help="Limit-set id (repeatable); see the list without options."
    ),
    frequencies: list[float] | None = typer.Option(
        None, "--freq", metavar="MHZ", help="Frequency in MHz (repeatable)."
    ),
    json_out: bool = typer.Option(False, "--json", help="Print one JSON list of rows on stdout."),
    bands: bool = typer.Option(False, "--bands", help="Show each band's published formulas."),
) -> None:
    """Show the published RF exposure limit tables (copies, for screening)."""
    import json

    from rich.console import Console

    from siteexposure.errors import LimitsError
    from siteexposure.physics.limits import table_rows
    from siteexposure.readers.limit_tables import available_sets, load_limit_set

    chosen = list(dict.fromkeys(set_ids or []))
    for f in frequencies or []:
        if not (math.isfinite(f) and f > 0.0):
            raise InputError(f"option '--freq': {f!r} is not a positive finite number; expected a "
                             "frequency in MHz")
    for set_id in chosen:
        load_limit_set(set_id)  # unknown id -> LimitsError listing the valid ids
    console = Console(soft_wrap=False)

    if not chosen and not frequencies and not json_out:
        if bands:
            memory = _show_bands(console, available_sets())
        else:
            _list_sets(console)
            memory = False
    elif bands and not json_out:
        memory = _show_bands(console, chosen or available_sets())
    else:
        targets = chosen or available_sets()
        rows = table_rows(targets, frequencies or None, skip_out_of_range=not chosen)
        if not rows:
            asked = ", ".join(f"{f:g}" for f in frequencies or [])
            raise LimitsError(
                f"option '--freq': {asked} MHz is outside every limit table held "
                f"({', '.join(targets)})"
            )
        if json_out:
            print(json.dumps(rows, indent=2, allow_nan=False))
            return
        memory = _show_rows(console, rows)
        if frequencies and not chosen:
            asked_f = set(frequencies)
            partial = [
                s
                for s in targets
                if {row["frequency_mhz"] for row in rows if row["set"] == s} != asked_f
            ]
            if partial:
                console.print(
                    f"Left out where the table does not reach the frequency: {', '.join(partial)}.",
                    soft_wrap=True,
                )
    if memory:
        console.print(FROM_MEMORY_NOTE, soft_wrap=True)
    console.print(CAUTION, soft_wrap=True)
