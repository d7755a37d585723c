"""The method-and-assumptions section of the PDF report.

It states, for the reviewer, which field model ran for each antenna and how well each
model agrees with the method-of-moments validation (:mod:`siteexposure.writers.accuracy`),
how the grid is spatially averaged, the reflection and activity factors, how exposure
ratios from several transmitters are summed, and the limit tables with their citations.
"""

from __future__ import annotations

from xml.sax.saxutils import escape

from siteexposure.writers import accuracy
from siteexposure.writers.json_out import _num as json_round
from siteexposure.writers.report_context import ReportContext
from siteexposure.writers.report_layout import bullets, jnum, para, table
from siteexposure.writers.report_sections import heading

#: our own one-paragraph description of each field model, with its published basis
MODEL_TEXT = {
    "far-field-friis": (
        "Far-field formula: S = P·G(direction)·F / (4πr²), with the pattern gain toward the "
        "point. Exact in the far field; closer in, on the main beam, it overstates the density "
        "because the gain has not yet formed. Basis: FCC OET Bulletin 65, Ed. 97-01 (1997), "
        "Section 2; the Friis transmission relation (Balanis, Antenna Theory, Sec. 2.17)."
    ),
    "oet65-cylindrical": (
        "Cylindrical near-field model for line-source antennas: close to the aperture the power "
        "spreads through a cylinder of the aperture height, S = F·(180/θ_BW)·P / (π·ρ·h), and the "
        "model takes the smaller of this and the far-field value, so that each formula is used "
        "where it is the better bound. Basis: FCC OET Bulletin 65, Ed. 97-01, Section 2 "
        "(near-field prediction for omnidirectional and sector antennas)."
    ),
    "array-synthesis": (
        "Array synthesis: the aperture is replaced by a column of short current elements at "
        "most λ/2 apart, with an amplitude taper fitted to the antenna's vertical pattern and "
        "the phase progression of its electrical tilt; their complete near and far fields are "
        "summed coherently and scaled so that the radiated power equals the net input power. "
        "Basis: Balanis, Antenna Theory, 4th ed., Sec. 4.2 (fields of a short dipole) and "
        "Sec. 6.3 (linear arrays)."
    ),
    "circular-aperture": (
        "Dish model: the dish as a circular aperture of its diameter, illuminated with the "
        "taper (1 − (r/a)²)^n whose efficiency equals the aperture efficiency its gain implies; "
        "the field in front of the aperture plane is the Rayleigh-Sommerfeld integral over the "
        "aperture ring by ring (near-field plateau, Fresnel oscillation, transition and beam edge "
        "follow from it), beyond 2D²/λ the far-field formula with the pattern. Behind the "
        "aperture plane: the OET-65 off-axis rule, and under auto never less than the envelope "
        "bound. Basis: Goodman, Introduction to Fourier Optics, 3rd ed., ch. 3-4; Balanis, "
        "Antenna Theory, 4th ed., Sec. 12.10."
    ),
    "oet65-aperture": (
        "Aperture model for dishes: constant on-axis density 16·η·P/(πD²) out to D²/(4λ), "
        "falling as 1/r through the transition region to 0.6·D²/λ and as 1/r² beyond, with "
        "an off-axis reduction. Basis: FCC OET Bulletin 65, Ed. 97-01, Section 2 (aperture "
        "antennas)."
    ),
}


def _accuracy_table(ctx: ReportContext, used: list[str]) -> list:
    rows = []
    for mid in used:
        for r in accuracy.rows_for(mid):
            region = r[0].split(", ", 1)[1]
            rows.append([mid, region, r[3], f"{r[4]} to {r[5]}", f"{r[6]} to {r[7]}", r[8]])
    if not rows:
        return [para("None of the models used here is part of the method-of-moments validation "
                     "of this version: their accuracy is not available from it.")]
    # AUTO_BY_CASE rows: case, judged, within, min, max, refused, far field, bound used
    cases = [[r[0], r[2], r[3], f"{r[3]} to {r[4]}", r[5], r[6].replace(" .. ", " to ")]
             for r in accuracy.AUTO_BY_CASE]
    limits = [f"{mid}: {accuracy.KNOWN_LIMITS[mid]}" for mid in used if mid in accuracy.KNOWN_LIMITS]
    return [
        table(["model", "region", "median (dB)", "5th to 95th percentile (dB)",
               "lowest to highest (dB)", "within −1.5..+3 dB"], rows,
              [1.5, 1.7, 0.8, 1.4, 1.4, 1.0], ctx.width, right_cols=(2, 3, 4, 5)),
        para("Per reference antenna, with the model that auto chose for it (lowest and highest "
             "error at any judged point; far field; share refused):", "small"),
        table(["reference antenna", "within −1.5..+3 dB", "lowest (dB)", "lowest to highest "
               "(dB)", "refused", "far field (dB)"], cases, [2.4, 1.0, 0.8, 1.4, 0.8, 1.5],
              ctx.width, right_cols=(1, 2, 3, 4, 5)),
        para(accuracy.SUMMARY + f" Source: {accuracy.SOURCE}.", "small"),
        *bullets(limits),
    ]


