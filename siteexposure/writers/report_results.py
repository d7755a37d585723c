"""The results and mitigation sections of the PDF report.

Imported by :func:`siteexposure.writers.report_pdf.write_report` only (it needs
reportlab, so ``import siteexposure`` never loads it).

Results: area verdicts per limit set, plan maps and elevation cuts, per-antenna keep-out
distances, contributions at the worst points, receptors, zone areas and barrier lengths.
Mitigation: power and height remedies for failing areas, barrier placement, and the
47 CFR 1.1307(b)(4) category and sign word of each zone and at each area's access points.
"""

from __future__ import annotations

import io
from pathlib import Path

from reportlab.platypus import Image

from siteexposure.writers.json_out import _num as json_round
from siteexposure.writers.report_context import ReportContext, zone_rows
from siteexposure.writers.report_layout import bullets, jnum, jpct, metres, para, table, triple
from siteexposure.writers.report_sections import heading

KEEP_OUT_KEYS = ("along_beam", "front", "behind", "left", "right", "above", "below")
_KEY_LABELS = {"along_beam": "beam"}
#: contributions below this share of an area's total are summed in one row
MINOR_SHARE = 0.01
#: largest share of the frame height a plan map, and an elevation cut, may take (two cuts
#: fit on one page)
PLAN_HEIGHT_SHARE = 0.82
ELEVATION_HEIGHT_SHARE = 0.46
TRIM_PAD_PX = 12  #: white margin kept round a trimmed map [px]


# ----------------------------------------------------------------------------- maps


def _is_elevation(path: Path) -> bool:
    return path.stem.lower().startswith("elevation")


def _captions(ctx: ReportContext) -> dict[str, str]:
    """Caption of each map file stem that :func:`siteexposure.writers.maps.render_maps` writes."""
    from siteexposure.writers.maps import map_file_stem

    site = ctx.site
    out = {}
    for i, ar in enumerate(ctx.result.areas):
        for sid in site.limits:
            out[map_file_stem("plan", i + 1, ar.area.name, sid)] = (
                f"Plan of {ar.area.name} ({ar.area.access} access, floor {ar.area.floor_m:g} m): "
                f"exposure ratio under {ctx.set_title(sid)} ({sid}).")
    for k, ant in enumerate(site.antennas):
        for sid in site.limits:
            out[map_file_stem("elevation", k + 1, ant.id, sid)] = (
                f"Elevation cut through antenna {ant.id} ({ant.operator}, "
                f"{ant.frequency_mhz:g} MHz, azimuth {ant.azimuth_deg:g}°): exposure ratio under "
                f"{ctx.set_title(sid)} ({sid}).")
    return out


def _trimmed_png(path: Path) -> tuple[io.BytesIO, int, int]:
    """The image with its plain outer margin cut off (PNG in memory), and its size in px.

    Maps carry a generous white border; trimming it lets the drawing itself use the
    width of the page, so its lettering stays readable.
    """
    from PIL import Image as PILImage
    from PIL import ImageChops

    with PILImage.open(path) as im:
        rgb = im.convert("RGB")
    bg = PILImage.new("RGB", rgb.size, rgb.getpixel((0, 0)))
    box = ImageChops.difference(rgb, bg).getbbox()
    if box is not None:
        pad = TRIM_PAD_PX
        box = (max(box[0] - pad, 0), max(box[1] - pad, 0), min(box[2] + pad, rgb.width),
               min(box[3] + pad, rgb.height))
        rgb = rgb.crop(box)
    buf = io.BytesIO()
    rgb.save(buf, format="PNG")
    buf.seek(0)
    return buf, rgb.width, rgb.height


def _image(ctx: ReportContext, path: Path, share: float):
    """The map scaled to the frame width, or down to ``share`` of the frame height."""
    data, w_px, h_px = _trimmed_png(path)
    w = ctx.width
    h = w * h_px / w_px
    h_max = ctx.height * share
    if h > h_max:
        w, h = w * h_max / h, h_max
    img = _MapImage(data, width=w, height=h)
    img.hAlign = "CENTER"
    return img


