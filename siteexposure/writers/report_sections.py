"""The opening sections of the PDF report: cover, summary of findings, inputs.

Each builder takes a :class:`~siteexposure.writers.report_context.ReportContext` and
returns a list of reportlab flowables. Numbers come from the JSON form of the result.
"""

from __future__ import annotations

from pathlib import Path

from siteexposure.writers.cautions import STATUS_LINE
from siteexposure.writers.json_out import _num as json_round
from siteexposure.writers.report_context import ACCESS_WORDS, POPULATION_WORDS, ReportContext
from siteexposure.writers.report_layout import (
    bullets,
    jnum,
    jpct,
    key_value,
    para,
    short,
    table,
    triple,
)

#: section headings, in the order they appear (the cover has none)
HEADINGS = (
    "Summary of findings",
    "Inputs",
    "Method and assumptions",
    "Results",
    "Mitigation",
    "Cautions and deferral",
    "Reviewer sign-off",
    "Traceability",
)


def heading(n: int):
    """The numbered heading of section ``n`` (1-based) of :data:`HEADINGS`."""
    return para(f"{n}  {HEADINGS[n - 1]}", "H1")


def _reachable_findings(ctx: ReportContext) -> tuple[bool, bool]:
    """(exceeded, not assessable) anywhere people can reach: areas and receptors."""
    exceeded = unknown = False
    for a in ctx.evaluated_areas():
        for b in a["by_limits"]:
            exceeded |= b["verdict"] == "exceeds"
            unknown |= b["verdict"] == "not assessable"
    for p in ctx.data["points"]:
        pop = {"public": "general", "worker": "occupational"}.get(p["access"])
        for e in p["exposure"]:
            if e["population"] == pop:
                r = e["exposure_ratio"]
                exceeded |= r is not None and r > 1.0
                unknown |= r is None
    return exceeded, unknown


def overall_sentence(ctx: ReportContext) -> str:
    """The one-sentence finding of the whole site, in plain words."""
    exceeded, unknown = _reachable_findings(ctx)
    if exceeded and unknown:
        return ("On these inputs a limit is exceeded somewhere people can reach, and some "
                "places people can reach could not be assessed by these models.")
    if exceeded:
        return "On these inputs a limit is exceeded somewhere people can reach."
    if unknown:
        return ("On these inputs no exceedance was found, but some places people can reach "
                "could not be assessed by these models: they are not shown to be within the "
                "limits.")
    return "On these inputs no limit is exceeded anywhere people can reach."


# ----------------------------------------------------------------------------- cover


def cover(ctx: ReportContext, toc) -> list:
    from reportlab.platypus import PageBreak, Spacer

    site, data = ctx.site, ctx.data
    run_utc = str(ctx.result.settings.get("run_utc", ""))
    sets = [f"{sid} — {ctx.set_title(sid)}" for sid in data["site"]["limits"]]
    rows = [
        ("Site", site.name),
        ("Location (WGS84)", f"latitude {site.origin_lat:.6f}°, longitude {site.origin_lon:.6f}° "
                             "(origin of the local east/north coordinates)"),
        ("Address", site.address or "not given in the site file"),
        ("Date of run (UTC)", run_utc),
        ("Prepared by", site.preparer or "not given in the site file"),
        ("Limit sets used", "\n".join(sets)),
        ("Tool", f"siteexposure {data['tool']['version']}"),
    ]
    return [
        Spacer(1, 30),
        para("RF exposure pre-survey", "title"),
        para("Screening report for licensed review", "subtitle"),
        key_value(rows, ctx.width),
        para(STATUS_LINE, "status"),
        para(overall_sentence(ctx), "H2"),
        Spacer(1, 8),
        para("Contents", "H2"),
        toc,
        PageBreak(),
    ]


# ----------------------------------------------------------------------------- summary


def _where(b: dict) -> str:
    at = b.get("at_m")
    if at is None:
        return "no point of the area could be assessed"
    return (f"at {short(at[0])} m east and {short(at[1])} m north of the site origin, "
            f"standing on the floor at {short(at[2])} m")


