"""Terminal summary tables (rich) of a site result and of a single point."""

from __future__ import annotations

import math

from siteexposure.engine.result import PointResult, SiteResult
from siteexposure.writers.cautions import CAUTIONS


def make_console():
    """A rich console on stdout: the terminal's width, or 140 columns when piped."""
    from rich.console import Console

    # no console markup: names from the site file are printed as given, never as styles
    probe = Console(markup=False)
    return probe if probe.is_terminal else Console(width=140, markup=False)


def term(text: object) -> str:
    """User text for the terminal: control characters (ANSI escapes among them) shown as
    escapes, not sent to the terminal."""
    return "".join(c if c.isprintable() or c == " " else repr(c)[1:-1] for c in str(text))


def _ratio(x: float | None) -> str:
    if x is None or not math.isfinite(x):
        return "n/a"
    return f"{x:.3g}"


def _pct(x: float | None) -> str:
    if x is None or not math.isfinite(x):
        return "n/a"
    return f"{100 * x:.3g} %"


def _verdict_style(v: str) -> str:
    return {"exceeds": "bold", "not assessable": "bold italic"}.get(v, "")


def _cautions(console) -> None:
    console.print()
    console.print("Cautions", style="bold")
    for c in CAUTIONS:
        console.print(f" - {c}")


def print_site(res: SiteResult, console) -> None:
    """Areas, antennas, receptors, top contributors and the cautions."""
    from rich.table import Table
    from rich.text import Text

    site = res.site
    console.print(Text(term(site.name), style="bold"), end="  ")
    console.print(f"origin {site.origin_lat:.6f}, {site.origin_lon:.6f}  "
                  f"limits: {', '.join(site.limits)}  averaging: {site.averaging.method} "
                  f"({site.averaging.bottom_m:g}-{site.averaging.top_m:g} m, {site.averaging.points} pts), "
                  f"grid {site.resolution_m:g} m")

    t = Table(title="Areas", title_justify="left")
    for col in ("area", "access", "limits", "population", "max ratio", "% of limit", "worst point E,N,floor (m)", "verdict"):
        t.add_column(col)
    for ar in res.areas:
        if not ar.evaluated:
            t.add_row(term(ar.area.name), ar.area.access, "-", "-", "-", "-", "-",
                      "not evaluated (no access)")
            continue
        for s in ar.summaries:
            at = "-" if s.at_m is None else f"{s.at_m[0]:.2f}, {s.at_m[1]:.2f}, {s.at_m[2]:.2f}"
            note = s.verdict
            if s.n_not_assessable:
                note += f" ({s.n_not_assessable} pts within an antenna's stand-off)"
            t.add_row(term(ar.area.name), ar.area.access, s.set_id, s.population,
                      _ratio(s.max_exposure_ratio), _pct(s.max_exposure_ratio), at,
                      Text(note, style=_verdict_style(s.verdict) or ""))
    console.print(t)
    for ar in res.areas:  # how areas narrower than the grid (or without surface) were judged
        notes = dict.fromkeys(s.note for s in ar.summaries if s.note)
        for text in notes:
            console.print(f"Note on {term(ar.area.name)}: {term(text)}", markup=False, highlight=False, soft_wrap=True)

    t = Table(title="Antennas", title_justify="left")
    for col in ("id", "operator", "MHz", "net P (W)", "EIRP (W)", "ERP (W)", "model", "keep-out general F/B/up/down (m)", "keep-out occupational F/B/up/down (m)"):
        t.add_column(col)
    for a in res.antennas:
        ant = a.antenna
        cells = []
        for pop in ("general", "occupational"):
            dists = [d for (sid, p), d in a.keep_out_m.items() if p == pop]
            if not dists:
                cells.append("-")
                continue
            worst = {k: max(d.get(k, 0.0) for d in dists) for k in ("front", "behind", "above", "below")}
            cells.append("/".join(f"{worst[k]:.1f}" for k in ("front", "behind", "above", "below")))
        t.add_row(term(ant.id), term(ant.operator), f"{ant.frequency_mhz:g}", f"{ant.net_power_w:.3g}", f"{ant.eirp_w:.4g}",
                  f"{ant.erp_w:.4g}", a.model.model_id, *cells)
    console.print(t)

    if res.points:
        t = Table(title="Receptors (exactly at the point, no averaging)", title_justify="left")
        for col in ("receptor", "access", "limits", "population", "ratio", "% of limit", "note"):
            t.add_column(col)
        for p in res.points:
            pop = {"public": "general", "worker": "occupational"}.get(p.access)
            for e in p.exposure:
                if e.population != pop:
                    continue
                t.add_row(term(p.name), p.access, e.set_id, e.population, _ratio(e.exposure_ratio), _pct(e.exposure_ratio),
                          "" if p.assessable else "not assessable: within an antenna's stand-off")
        console.print(t)

    t = Table(title="Top contributors at each area's worst point", title_justify="left")
    for col in ("area", "limits", "antenna share (of the limit)", "operators >= 5 % where exceeded"):
        t.add_column(col)
    for ar in res.areas:
        for s in ar.summaries:
            top = sorted(s.antenna_share.items(), key=lambda kv: -kv[1])[:3]
            t.add_row(term(ar.area.name), s.set_id,
                      ", ".join(f"{term(k)} {_pct(v)}" for k, v in top),
                      ", ".join(term(o) for o in s.responsible_operators) or "-")
    console.print(t)

    fails = [(ar, s) for ar in res.areas for s in ar.summaries if s.mitigation is not None]
    if fails:
        t = Table(title="Mitigation for failing areas", title_justify="left")
        for col in ("area", "limits", "all antennas -dB", "responsible ops -dB", "extra height of", "extra height (m)"):
            t.add_column(col)
        for ar, s in fails:
            m = s.mitigation
            t.add_row(term(ar.area.name), s.set_id, f"{m.uniform_reduction_db:.1f}",
                      "n/a" if m.responsible_reduction_db is None else f"{m.responsible_reduction_db:.1f}",
                      "all antennas (the whole mount)" if len(m.raised_antennas) == len(res.antennas) > 1
                      else ", ".join(term(a) for a in m.raised_antennas),
                      f"> {m.height_search_limit_m:g} / not found" if m.extra_height_m is None else f"{m.extra_height_m:.1f}")
        console.print(t)

    verdict = "A limit is EXCEEDED (or cannot be assessed) somewhere people can reach." if res.exceeded_where_reachable \
        else "No limit exceeded where people can reach, on these inputs."
    console.print(f"\n{verdict}", style="bold")
    _cautions(console)


def print_point(p: PointResult, console) -> None:
    """Per-antenna densities and exposure ratios at one point."""
    from rich.table import Table

    console.print(f"Point {term(p.name)} at E {p.at_m[0]:g} m, N {p.at_m[1]:g} m, height {p.at_m[2]:g} m")
    if not p.assessable:
        console.print(f"Not assessable: {term(p.reason)}", style="bold")
    t = Table()
    t.add_column("antenna")
    t.add_column("power density (W/m²)")
    for k, v in p.density_w_m2.items():
        t.add_row(term(k), "n/a" if v is None else f"{v:.4g}")
    console.print(t)
    t = Table()
    for col in ("limits", "population", "exposure ratio", "% of limit"):
        t.add_column(col)
    for e in p.exposure:
        t.add_row(e.set_id, e.population, _ratio(e.exposure_ratio), _pct(e.exposure_ratio))
    console.print(t)
    _cautions(console)