class _MapImage(Image):
    """An image that is laid out but not drawn in the first layout pass (the contents
    list forces a second pass, whose pages are the ones kept): halves the image work."""

    def draw(self):
        doc = getattr(self.canv, "_doctemplate", None)
        if getattr(doc, "passes", 2) == 1:
            return
        super().draw()


def _maps(ctx: ReportContext, elevation: bool, intro: list) -> list:
    """The maps of one kind, each kept with its caption; ``intro`` stays with the first."""
    from reportlab.platypus import KeepTogether

    files = [Path(p) for p in ctx.map_files
             if Path(p).suffix.lower() == ".png" and _is_elevation(Path(p)) == elevation]
    if not files:
        what = "elevation cuts" if elevation else "plan maps"
        return [*intro, para(f"No {what} were rendered for this report.")]
    captions = _captions(ctx)
    share = ELEVATION_HEIGHT_SHARE if elevation else PLAN_HEIGHT_SHARE
    blocks = [[_image(ctx, p, share), para(captions.get(p.stem, p.stem), "caption")]
              for p in files]
    blocks[0] = intro + blocks[0]
    return [KeepTogether(b) for b in blocks]


# ----------------------------------------------------------------------------- results


def _area_table(ctx: ReportContext) -> list:
    rows = []
    for a in ctx.evaluated_areas():
        for b in a["by_limits"]:
            rows.append([a["name"], f"{b['limits']}\n{b['population']}",
                         jnum(b["max_exposure_ratio"]), jpct(b["percent_of_limit"]),
                         triple(b["at_m"]), b["governing_region"],
                         f"{b['points']} / {b['points_not_assessable']}", b["verdict"]])
    return [table(["area", "limit set, population", "max exposure ratio", "% of limit",
                   "worst point E, N, floor (m)", "governing limit", "points judged / not assessable",
                   "verdict"], rows, [1.8, 1.2, 1.1, 1.1, 1.6, 1.0, 1.2, 1.1], ctx.width,
                  right_cols=(2, 3))]


def _keep_out_table(ctx: ReportContext) -> list:
    rows, shapes = [], []
    for a in ctx.data["antennas"]:
        for r in a["keep_out_by_limits"]:
            d = r["distance_m"]
            rows.append([a["id"], r["limits"], r["population"], jnum(r["limit_w_m2"]),
                         *[jnum(d.get(k)) for k in KEEP_OUT_KEYS]])
        for pop, shape in a.get("keep_out_shape_m", {}).items():
            box, cyl = shape.get("box", {}), shape.get("cylinder", {})
            shapes.append([a["id"], pop, *[jnum(box.get(k)) for k in
                                           ("forward", "back", "left", "right", "up", "down")],
                           jnum(cyl.get("radius")), jnum(cyl.get("down")), jnum(cyl.get("up"))])
    return [
        para("How far each antenna's own exceedance of the whole-body limit reaches beyond its "
             "body (this antenna alone): along its beam as mounted (tilts included), in front "
             "and behind along the horizontal boresight azimuth, left and right at right angles "
             "to it (seen from behind the antenna), above and below along the vertical. The "
             "stand-off about the body (not assessable) is always part of it. Other antennas add "
             "to these fields; the maps show the combined zones."),
        table(["antenna", "limit set", "population", "limit (W/m²)",
               *[f"{_KEY_LABELS.get(k, k)} (m)" for k in KEEP_OUT_KEYS]],
              rows, [0.9, 1.0, 1.1, 0.9, 0.7, 0.7, 0.7, 0.7, 0.7, 0.7, 0.7], ctx.width,
              right_cols=(3, 4, 5, 6, 7, 8, 9, 10)),
        para("Shapes a crew can mark out, holding every set's zone for the population: a box "
             "aligned with the horizontal boresight (faces measured from the radiation centre) "
             "and a cylinder about the vertical through the radiation centre."),
        table(["antenna", "population", "fwd (m)", "back (m)", "left (m)", "right (m)",
               "up (m)", "down (m)", "radius (m)", "cyl. down (m)", "cyl. up (m)"],
              shapes, [0.9, 1.1, 0.7, 0.7, 0.7, 0.7, 0.7, 0.7, 0.8, 0.9, 0.8], ctx.width,
              right_cols=tuple(range(2, 11))),
    ]