def _area_words(ctx: ReportContext, a: dict) -> list:
    """A short paragraph naming the area and one bullet per limit set, in plain words."""
    name = _esc(a["name"])
    if a["access"] == "none":
        return [para(f"<b>{name}</b> is marked as not accessible, so it was not evaluated.",
                     markup=True)]
    pop_word = POPULATION_WORDS.get(a["population"], a["population"])
    out = [para(f"<b>{name}</b>: {ACCESS_WORDS[a['access']]}, judged against the {pop_word} "
                f"limits.", markup=True)]
    items = []
    for b in a["by_limits"]:
        text = f"{_esc(ctx.set_title(b['limits']))}: "
        if b["max_exposure_ratio"] is None:
            text += "no point of the area could be assessed by these models. "
        else:
            text += (f"the highest estimated exposure is {short(b['max_exposure_ratio'])} times "
                     f"the limit ({short(b['percent_of_limit'])} % of the limit), {_where(b)}. ")
        if b["verdict"] == "exceeds":
            ops = ", ".join(_esc(o) for o in b["responsible_operators"]) or "none identified"
            text += ("<b>This is above the limit.</b> Until a licensed reviewer decides "
                     "otherwise, keep people of this group out of the zones shown in the Results "
                     "section, and see the Mitigation section for remedies. "
                     f"Operators sharing responsibility (each at least 5 % of the limit there): "
                     f"{ops}.")
        elif b["verdict"] == "not assessable" and not b["points"]:
            text += ("<b>Not assessable:</b> no point of the area could be judged, so it cannot "
                     "be declared within the limit from this report.")
        elif b["verdict"] == "not assessable":
            text += (f"<b>Not assessable:</b> {b['points_not_assessable']} of {b['points']} "
                     "points judged lie so close to an antenna that these models cannot assess "
                     "them, so the area cannot be declared within the limit from this report.")
        else:
            text += "<b>Within the limit.</b>"
        if b.get("note"):
            text += f" Note: {_esc(b['note'])}."
        items.append(text)
    return out + bullets(items, markup=True)


def _esc(s) -> str:
    from xml.sax.saxutils import escape

    return escape(str(s))


def summary(ctx: ReportContext) -> list:
    data = ctx.data
    out = [
        heading(1),
        para(overall_sentence(ctx), "H2"),
        para("The exposure ratio compares the estimated exposure with the limit: 1 means exactly "
             "at the limit, 0.5 means half of it. Each area is judged against the limits of the "
             "people who can be there: public areas against the general-public limits, "
             "worker areas against the occupational limits."),
        para("Areas", "H2"),
    ]
    for a in data["areas"]:
        out += _area_words(ctx, a)
    rows = []
    for a in data["areas"]:
        if a["access"] == "none":
            rows.append([a["name"], a["access"], "-", "-", "-", "-", "not evaluated"])
            continue
        for b in a["by_limits"]:
            rows.append([a["name"], a["access"], b["limits"], jnum(b["max_exposure_ratio"]),
                         jpct(b["percent_of_limit"]), triple(b["at_m"]), b["verdict"]])
    out.append(table(["area", "access", "limit set", "max exposure ratio", "% of limit",
                      "worst point E, N, floor (m)", "verdict"], rows,
                     [2.2, 1.0, 1.4, 1.3, 1.3, 2.0, 1.2], ctx.width, right_cols=(3, 4)))
    out.append(para("Receptors", "H2"))
    if not data["points"]:
        out.append(para("The site file names no receptors (windows, balconies, neighbouring roofs)."))
    else:
        out.append(para("A receptor is evaluated exactly at its position, without spatial "
                        "averaging, against the limits of its access class."))
        rows = []
        for p in data["points"]:
            pop = {"public": "general", "worker": "occupational"}.get(p["access"])
            for e in p["exposure"]:
                if e["population"] != pop:
                    continue
                r = e["exposure_ratio"]
                if r is None:
                    word = "not assessable"
                else:
                    word = "above the limit" if r > 1 else "within the limit"
                rows.append([p["name"], p["access"], e["limits"], jnum(r),
                             jpct(e["percent_of_limit"]), word])
            if pop is None:
                rows.append([p["name"], p["access"], "-", "-", "-", "not evaluated (no access)"])
        out.append(table(["receptor", "access", "limit set", "exposure ratio", "% of limit",
                          "finding"], rows, [2.6, 1.0, 1.4, 1.4, 1.3, 2.0], ctx.width,
                         right_cols=(3, 4)))
        notes = [f"{p['name']}: {p['reason']}" for p in data["points"] if not p["assessable"]]
        out += bullets(notes)
    out.append(para("Operators at 5 % of the limit or more", "H2"))
    out.append(para("Share of the limit each operator contributes at the worst point of each area. "
                    "Where the limit is exceeded, every operator at 5 % or more shares "
                    "responsibility for bringing the area into compliance (47 CFR 1.1307(b)(5))."))
    rows = []
    for a in ctx.evaluated_areas():
        for b in a["by_limits"]:
            for op, v in sorted(b["operator_share"].items(), key=lambda kv: -(kv[1] or 0)):
                if v is not None and v >= 0.05:
                    resp = "yes" if op in b["responsible_operators"] else "no (limit not exceeded)"
                    rows.append([a["name"], b["limits"], op, jpct(json_round(100 * v)), resp])
    if rows:
        out.append(table(["area", "limit set", "operator", "share of the limit",
                          "responsible"], rows, [2.2, 1.4, 2.4, 1.3, 2.0], ctx.width,
                         right_cols=(3,)))
    else:
        out.append(para("No operator reaches 5 % of the limit at any area's worst point."))
    return out


# ----------------------------------------------------------------------------- inputs


