"""The closing sections of the PDF report: cautions and deferral, reviewer sign-off,
traceability appendix.
"""

from __future__ import annotations

import json
import platform

from siteexposure.writers.cautions import CAUTIONS, STATUS_LINE
from siteexposure.writers.report_context import ReportContext
from siteexposure.writers.report_layout import bullets, jnum, key_value, para, short, table
from siteexposure.writers.report_sections import heading

#: an exposure ratio at or above this (within 3 dB of the limit) counts as a small margin;
#: this report's own threshold for recommending field measurement
SMALL_MARGIN_RATIO = 0.5


def _small_margins(ctx: ReportContext) -> list[str]:
    """Where field measurement is recommended: small margin, exceeded or not assessable."""
    out = []
    for a in ctx.evaluated_areas():
        for b in a["by_limits"]:
            r = b["max_exposure_ratio"]
            if b["verdict"] == "not assessable":
                out.append(f"{a['name']} ({b['limits']}): part of the area cannot be assessed by "
                           "these models.")
            elif r is not None and r >= SMALL_MARGIN_RATIO:
                word = "above the limit" if r > 1 else "within 3 dB of the limit"
                out.append(f"{a['name']} ({b['limits']}): maximum exposure ratio {short(r)}, "
                           f"{word}.")
    for p in ctx.data["points"]:
        pop = {"public": "general", "worker": "occupational"}.get(p["access"])
        for e in p["exposure"]:
            if e["population"] != pop:
                continue
            r = e["exposure_ratio"]
            if r is None:
                out.append(f"{p['name']} ({e['limits']}): not assessable by these models.")
            elif r >= SMALL_MARGIN_RATIO:
                out.append(f"{p['name']} ({e['limits']}): exposure ratio {short(r)}.")
    return out


def cautions(ctx: ReportContext) -> list:
    out = [heading(6), para(STATUS_LINE, "status"), *bullets(CAUTIONS)]
    out.append(para("What this report is, and is not", "H2"))
    out.append(para(
        "This is a pre-survey screening estimate computed from models and from the inputs listed "
        "in section 2. It is not a measurement and not a certificate of compliance. The "
        "regulations, codes and the authority having jurisdiction at the site govern; where they "
        "differ from the limit tables used here, they prevail. A licensed professional must review "
        "the inputs, the method and the findings, and sign below, before anyone relies on this "
        "report for access, signage, design or any other decision."))
    out.append(para("Where field measurement is recommended", "H2"))
    spots = _small_margins(ctx)
    if spots:
        out.append(para("Field measurement is recommended at least at the following places "
                        f"(exposure ratio {SMALL_MARGIN_RATIO:g} or more, i.e. within 3 dB of the "
                        "limit or above it, or not assessable; this report's threshold):"))
        out += bullets(spots)
    else:
        out.append(para(f"No area or receptor reaches an exposure ratio of {SMALL_MARGIN_RATIO:g} "
                        "(3 dB below the limit) on these inputs. Measurement remains recommended "
                        "wherever the inputs (powers, patterns, mounting) are uncertain."))
    out.append(para("Workers", "H2"))
    out.append(para(
        "People who work near the antennas follow their employer's RF safety programme: "
        "training, coordination with the operators for power-down, and personal monitors where "
        "the programme requires them. The occupational limits apply only to people who are "
        "aware of the exposure and can control it."))
    return out


def _box() -> str:
    return "☐"