def _contribution_table(ctx: ReportContext) -> list:
    ops = {a.id: a.operator for a in ctx.site.antennas}
    rows = []
    for a in ctx.evaluated_areas():
        for b in a["by_limits"]:
            shares = sorted(((k, v) for k, v in b["antenna_share"].items() if v),
                            key=lambda kv: -kv[1])
            total = sum(v for _, v in shares)
            listed = [(k, v) for k, v in shares if v >= MINOR_SHARE * total]
            for aid, v in listed:
                rows.append([a["name"], b["limits"], aid, ops.get(aid, ""), jnum(v),
                             jpct(json_round(100 * v))])
            rest = [v for _, v in shares[len(listed):]]
            if rest:
                v = json_round(sum(rest))
                rows.append([a["name"], b["limits"], f"{len(rest)} others", "together", jnum(v),
                             jpct(json_round(100 * v))])
    if not rows:
        return [para("No contributions to report.")]
    return [para("Exposure ratio each antenna contributes at the worst point of each area, largest "
                 f"first. Antennas below {100 * MINOR_SHARE:g} % of the total there are summed in "
                 "one row; the rows add up to the area's maximum exposure ratio."),
            table(["area", "limit set", "antenna", "operator", "exposure ratio", "% of limit"],
                  rows, [2.2, 1.2, 1.0, 2.0, 1.2, 1.2], ctx.width, right_cols=(4, 5))]


def _receptor_table(ctx: ReportContext) -> list:
    if not ctx.data["points"]:
        return [para("No receptors given.")]
    rows = []
    for p in ctx.data["points"]:
        for e in p["exposure"]:
            rows.append([p["name"], e["limits"], e["population"], jnum(e["exposure_ratio"]),
                         jpct(e["percent_of_limit"]), e["governing_region"]])
    dens = []
    for p in ctx.data["points"]:
        for a in p["antennas"]:
            dens.append([p["name"], a["id"], jnum(a["power_density_w_m2"])])
    return [
        para("Both populations are listed for reference; each receptor is judged against the "
             "limits of its own access class (see the summary)."),
        table(["receptor", "limit set", "population", "exposure ratio", "% of limit",
               "governing"], rows, [2.8, 1.2, 1.3, 1.2, 1.2, 1.0], ctx.width, right_cols=(3, 4)),
        para("Power density of each antenna at each receptor", "H2"),
        table(["receptor", "antenna", "power density (W/m²)"], dens, [3.5, 1.5, 2.0], ctx.width,
              right_cols=(2,)),
    ]


def _zone_table(ctx: ReportContext) -> list:
    rows = [[z["area"], z["set_id"], z["label"], jnum(json_round(z["area_m2"], 4))]
            for z in zone_rows(ctx.zones)]
    out = [para("Zones are the parts of an area where the exposure ratio (with spatial averaging) "
                "is above the level named; zones are nested, not bands. A not-assessable zone is "
                "where the models cannot give a number; it is included in every other zone of "
                "its area.")]
    if rows:
        out.append(table(["area", "limit set", "zone: exposure ratio above", "area (m²)"], rows,
                         [2.4, 1.2, 3.0, 1.2], ctx.width, right_cols=(3,)))
    else:
        out.append(para("No area has any zone at the levels evaluated."))
    return out


