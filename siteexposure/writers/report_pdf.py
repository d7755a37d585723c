"""The PDF pre-survey report of a site result (reportlab), for review by a licensed professional.

Contents, in order: cover (site, location, address, run date, preparer, status line,
limit sets, contents), 1 summary of findings, 2 inputs, 3 method and assumptions,
4 results (maps, keep-out distances, contributions, receptors, zones, barriers),
5 mitigation (remedies, barriers, categories and sign words), 6 cautions and deferral,
7 reviewer sign-off, 8 traceability. Every page carries a running header (site name and
the short status line) and "page N of M".

Numbers are those of ``screen --json`` (:func:`siteexposure.writers.json_out.site_dict`).
The document is built with reportlab's ``invariant`` mode, so the same inputs give the
same file except for the run date, which is printed from ``result.settings["run_utc"]``.

The sections live in their own modules: :mod:`~siteexposure.writers.report_sections`
(cover, summary, inputs), :mod:`~siteexposure.writers.report_method`,
:mod:`~siteexposure.writers.report_results` (results, mitigation) and
:mod:`~siteexposure.writers.report_closing` (cautions, sign-off, traceability); the page
furniture is in :mod:`~siteexposure.writers.report_layout`.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

from siteexposure.atomic import atomic_path
from siteexposure.engine.result import SiteResult
from siteexposure.errors import OutputError
from siteexposure.writers.cautions import ONE_LINE

__all__ = ["write_report"]

MARGIN_PT = 48.0  #: page margin left and right [pt]
TOP_PT = 62.0  #: top margin, room for the running header [pt]
BOTTOM_PT = 52.0  #: bottom margin, room for the footer [pt]
#: a section starts on a new page unless at least this share of the page is left
SECTION_BREAK_SHARE = 0.35


def _numbered_canvas(site_name: str):
    """A canvas class that draws the running header and "page N of M" on every page."""
    from reportlab.lib import colors
    from reportlab.pdfbase.pdfmetrics import stringWidth
    from reportlab.pdfgen.canvas import Canvas

    from siteexposure.writers.report_layout import FONT, FONT_BOLD

    class NumberedCanvas(Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 (reportlab's name)
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._furniture(total)
                super().showPage()
            super().save()

        def _furniture(self, total: int) -> None:
            w, h = self._pagesize
            left, right = MARGIN_PT, w - MARGIN_PT
            self.saveState()
            self.setStrokeColor(colors.black)
            self.setLineWidth(0.5)
            name = site_name
            size = 8.5
            room = right - left
            if stringWidth(name, FONT_BOLD, size) > room:
                while len(name) > 1 and stringWidth(name + "…", FONT_BOLD, size) > room:
                    name = name[:-1]
                name = name.rstrip() + "…"
            self.setFont(FONT_BOLD, size)
            self.drawString(left, h - 30, name)
            self.setFont(FONT, 7)
            self.drawString(left, h - 40, ONE_LINE)
            self.line(left, h - 45, right, h - 45)
            self.line(left, 38, right, 38)
            self.setFont(FONT, 7)
            self.drawString(left, 27, "RF exposure pre-survey: screening estimate for licensed "
                                      "review")
            self.drawRightString(right, 27, f"page {self._pageNumber} of {total}")
            self.restoreState()

    return NumberedCanvas


def _document(target: Path, site_name: str):
    from reportlab.lib.pagesizes import A4
    from reportlab.platypus import BaseDocTemplate, Frame, PageTemplate

    class ReportDoc(BaseDocTemplate):
        #: build passes so far (multiBuild lays the story out again until the contents list
        #: has its page numbers; images need drawing only from the second pass on)
        passes = 0

        def build(self, *args, **kwargs):
            self.passes += 1
            return super().build(*args, **kwargs)

        def afterFlowable(self, flowable):  # noqa: N802 (reportlab's name)
            style = getattr(flowable, "style", None)
            if style is not None and style.name == "H1":
                text = flowable.getPlainText()
                key = "sec" + text.split()[0]
                self.canv.bookmarkPage(key)
                self.canv.addOutlineEntry(text, key, level=0)
                self.notify("TOCEntry", (0, text, self.page, key))

    doc = ReportDoc(
        str(target),
        pagesize=A4,
        leftMargin=MARGIN_PT,
        rightMargin=MARGIN_PT,
        topMargin=TOP_PT,
        bottomMargin=BOTTOM_PT,
        title=f"RF exposure pre-survey: {site_name}",
        author="siteexposure",
        subject="Screening estimate, not a measurement; licensed review required",
        creator="siteexposure",
        invariant=1,
    )
    frame = Frame(doc.leftMargin, doc.bottomMargin, doc.width, doc.height, id="body",
                  leftPadding=0, rightPadding=0, topPadding=0, bottomPadding=0)
    doc.addPageTemplates([PageTemplate(id="page", frames=[frame])])
    return doc


def _toc():
    from reportlab.platypus.tableofcontents import TableOfContents

    from siteexposure.writers.report_layout import styles

    toc = TableOfContents(dotsMinLevel=0)
    toc.levelStyles = [styles()["toc1"]]
    return toc


def write_report(
    result: SiteResult,
    zones: Sequence,
    out_pdf: Path | str,
    *,
    map_files: Sequence[Path | str] | None = None,
) -> Path:
    """Write the PDF pre-survey report of ``result`` to ``out_pdf``, atomically.

    Parameters
    ----------
    result : SiteResult
        From :func:`siteexposure.engine.orchestrator.evaluate_site`.
    zones : sequence of Zone
        From :func:`siteexposure.engine.zones.compute_zones` (may be empty).
    out_pdf : path
        Target file; written through a temporary file and renamed, so a failure leaves
        no partial PDF.
    map_files : sequence of paths, optional
        Map images from :func:`siteexposure.writers.maps.render_maps` (PNG; other
        formats are ignored): plan views, and elevation cuts (names starting with
        ``elevation``), in the order given. Captions come from the file names.

    Returns
    -------
    Path
        ``out_pdf``.

    Raises
    ------
    OutputError
        When the file cannot be written, or would replace an input of the run.
    """
    from reportlab import rl_config
    from reportlab.platypus import CondPageBreak
    from reportlab.platypus.doctemplate import LayoutError

    from siteexposure.engine.zones import barrier_length_m
    from siteexposure.output_guard import protected_inputs, refuse_input_overwrite
    from siteexposure.writers.json_out import site_dict
    from siteexposure.writers.report_closing import cautions, signoff, traceability
    from siteexposure.writers.report_context import ReportContext
    from siteexposure.writers.report_layout import register_fonts
    from siteexposure.writers.report_method import method
    from siteexposure.writers.report_results import mitigation, results
    from siteexposure.writers.report_sections import cover, inputs, summary

    target = Path(out_pdf)
    refuse_input_overwrite([target], protected_inputs(result.site))
    register_fonts()
    site_name = result.site.name
    zones = list(zones)
    maps = [Path(p) for p in (map_files or ())]
    for p in maps:
        if not p.is_file():
            raise OutputError(f"map file '{p}': does not exist; expected a rendered map image")
    with atomic_path(target) as tmp:
        doc = _document(tmp, site_name)
        ctx = ReportContext(result=result, data=site_dict(result), zones=zones, map_files=maps,
                            width=doc.width, height=doc.height,
                            barriers=barrier_length_m(result, zones))
        toc = _toc()
        story = cover(ctx, toc)
        for section in (summary, inputs, method, results, mitigation, cautions):
            story += [*section(ctx), CondPageBreak(SECTION_BREAK_SHARE * doc.height)]
        story += [*signoff(ctx), *traceability(ctx)]
        saved_a85 = rl_config.useA85
        rl_config.useA85 = 0  # binary streams: smaller, and no slow text encoding of images
        try:
            doc.multiBuild(story, canvasmaker=_numbered_canvas(site_name))
        except LayoutError as exc:
            raise OutputError(f"report '{target}': the layout failed ({exc})") from exc
        finally:
            rl_config.useA85 = saved_a85
        if doc.passes < 2:  # maps are drawn from the second pass on (report_results)
            raise OutputError(f"report '{target}': the contents list did not force a second "
                              "layout pass; expected at least two")
    return target
