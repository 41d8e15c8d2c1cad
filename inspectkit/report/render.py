"""Laying a report's content out as a PDF with reportlab's platypus.

A first page with the result, what to do by when and the visits it takes, a
summary, then the details, section by section (`sections.py`): tables split
across pages with their header row repeated, every page footed with the site,
the inspection id, the report revision and "page X of Y". The fonts are the
Bitstream Vera TTFs that ship inside reportlab, which carry Ω, ·, ≤ and
accented letters (the built-in Helvetica does not).
"""

from __future__ import annotations

from dataclasses import dataclass
from io import BytesIO
from typing import Any

from reportlab import rl_config
from reportlab.lib import colors
from reportlab.lib.units import mm
from reportlab.lib.utils import ImageReader
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as pdfcanvas
from reportlab.platypus import BaseDocTemplate, Frame, PageTemplate

from inspectkit.report.branding import Branding
from inspectkit.report.content import ReportContent
from inspectkit.report.layout import MARGIN, PAGE, RenderError, make_kit
from inspectkit.report.sections import SECTIONS
from inspectkit.report.sign import SignatureSlot

FOOTER_HEIGHT = 14 * mm
__all__ = ["FOOTER_HEIGHT", "RenderError", "RenderedReport", "register_fonts", "render_report"]


@dataclass(frozen=True)
class RenderedReport:
    """A rendered PDF and where its signature block sits."""

    data: bytes
    pages: int
    signature_slot: SignatureSlot


def _binary_streams() -> None:
    """Embed photos as raw binary, not ASCII85 text, which is a quarter larger.

    reportlab reads this setting when it writes each image; it is global, like
    the fonts registered below, and harmless to every other PDF the process writes.
    """
    rl_config.useA85 = 0


def register_fonts() -> None:
    """Register reportlab's bundled Vera family once, as "Vera"."""
    if "Vera" in pdfmetrics.getRegisteredFontNames():
        return
    for name, file in (
        ("Vera", "Vera.ttf"),
        ("Vera-Bold", "VeraBd.ttf"),
        ("Vera-Italic", "VeraIt.ttf"),
        ("Vera-BoldItalic", "VeraBI.ttf"),
    ):
        pdfmetrics.registerFont(TTFont(name, file))
    pdfmetrics.registerFontFamily(
        "Vera", normal="Vera", bold="Vera-Bold", italic="Vera-Italic", boldItalic="Vera-BoldItalic"
    )


def _numbered_canvas(content: ReportContent, branding: Branding) -> type[pdfcanvas.Canvas]:
    """A canvas that holds pages back until the end, so each footer can say "page X of Y"."""

    class NumberedCanvas(pdfcanvas.Canvas):
        def __init__(self, *args: Any, **kwargs: Any) -> None:
            super().__init__(*args, **kwargs)
            self._pages: list[dict[str, Any]] = []

        def showPage(self) -> None:  # noqa: N802 - reportlab's name
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self) -> None:
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._footer(total)
                super().showPage()
            super().save()

        def _footer(self, total: int) -> None:
            width, _ = PAGE
            self.saveState()
            self.setStrokeColor(colors.HexColor(branding.accent))
            self.setLineWidth(0.6)
            self.line(MARGIN, FOOTER_HEIGHT, width - MARGIN, FOOTER_HEIGHT)
            self.setFont("Vera", 7)
            self.setFillColor(colors.HexColor("#333333"))
            self.drawString(
                MARGIN,
                FOOTER_HEIGHT - 10,
                f"{content.site_name} · inspection {content.inspection_id} · "
                f"{content.revision_label}",
            )
            self.drawString(MARGIN, FOOTER_HEIGHT - 19, branding.name)
            self.drawRightString(
                width - MARGIN, FOOTER_HEIGHT - 10, f"page {self._pageNumber} of {total}"
            )
            self.restoreState()

    return NumberedCanvas


def _cover_band(branding: Branding) -> Any:
    def draw(canvas: pdfcanvas.Canvas, doc: BaseDocTemplate) -> None:
        width, height = PAGE
        canvas.saveState()
        canvas.setFillColor(colors.HexColor(branding.primary))
        canvas.rect(0, height - 38 * mm, width, 38 * mm, stroke=0, fill=1)
        canvas.setFillColor(colors.HexColor(branding.accent))
        canvas.rect(0, height - 40 * mm, width, 2 * mm, stroke=0, fill=1)
        text_x = MARGIN
        if branding.logo is not None:
            canvas.drawImage(
                ImageReader(str(branding.logo)),
                MARGIN,
                height - 33 * mm,
                28 * mm,
                28 * mm,
                preserveAspectRatio=True,
                mask="auto",
            )
            text_x += 32 * mm
        canvas.setFillColor(colors.white)
        canvas.setFont("Vera-Bold", 16)
        canvas.drawString(text_x, height - 18 * mm, branding.name)
        canvas.setFont("Vera", 8.5)
        canvas.drawString(text_x, height - 25 * mm, branding.contact)
        canvas.restoreState()

    return draw


def render_report(content: ReportContent, branding: Branding) -> RenderedReport:
    """Lay out a report as PDF bytes, with an empty box reserved for the signature.

    Raises:
        RenderError: a photo cannot be read.
    """
    register_fonts()
    _binary_streams()
    out = BytesIO()
    doc = BaseDocTemplate(
        out,
        pagesize=PAGE,
        leftMargin=MARGIN,
        rightMargin=MARGIN,
        topMargin=MARGIN,
        bottomMargin=FOOTER_HEIGHT + 6 * mm,
        title=f"{content.title}: {content.site_name} {content.inspection_date.isoformat()}",
        author=content.signer_name or branding.name,
        subject=f"inspection {content.inspection_id}, {content.revision_label}",
        creator="inspectkit",
    )
    frame_height = PAGE[1] - MARGIN - doc.bottomMargin
    body = Frame(MARGIN, doc.bottomMargin, PAGE[0] - 2 * MARGIN, frame_height, id="body")
    cover = Frame(
        MARGIN,
        doc.bottomMargin,
        PAGE[0] - 2 * MARGIN,
        PAGE[1] - 48 * mm - doc.bottomMargin,
        id="cover",
    )
    doc.addPageTemplates(
        [
            PageTemplate("cover", frames=[cover], onPage=_cover_band(branding)),
            PageTemplate("body", frames=[body]),
        ]
    )
    kit = make_kit(branding)
    story = [flowable for section in SECTIONS for flowable in section(content, kit)]
    doc.build(story, canvasmaker=_numbered_canvas(content, branding))
    data = out.getvalue()
    return RenderedReport(
        data=data,
        pages=doc.page,
        signature_slot=SignatureSlot(page=kit.slot["page"], box=kit.slot["box"]),
    )