def _barrier_rows(ctx: ReportContext) -> list[list]:
    rows = []
    for sid, entry in ctx.barriers.items():
        by_area = entry.get("by_area_m", {})
        if not by_area:
            rows.append([sid, "all public areas", jnum(json_round(entry.get("total_m", 0.0), 4))])
        for name, length in by_area.items():
            rows.append([sid, name, jnum(json_round(length, 4))])
    return rows


def results(ctx: ReportContext) -> list:
    out = [heading(4), para("Areas", "H2"), *_area_table(ctx)]
    out += _maps(ctx, False, [
        para("Plan maps", "H2"),
        para("Exposure ratio on each evaluated area, on a continuous scale in dB "
             "(10·log10 of the ratio; 0 dB = at the limit), with the boundary lines labelled "
             "on the map.")])
    out += _maps(ctx, True, [
        para("Elevation cuts", "H2"),
        para("Exposure ratio on the vertical plane through each antenna's boresight, point "
             "values without spatial averaging.")])
    out += [para("Per-antenna keep-out distances", "H2"), *_keep_out_table(ctx)]
    out += [para("Contributions at the worst points", "H2"), *_contribution_table(ctx)]
    out += [para("Receptors", "H2"), *_receptor_table(ctx)]
    out += [para("Zone areas", "H2"), *_zone_table(ctx)]
    out.append(para("Barrier lengths", "H2"))
    rows = _barrier_rows(ctx)
    if rows:
        out.append(para("Length of the boundary of the zone above the general-public limit that "
                        "runs inside public areas (parts along the area's own edge, such as a "
                        "parapet, need no barrier and are not counted)."))
        out.append(table(["limit set", "public area", "barrier length (m)"], rows,
                         [1.5, 3.5, 1.5], ctx.width, right_cols=(2,)))
    else:
        out.append(para("No barrier lengths were computed."))
    return out


# ----------------------------------------------------------------------------- mitigation


def _remedy_rows(b: dict, n_antennas: int) -> list[list]:
    m = b["mitigation"]
    if m is None:
        return []
    rows = [["every antenna reduces power", f"{jnum(m['uniform_reduction_db'])} dB"]]
    resp = m["responsible_operators_reduction_db"]
    ops = ", ".join(b["responsible_operators"]) or "none"
    rows.append([f"only the responsible operators ({ops}) reduce, all by the same amount",
                 "not possible alone" if resp is None else f"{jnum(resp)} dB"])
    for op, v in m["operator_alone_reduction_db"].items():
        rows.append([f"{op} alone reduces", "not possible alone" if v is None else f"{jnum(v)} dB"])
    if len(m["raised_antennas"]) == n_antennas > 1:
        what = "raise the whole mount (every antenna) together"
    else:
        what = f"raise the dominant antennas ({', '.join(m['raised_antennas']) or 'none'}) together"
    h = m["extra_height_m"]
    rows.append([what,
                 f"not found within {jnum(m['height_search_limit_m'])} m" if h is None
                 else f"{jnum(h)} m higher"])
    return rows


def _barrier_items(ctx: ReportContext) -> list[str]:
    """One sentence per public area and limit set that needs a barrier."""
    unknown_only = {(z["area"], z["set_id"]) for z in zone_rows(ctx.zones)
                    if z["kind"] == "general-limit" and z["only_unknown"]}
    items = []
    for sid, entry in ctx.barriers.items():
        for name, length in entry.get("by_area_m", {}).items():
            if not length or length <= 0:
                continue
            text = (f"{name} ({sid}): a barrier about {metres(json_round(length, 4))} long along "
                    "the boundary of the zone above the general-public limit, as drawn on the "
                    "plan map; the public stays outside it.")
            if (name, sid) in unknown_only:
                text += (" That zone is only the part of the area these models cannot assess "
                         "(no computed value there exceeds the limit): the reviewer decides "
                         "whether a barrier or a measurement is needed.")
            items.append(text)
    return items