def _chain(ant) -> str:
    j = lambda x: jnum(json_round(x))  # noqa: E731
    return (f"{j(ant.tx_power_w)} W × {ant.carriers} carrier(s) × activity {j(ant.activity)} − "
            f"{j(ant.line_loss_db)} dB line loss → {jnum(json_round(ant.net_power_w))} W")


def _aperture(ant) -> str:
    if ant.diameter_m:
        return f"dish Ø {jnum(json_round(ant.diameter_m))} m"
    parts = []
    if ant.aperture_height_m:
        parts.append(f"H {jnum(json_round(ant.aperture_height_m))} m")
    if ant.aperture_width_m:
        parts.append(f"W {jnum(json_round(ant.aperture_width_m))} m")
    return " × ".join(parts) or "not given"


def pattern_source_text(site, ant) -> str:
    """The pattern source, a file path shown relative to the site file's folder."""
    src = ant.pattern_source or "not recorded"
    files = {p for p, _ in site.input_files}
    if src in files and site.source_path is not None:
        import os

        try:
            return os.path.relpath(src, Path(site.source_path).parent)
        except ValueError:  # another drive (Windows)
            return src
    return src


def inputs(ctx: ReportContext) -> list:
    site, data = ctx.site, ctx.data
    jant = {a["id"]: a for a in data["antennas"]}
    out = [heading(2), para("Antennas: transmitters and power", "H2"),
           para("Net power into the antenna P = transmitter power per carrier × carriers × "
                "activity factor × 10^(−line loss/10). EIRP = P × peak gain; ERP = EIRP / 1.64 "
                "(half-wave dipole reference). All powers are time-averaged.")]
    rows = []
    for ant in site.antennas:
        j = jant[ant.id]
        rows.append([ant.operator, ant.id, jnum(j["frequency_mhz"]), _chain(ant),
                     jnum(j["peak_gain_dbi"]), jnum(j["eirp_w"]), jnum(j["erp_w"])])
    out.append(table(["operator", "id", "frequency (MHz)", "power chain → net power",
                      "peak gain (dBi)", "EIRP (W)", "ERP (W)"], rows,
                     [1.6, 0.8, 1.0, 3.6, 0.9, 1.0, 1.0], ctx.width, right_cols=(2, 4, 5, 6)))
    out.append(para("Antennas: mounting, pattern and field model", "H2"))
    rows = []
    for ant in site.antennas:
        j = jant[ant.id]
        rows.append([ant.id, triple(j["position_m"]), jnum(j["azimuth_deg"]),
                     f"{jnum(j['mechanical_tilt_deg'])} / {jnum(j['electrical_tilt_deg'])}",
                     _aperture(ant), pattern_source_text(site, ant),
                     f"{j['model']['id']}: {j['model']['reason']}"])
    out.append(table(["id", "radiation centre E, N, height (m)", "azimuth (°)",
                      "tilt mech. / elec. (° down)", "aperture", "pattern source",
                      "model used and why"], rows, [0.6, 1.3, 0.8, 0.9, 1.2, 1.9, 3.3], ctx.width))
    out.append(para("Areas", "H2"))
    rows = []
    for area in site.areas:
        en = area.outline_en
        rows.append([area.name, f"{area.access} ({ACCESS_WORDS[area.access]})",
                     area.population or "not evaluated", jnum(json_round(area.floor_m)),
                     f"{len(en)} vertices; E {jnum(json_round(en[:, 0].min()))} to "
                     f"{jnum(json_round(en[:, 0].max()))} m, N {jnum(json_round(en[:, 1].min()))} "
                     f"to {jnum(json_round(en[:, 1].max()))} m"])
    out.append(table(["area", "access class", "judged against", "floor height (m)",
                      "outline"], rows, [2.0, 2.2, 1.4, 1.0, 3.0], ctx.width, right_cols=(3,)))
    out.append(para("Receptors", "H2"))
    if data["points"]:
        rows = [[p["name"], triple(p["at_m"]), p["access"],
                 {"public": "general", "worker": "occupational"}.get(p["access"], "not evaluated")]
                for p in data["points"]]
        out.append(table(["receptor", "position E, N, height (m)", "access", "judged against"],
                         rows, [3.0, 2.4, 1.2, 1.6], ctx.width))
    else:
        out.append(para("None given."))
    out.append(para("Evaluation settings", "H2"))
    av = data["site"]["averaging"] or {}
    out.append(key_value([
        ("Spatial averaging", f"{av.get('method')}: {av.get('points')} points from "
                              f"{av.get('bottom_m')} m to {av.get('top_m')} m above each floor"),
        ("Grid spacing", f"{data['site']['resolution_m']} m"),
        ("Reflection factor(s)", ", ".join(jnum(json_round(f)) for f in
                                           ctx.result.settings.get("reflection_factors", []))),
        ("Extra zone levels", ", ".join(f"{x:g}" for x in site.zone_levels) or "none (ratio 1 only)"),
        ("Site file", str(site.source_path) if site.source_path else "built in Python, no file"),
    ], ctx.width))
    return out