def signoff(ctx: ReportContext) -> list:
    from reportlab.lib import colors
    from reportlab.platypus import CondPageBreak, Spacer, Table, TableStyle

    from siteexposure.writers.report_layout import styles

    st = styles()
    out = [CondPageBreak(ctx.height * 0.75), heading(7),
           para("To be completed by the licensed professional who reviewed this report. The "
                "findings may be relied on only once this block is completed and signed.")]
    line_rows = [("Reviewer name", ""), ("Licence / registration number", ""),
                 ("Issuing authority or jurisdiction", ""), ("Organisation", ""),
                 ("Date of review", ""), ("Signature", "")]
    from reportlab.platypus import Paragraph

    data = [[Paragraph(k, st["cellhead"]), ""] for k, _ in line_rows]
    t = Table(data, colWidths=[ctx.width * 0.35, ctx.width * 0.65], rowHeights=[26] * len(data))
    t.setStyle(TableStyle([("LINEBELOW", (1, 0), (1, -1), 0.6, colors.black),
                           ("VALIGN", (0, 0), (-1, -1), "BOTTOM")]))
    out += [t, Spacer(1, 12)]
    out += [para(f"{_box()}  Findings accepted as presented.", "body"),
            para(f"{_box()}  Findings amended (the amendments are listed below or attached).",
                 "body"),
            para(f"{_box()}  Field measurement required before the findings are relied on.",
                 "body"),
            Spacer(1, 6), para("Amendments and notes", "H2")]
    notes = Table([[""] for _ in range(6)], colWidths=[ctx.width], rowHeights=[20] * 6)
    notes.setStyle(TableStyle([("LINEBELOW", (0, 0), (-1, -1), 0.4, colors.grey)]))
    out.append(notes)
    return out


def _versions() -> str:
    import numpy
    import reportlab

    return (f"Python {platform.python_version()}, numpy {numpy.__version__}, "
            f"reportlab {reportlab.Version}")


def traceability(ctx: ReportContext) -> list:
    from reportlab.platypus import PageBreak, Spacer

    site, data, settings = ctx.site, ctx.data, ctx.result.settings
    out = [PageBreak(), heading(8)]
    out.append(key_value([
        ("Tool", f"siteexposure {settings.get('tool_version', data['tool']['version'])}"),
        ("Run date (UTC)", str(settings.get("run_utc", "n/a"))),
        ("Site file", str(site.source_path) if site.source_path else "built in Python, no file"),
        ("Software", _versions()),
    ], ctx.width))
    out.append(para("Input files", "H2"))
    if site.input_files:
        rows = [[path, digest] for path, digest in site.input_files]
        out.append(table(["file (site file first, then pattern files)", "SHA-256"], rows,
                         [4.4, 4.6], ctx.width, mono_cols=(0, 1)))
    else:
        out.append(para("No input files recorded (site built in Python)."))
    out.append(para("Pattern source of each antenna", "H2"))
    out.append(table(["antenna", "pattern source"],
                     [[a.id, a.pattern_source or "not recorded"] for a in site.antennas],
                     [1.2, 7.8], ctx.width, mono_cols=(1,)))
    out.append(para("Limit tables", "H2"))
    for sid in data["site"]["limits"]:
        src = data["limit_sources"].get(sid, {})
        out.append(key_value([
            ("Limit set", f"{sid} — {src.get('title', '')}"),
            ("File", src.get("file", "")),
            ("SHA-256", src.get("sha256", "")),
            ("Source", src.get("publication", "")),
            ("Tables", "; ".join(src.get("tables", []))),
        ], ctx.width, key_fraction=0.16, mono_keys=("File", "SHA-256")))
        out.append(Spacer(1, 6))
    out.append(para("Settings of this run", "H2"))
    rows = [[k, json.dumps(v, ensure_ascii=False, sort_keys=True)]
            for k, v in settings.items() if k != "run_utc"]
    rows.append(["limit sets", ", ".join(data["site"]["limits"])])
    rows.append(["antenna models", "; ".join(f"{a['id']}: {a['model']['id']}"
                                             for a in data["antennas"])])
    rows.append(["stand-off from the body (m)", "; ".join(f"{a['id']}: {jnum(a['standoff_m'])}"
                                                  for a in data["antennas"])])
    out.append(table(["setting", "value"], rows, [2.0, 7.0], ctx.width, mono_cols=(1,)))
    out.append(para("The numbers in this report are those of the JSON output of the same run "
                    "(siteexposure screen SITE --json), which holds no run date: the same inputs "
                    "give the same numbers.", "small"))
    return out