def _access_point_rows(ctx: ReportContext) -> list[list]:
    """Per area and limit set: the highest computed category, and what is not assessable."""
    zones = zone_rows(ctx.zones)
    rows = []
    for a in ctx.evaluated_areas():
        for b in a["by_limits"]:
            mine = [z for z in zones if z["area"] == a["name"] and z["set_id"] == b["limits"]]
            computed = [z for z in mine if z["category"] > 0 and not z["only_unknown"]]
            if computed:
                top = max(computed, key=lambda z: z["category"])
                cat, word = top["category_name"], top["sign_word"]
            else:
                cat, word = "Category One", "INFORMATION (optional)"
            note = ""
            if any(z["kind"] == "not-assessable" for z in mine):
                note = ("part of the area is not assessable by these models: the reviewer sets "
                        "the sign there (see the zones above)")
            rows.append([a["name"], b["limits"], cat, word, note])
    return rows


def mitigation(ctx: ReportContext) -> list:
    out = [heading(5)]
    failing = ctx.failing()
    out.append(para("Remedies for failing areas", "H2"))
    if not failing:
        out.append(para("No area exceeds a limit on these inputs, so no power or height remedy "
                        "is needed. Signage below still applies."))
    for a, b in failing:
        out.append(para(f"{a['name']} — {b['limits']} ({b['population']}): maximum exposure ratio "
                        f"{jnum(b['max_exposure_ratio'])}", "H2"))
        out.append(table(["remedy", "amount that brings the area to the limit"], _remedy_rows(b, len(ctx.site.antennas)),
                         [4.0, 2.0], ctx.width))
    out.append(para("Power reductions are exact (exposure is proportional to power). Heights are "
                    "searched in steps and re-evaluated; a reduction of one operator alone is "
                    "'not possible alone' where the others already exceed the limit without it.",
                    "small"))
    out.append(para("Barrier placement", "H2"))
    items = _barrier_items(ctx)
    if items:
        out += bullets(items)
    else:
        out.append(para("No zone above the general-public limit lies inside a public area: no "
                        "barrier is needed on these inputs."))
    out.append(para("Signs: category and sign word of each zone", "H2"))
    out.append(para("Categories of 47 CFR 1.1307(b)(4): One, at or below the general-public "
                    "limit (an INFORMATION sign is optional); Two, above the general-public but "
                    "at most the occupational limit (NOTICE); Three, above the occupational limit "
                    "up to ten times it (CAUTION); Four, above ten times the occupational limit "
                    "(WARNING; the reviewer may require DANGER where contact injury is possible). "
                    "The scheme is defined against the FCC limits; for other limit sets it is "
                    "applied by analogy with that set's own general and occupational limits."))
    zrows = []
    for z in zone_rows(ctx.zones):
        if z["kind"] == "not-assessable":
            note = "the models give no number here"
        elif z["only_unknown"]:
            note = "lies wholly in the not-assessable part: category not computed from values"
        else:
            note = ""
        zrows.append([z["area"], z["set_id"], z["label"], z["category_name"],
                      z["sign_word"] or "-", note])
    if zrows:
        out.append(table(["area", "limit set", "zone", "category", "sign word", "note"], zrows,
                         [1.8, 1.1, 1.9, 1.4, 1.1, 2.2], ctx.width))
    else:
        out.append(para("No zones: every evaluated area is in Category One."))
    out.append(para("Signs at the access points of each area", "H2"))
    out.append(para("The sign at each way into an area (doors, hatches, ladders, and any point "
                    "of its boundary where people can enter) carries the highest category found "
                    "anywhere in the area."))
    out.append(table(["area", "limit set", "category at its access points", "sign word", "note"],
                     _access_point_rows(ctx), [2.2, 1.2, 1.6, 1.6, 2.2], ctx.width))
    return out