def method(ctx: ReportContext) -> list:
    site, data = ctx.site, ctx.data
    used: dict[str, list[str]] = {}
    for a in data["antennas"]:
        used.setdefault(a["model"]["id"], []).append(a["id"])
    out = [heading(3), para("Field models", "H2"),
           para("Each antenna's power density is computed with one field model, chosen per "
                "antenna (the inventory gives the choice and its reason). Models used here:")]
    for mid, ids in used.items():
        text = MODEL_TEXT.get(mid, "No description available for this model.")
        out += bullets([f"<b>{escape(mid)}</b> (antennas {escape(', '.join(ids))}): "
                        f"{escape(text)}"], markup=True)
    out.append(para("Points closer than λ/2π (at most 1 m) to an antenna's body are not "
                    "assessed: they are reported as not assessable and are never counted as "
                    "within the limit. Under auto, wherever the chosen model has not been "
                    "validated (closer than λ/2π to the body below about 48 MHz, inside the "
                    "far-field range of an antenna given without a body, behind a dish's "
                    "aperture plane), the density is never less than the "
                    "envelope bound: the input power spread from the nearest point of the body "
                    "with the largest gain the body can send that way, raised for the reactive "
                    "field of its elements. It is never below the method-of-moments "
                    "references, and usually well above them."))
    out.append(para("Electric and magnetic fields", "H2"))
    out.append(para("Where the models give them apart (array synthesis: the complete fields "
                    "of its elements), the electric-field density |E|²/η0 is judged against the "
                    "E limit and the magnetic one η0·|H|² against the H limit of each table, "
                    "and the larger ratio governs; elsewhere the two are equal (a plane wave)."))
    out.append(para("Validated accuracy", "H2"))
    out.append(para("The models were compared with method-of-moments solutions (PyNEC) of "
                    "thirteen reference antennas (dipoles, a collinear, panels with and "
                    "without electrical tilt, Yagis, a log-periodic array, FM arrays of crossed "
                    "and slanted dipoles, a small loop, a monopole over ground) and with a "
                    "direct integral of a uniform circular aperture (a dish). The error is "
                    "model minus reference max(S_E, S_H) in dB; positive values mean the model "
                    "overstates the exposure."))
    validated = [m for m in used if m in accuracy.VALIDATED_MODEL_IDS]
    out += _accuracy_table(ctx, validated)
    for mid in used:
        if mid not in accuracy.VALIDATED_MODEL_IDS:
            out.append(para(f"{mid}: not part of the method-of-moments validation; accuracy "
                            "from that validation is not available.", "small"))

    av = data["site"]["averaging"] or {}
    out.append(para("Spatial averaging", "H2"))
    if av.get("method") == "peak":
        how = "the largest value on the line is taken (peak, no averaging)"
    else:
        how = "the mean of the values on the line is taken"
    out.append(para(
        f"Each grid cell of an area (spacing {data['site']['resolution_m']} m) carries a vertical "
        f"line standing on the floor, with {av.get('points')} evenly spaced points from "
        f"{av.get('bottom_m')} m to {av.get('top_m')} m (both ends included); {how}. So that no "
        "narrow part of an area (a walkway, a ledge) falls between cell centres, lines also "
        "stand on the outline itself, at most one grid spacing apart, and in every cell the area "
        "covers only in part; every line counts towards the area's verdict. Limit sets "
        "with local (peak) reference levels are checked at the largest point of the line as "
        "well, and the larger of the two ratios governs. Receptors are evaluated at their exact "
        "position without averaging."))
    out.append(para("Reflection and activity factors", "H2"))
    refl = ", ".join(jnum(json_round(f)) for f in ctx.result.settings.get("reflection_factors", []))
    out.append(para(
        f"Reflection factor F (multiplies the power density; 1 = free space, 2.56 = the OET-65 "
        f"allowance for a reflection adding in phase): {refl or 'n/a'}. The activity factor of "
        "each antenna (duty cycle, TDD downlink share, actual-to-maximum power of beam-forming "
        "antennas) multiplies its power; the values used are in the power chain of the "
        "inventory. Activity factors below 1 must be justified by the operator."))
    acts = sorted({float(a.activity) for a in site.antennas})
    if any(x < 1.0 for x in acts):
        low = [a.id for a in site.antennas if a.activity < 1.0]
        out.append(para(f"Antennas with an activity factor below 1: {', '.join(low)}.", "small"))
    out.append(para("Summing transmitters", "H2"))
    out.append(para(
        "The exposure ratio at a point is the sum over all antennas of S_i / S_limit(f_i), "
        "each density divided by the limit at its own frequency, so transmitters at different "
        "frequencies add in proportion to their limits. An operator's share is the sum over its "
        "antennas. Operators whose share is 5 % of the limit or more where the limit is exceeded "
        "share responsibility (47 CFR 1.1307(b)(5)). Power remedies are exact because the ratio "
        "is linear in power. The height remedy raises the dominant antennas (those at 5 % of "
        "the limit or more at the worst point; the whole mount when the other antennas alone "
        "would still exceed) and searches, by re-evaluating the area, the smallest extra height "
        "that complies, up to a search limit."))
    out.append(para("Limit tables", "H2"))
    rows = []
    for sid in data["site"]["limits"]:
        src = data["limit_sources"].get(sid, {})
        rows.append([sid, src.get("title", ""), "; ".join(src.get("tables", [])),
                     src.get("publication", "")])
    out.append(table(["id", "title", "tables", "publication"], rows, [1.0, 2.2, 1.2, 4.6],
                     ctx.width))
    out.append(para("Public areas and receptors are judged against the general-public (general "
                    "population / uncontrolled) limits; worker areas against the occupational "
                    "(controlled) limits, which assume trained people aware of the exposure. "
                    "The limit-table files and their hashes are listed in the traceability "
                    "appendix.", "small"))
    return out
