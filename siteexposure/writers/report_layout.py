"""Page furniture of the PDF report: fonts, paragraph styles, tables, number formats.

The report uses DejaVu Sans (shipped with matplotlib, a dependency) so that every
character of a site or operator name, and the symbols of the method section (λ, π,
√, ≥, ²), print as themselves; the font is embedded as a subset.

Numbers in tables are printed exactly as ``screen --json`` gives them (the JSON form
rounds once, in :mod:`siteexposure.writers.json_out`); the plain-words summary rounds
those same values to three significant figures.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Sequence
from xml.sax.saxutils import escape

FONT = "SEDejaVu"
FONT_BOLD = "SEDejaVu-Bold"
FONT_ITALIC = "SEDejaVu-Oblique"
FONT_MONO = "SEDejaVuMono"

_STYLES: dict | None = None


def register_fonts() -> None:
    """Register the DejaVu fonts with reportlab once per process."""
    import matplotlib
    from reportlab.lib.fonts import addMapping
    from reportlab.pdfbase import pdfmetrics
    from reportlab.pdfbase.ttfonts import TTFont

    if FONT in pdfmetrics.getRegisteredFontNames():
        return
    folder = os.path.join(matplotlib.get_data_path(), "fonts", "ttf")
    for name, file in (
        (FONT, "DejaVuSans.ttf"),
        (FONT_BOLD, "DejaVuSans-Bold.ttf"),
        (FONT_ITALIC, "DejaVuSans-Oblique.ttf"),
        (FONT + "-BoldOblique", "DejaVuSans-BoldOblique.ttf"),
        (FONT_MONO, "DejaVuSansMono.ttf"),
    ):
        pdfmetrics.registerFont(TTFont(name, os.path.join(folder, file)))
    addMapping(FONT, 0, 0, FONT)
    addMapping(FONT, 1, 0, FONT_BOLD)
    addMapping(FONT, 0, 1, FONT_ITALIC)
    addMapping(FONT, 1, 1, FONT + "-BoldOblique")


def styles() -> dict:
    """Paragraph styles of the report, by name."""
    global _STYLES
    if _STYLES is not None:
        return _STYLES
    from reportlab.lib import colors
    from reportlab.lib.styles import ParagraphStyle

    register_fonts()
    base = ParagraphStyle("body", fontName=FONT, fontSize=9, leading=12, spaceAfter=4)
    s = {
        "body": base,
        "small": ParagraphStyle("small", parent=base, fontSize=7.5, leading=9.5),
        "title": ParagraphStyle("title", parent=base, fontName=FONT_BOLD, fontSize=18, leading=23,
                                spaceAfter=6),
        "subtitle": ParagraphStyle("subtitle", parent=base, fontSize=12, leading=16, spaceAfter=10),
        "H1": ParagraphStyle("H1", parent=base, fontName=FONT_BOLD, fontSize=14, leading=18,
                             spaceBefore=4, spaceAfter=8, keepWithNext=1),
        "H2": ParagraphStyle("H2", parent=base, fontName=FONT_BOLD, fontSize=10.5, leading=14,
                             spaceBefore=8, spaceAfter=4, keepWithNext=1),
        "cell": ParagraphStyle("cell", parent=base, fontSize=7.5, leading=9.2, spaceAfter=0),
        "cellhead": ParagraphStyle("cellhead", parent=base, fontName=FONT_BOLD, fontSize=7.5,
                                   leading=9.2, spaceAfter=0),
        "mono": ParagraphStyle("mono", parent=base, fontName=FONT_MONO, fontSize=6.4, leading=8.2,
                               spaceAfter=0),
        "bullet": ParagraphStyle("bullet", parent=base, leftIndent=12, bulletIndent=2),
        "status": ParagraphStyle("status", parent=base, fontName=FONT_BOLD, fontSize=10.5,
                                 leading=14, borderColor=colors.black, borderWidth=1.2,
                                 borderPadding=7, spaceBefore=10, spaceAfter=14),
        "caption": ParagraphStyle("caption", parent=base, fontName=FONT_ITALIC, fontSize=8,
                                  leading=10, spaceBefore=2, spaceAfter=10),
        "toc1": ParagraphStyle("toc1", parent=base, fontSize=9.5, leading=13, leftIndent=8),
    }
    _STYLES = s
    return s


# ----------------------------------------------------------------------------- numbers


def jnum(x) -> str:
    """A value of the JSON form, printed exactly as ``screen --json`` prints it.

    ``None`` (not assessable or not given) prints as ``n/a``.
    """
    if x is None:
        return "n/a"
    if isinstance(x, bool):
        return "yes" if x else "no"
    if isinstance(x, float) and not math.isfinite(x):
        return "n/a"
    return json.dumps(x)


def jpct(x) -> str:
    """A JSON percentage with its sign."""
    return "n/a" if x is None else f"{jnum(x)} %"


def short(x, digits: int = 3) -> str:
    """A JSON value rounded to ``digits`` significant figures for plain-words text."""
    if x is None:
        return "n/a"
    return f"{float(x):.{digits}g}"


def metres(v, digits: int = 3) -> str:
    return "n/a" if v is None else f"{float(v):.{digits}g} m"


def triple(v: Sequence | None) -> str:
    """East, north, height of a JSON position list, exact JSON values."""
    if v is None:
        return "n/a"
    return ", ".join(jnum(x) for x in v)


# ----------------------------------------------------------------------------- flowables


def para(text: str, style: str = "body", *, markup: bool = False):
    """A paragraph; ``text`` is escaped unless ``markup`` (then it is reportlab mini-HTML)."""
    from reportlab.platypus import Paragraph

    return Paragraph(text if markup else escape(str(text)), styles()[style])


def bullets(items: Sequence[str], *, markup: bool = False) -> list:
    from reportlab.platypus import Paragraph

    st = styles()["bullet"]
    return [Paragraph(t if markup else escape(str(t)), st, bulletText="•") for t in items]


def _cell(value, style):
    from reportlab.platypus import Flowable, Paragraph

    if isinstance(value, Flowable):
        return value
    return Paragraph(escape("" if value is None else str(value)).replace("\n", "<br/>"), style)


CELL_PADDING_PT = 6.0  #: left plus right padding of a table cell [pt]
MAX_WORD_SHARE = 0.4  #: a single word never claims more than this share of the table width


def _widest_word(values, style) -> float:
    """Width of the longest unbreakable word of ``values`` in ``style``. [pt]"""
    from reportlab.pdfbase.pdfmetrics import stringWidth

    font = style.fontName
    words = [w for v in values for w in str(v).split()]
    return max((stringWidth(w, font, style.fontSize) for w in words), default=0.0)


def fit_widths(widths: Sequence[float], need: Sequence[float], total: float) -> list[float]:
    """Column widths summing to ``total``, each at least its ``need`` where that is possible.

    Columns narrower than their longest word are widened; the extra is taken from the
    other columns in proportion to their slack. Where the needs cannot all be met (or a
    single word would take more than :data:`MAX_WORD_SHARE` of the table), the words
    concerned are split instead (reportlab's ``splitLongWords``).
    """
    need = [min(n, MAX_WORD_SHARE * total) for n in need]
    widths = [float(w) for w in widths]
    scale = total / sum(widths)
    widths = [w * scale for w in widths]
    if sum(need) >= total:
        return widths
    deficit = sum(max(0.0, n - w) for w, n in zip(widths, need, strict=True))
    if deficit <= 0:
        return widths
    slack = [max(0.0, w - n) for w, n in zip(widths, need, strict=True)]
    take = deficit / sum(slack)
    return [max(w, n) if s == 0 else w - s * take
            for w, n, s in zip(widths, need, slack, strict=True)]


def table(
    header: Sequence[str],
    rows: Sequence[Sequence],
    fractions: Sequence[float],
    width: float,
    *,
    mono_cols: Sequence[int] = (),
    right_cols: Sequence[int] = (),
):
    """A ruled table whose columns share ``width`` in proportion to ``fractions``.

    Every cell is a wrapping paragraph, the header repeats on each page and long tables
    split between rows, so nothing runs past the frame. Columns in ``mono_cols`` print
    in the monospaced face (hashes, paths); ``right_cols`` are right-aligned (numbers).
    """
    from reportlab.lib import colors
    from reportlab.lib.enums import TA_RIGHT
    from reportlab.lib.styles import ParagraphStyle
    from reportlab.platypus import Table, TableStyle

    if len(fractions) != len(header):
        raise ValueError("one width fraction per column expected")
    st = styles()
    right = ParagraphStyle("cellright", parent=st["cell"], alignment=TA_RIGHT)
    total = float(sum(fractions))

    def style_for(j):
        if j in mono_cols:
            return st["mono"]
        return right if j in right_cols else st["cell"]

    for r in rows:
        if len(r) != len(header):
            raise ValueError("row length differs from the header")
    need = [0.0 if j in mono_cols else _widest_word([header[j]], st["cellhead"])
            for j in range(len(header))]
    for r in rows:
        for j, v in enumerate(r):
            if j not in mono_cols and isinstance(v, str | int | float):
                need[j] = max(need[j], _widest_word([v], style_for(j)))
    widths = fit_widths([width * f / total for f in fractions],
                        [n + CELL_PADDING_PT for n in need], width)
    data = [[_cell(h, st["cellhead"]) for h in header]]
    for r in rows:
        data.append([_cell(v, style_for(j)) for j, v in enumerate(r)])
    t = Table(data, colWidths=widths, repeatRows=1, splitByRow=1, hAlign="LEFT")
    t.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LINEABOVE", (0, 0), (-1, 0), 0.9, colors.black),
                ("LINEBELOW", (0, 0), (-1, 0), 0.6, colors.black),
                ("LINEBELOW", (0, -1), (-1, -1), 0.9, colors.black),
                ("LINEBELOW", (0, 1), (-1, -2), 0.25, colors.Color(0.6, 0.6, 0.6)),
                ("BACKGROUND", (0, 0), (-1, 0), colors.Color(0.9, 0.9, 0.9)),
                ("LEFTPADDING", (0, 0), (-1, -1), CELL_PADDING_PT / 2),
                ("RIGHTPADDING", (0, 0), (-1, -1), CELL_PADDING_PT / 2),
                ("TOPPADDING", (0, 0), (-1, -1), 2),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
            ]
        )
    )
    return t


def key_value(rows: Sequence[tuple[str, object]], width: float, *, key_fraction: float = 0.28,
              mono_keys: Sequence[str] = ()):
    """A two-column table of labels and values, without a header row; the values of the
    labels in ``mono_keys`` print in the monospaced face."""
    from reportlab.lib import colors
    from reportlab.platypus import Table, TableStyle

    st = styles()
    data = [[_cell(k, st["cellhead"]), _cell(v, st["mono"] if k in mono_keys else st["cell"])]
            for k, v in rows]
    t = Table(data, colWidths=[width * key_fraction, width * (1 - key_fraction)], hAlign="LEFT")
    t.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LINEBELOW", (0, 0), (-1, -1), 0.25, colors.Color(0.6, 0.6, 0.6)),
                ("LEFTPADDING", (0, 0), (-1, -1), 3),
                ("TOPPADDING", (0, 0), (-1, -1), 2.5),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
            ]
        )
    )
    return t
