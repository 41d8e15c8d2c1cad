"""Laying a report's content out as a PDF with reportlab's platypus.

A cover with the verdict, a summary page, then the details: tables split
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
from reportlab.lib.enums import TA_CENTER
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.lib.utils import ImageReader
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen import canvas as pdfcanvas
from reportlab.platypus import (
    BaseDocTemplate,
    CondPageBreak,
    Flowable,
    Frame,
    Image,
    KeepTogether,
    NextPageTemplate,
    PageBreak,
    PageTemplate,
    Paragraph,
    Spacer,
    Table,
    TableStyle,
)

from inspectkit.report.branding import Branding
from inspectkit.report.charts import trend_drawing
from inspectkit.report.content import CHANGES_TITLE, Field, PhotoItem, ReportContent
from inspectkit.report.earthing_section import earthing_flowables
from inspectkit.report.photos import downscale
from inspectkit.report.sign import SignatureSlot

PAGE = A4
MARGIN = 18 * mm
FOOTER_HEIGHT = 14 * mm
PHOTO_WIDTH = 80 * mm
#: Results whose rows get a tint; the word in the cell says the same, for print in grey.
_RESULT_TINTS = {
    "FAIL": "#F6D5D5",
    "OVERDUE": "#F6D5D5",
    "WATCH": "#FBEBC8",
    "INCOMPLETE": "#FBEBC8",
}


class RenderError(Exception):
    """A report could not be laid out; the message says which part and why."""


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


def _styles(branding: Branding) -> dict[str, ParagraphStyle]:
    primary = colors.HexColor(branding.primary)
    base = ParagraphStyle("body", fontName="Vera", fontSize=9, leading=12)
    return {
        "body": base,
        "small": ParagraphStyle("small", parent=base, fontSize=7.5, leading=9.5),
        "cell": ParagraphStyle("cell", parent=base, fontSize=8, leading=10),
        "cellbold": ParagraphStyle(
            "cellbold", parent=base, fontName="Vera-Bold", fontSize=8, leading=10
        ),
        "head": ParagraphStyle(
            "head",
            parent=base,
            fontName="Vera-Bold",
            fontSize=8,
            leading=10,
            textColor=colors.white,
        ),
        "h1": ParagraphStyle(
            "h1",
            parent=base,
            fontName="Vera-Bold",
            fontSize=15,
            leading=19,
            textColor=primary,
            spaceBefore=6,
            spaceAfter=6,
            keepWithNext=1,
        ),
        "h2": ParagraphStyle(
            "h2",
            parent=base,
            fontName="Vera-Bold",
            fontSize=11,
            leading=14,
            textColor=primary,
            spaceBefore=10,
            spaceAfter=4,
            keepWithNext=1,
        ),
        "title": ParagraphStyle(
            "title", parent=base, fontName="Vera-Bold", fontSize=24, leading=29, textColor=primary
        ),
        "cover": ParagraphStyle("cover", parent=base, fontSize=12, leading=16),
        "verdict": ParagraphStyle(
            "verdict",
            parent=base,
            fontName="Vera-Bold",
            fontSize=22,
            leading=26,
            alignment=TA_CENTER,
        ),
        "caption": ParagraphStyle(
            "caption", parent=base, fontName="Vera-Italic", fontSize=7.5, leading=9.5
        ),
    }


def _text(value: str) -> str:
    """Plain text made safe for a Paragraph's mini-markup."""
    return value.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


class _SignatureBox(Flowable):
    """An empty, framed box where the signature's visible stamp will go; remembers its place."""

    def __init__(self, width: float, height: float, record: dict[str, Any]) -> None:
        super().__init__()
        self.width, self.height, self.record = width, height, record

    def wrap(self, available_width: float, available_height: float) -> tuple[float, float]:
        return self.width, self.height

    def draw(self) -> None:
        canvas = self.canv
        canvas.setStrokeColor(colors.HexColor("#999999"))
        canvas.rect(0, 0, self.width, self.height)
        x, y = canvas.absolutePosition(0, 0)
        self.record["page"] = canvas.getPageNumber() - 1
        self.record["box"] = (
            int(x) + 2,
            int(y) + 2,
            int(x + self.width) - 2,
            int(y + self.height) - 2,
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


def _fields_table(
    fields: tuple[Field, ...], styles: dict[str, ParagraphStyle], width: float
) -> Table:
    rows = [
        [
            Paragraph(_text(f.label), styles["cellbold"]),
            Paragraph(_text(f.value or "—"), styles["cell"]),
        ]
        for f in fields
    ]
    table = Table(rows, colWidths=[width * 0.32, width * 0.68])
    table.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LINEBELOW", (0, 0), (-1, -1), 0.25, colors.HexColor("#CCCCCC")),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
                ("TOPPADDING", (0, 0), (-1, -1), 3),
            ]
        )
    )
    return table


def _grid(
    header: list[str],
    rows: list[list[str]],
    widths: list[float],
    styles: dict[str, ParagraphStyle],
    branding: Branding,
    result_column: int | None = None,
) -> Table:
    """A table that splits across pages with its header repeated; result words in bold."""
    body = []
    tints = []
    for index, row in enumerate(rows, start=1):
        cells = []
        for column, value in enumerate(row):
            style = styles["cellbold"] if column == result_column else styles["cell"]
            cells.append(Paragraph(_text(value), style))
        body.append(cells)
        if result_column is not None:
            tint = _RESULT_TINTS.get(row[result_column].split()[0] if row[result_column] else "")
            if tint:
                tints.append(
                    (
                        "BACKGROUND",
                        (result_column, index),
                        (result_column, index),
                        colors.HexColor(tint),
                    )
                )
    table = Table(
        [[Paragraph(_text(h), styles["head"]) for h in header], *body],
        colWidths=widths,
        repeatRows=1,
    )
    table.setStyle(
        TableStyle(
            [
                ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor(branding.primary)),
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("GRID", (0, 0), (-1, -1), 0.25, colors.HexColor("#BBBBBB")),
                ("TOPPADDING", (0, 0), (-1, -1), 2.5),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
                *tints,
            ]
        )
    )
    return table


def _photo_grid(
    photos: tuple[PhotoItem, ...] | list[PhotoItem], styles: dict[str, ParagraphStyle], width: float
) -> list[Flowable]:
    """Photos two to a row, each with its caption beneath."""
    cells = []
    for item in photos:
        try:
            small = downscale(item.path)
        except OSError as exc:
            raise RenderError(
                f"photo {item.photo_id} ({item.path}): cannot be read ({exc})"
            ) from exc
        image_width = min(PHOTO_WIDTH, width / 2 - 6)
        image_height = min(image_width * small.aspect, 90 * mm)
        image_width = image_height / small.aspect
        cells.append(
            [
                Image(BytesIO(small.data), image_width, image_height),
                Paragraph(_text(item.caption), styles["caption"]),
            ]
        )
    if not cells:
        return []
    rows = [cells[i : i + 2] for i in range(0, len(cells), 2)]
    if len(rows[-1]) == 1:
        rows[-1].append("")
    table = Table(rows, colWidths=[width / 2, width / 2])
    table.setStyle(
        TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), ("BOTTOMPADDING", (0, 0), (-1, -1), 6)])
    )
    return [table]


def _story(content: ReportContent, branding: Branding, slot: dict[str, Any]) -> list[Flowable]:
    styles = _styles(branding)
    width = PAGE[0] - 2 * MARGIN
    story: list[Flowable] = []
    add = story.append

    # Cover: what the client sees first is the site, the date and the verdict.
    add(Paragraph(_text(content.title), styles["title"]))
    add(Spacer(1, 6 * mm))
    add(Paragraph(f"<b>{_text(content.site_name)}</b>", styles["cover"]))
    for f in content.site[:3]:
        if f.value:
            add(Paragraph(f"{_text(f.label)}: {_text(f.value)}", styles["cover"]))
    add(Paragraph(f"Inspection date: {content.inspection_date.isoformat()}", styles["cover"]))
    add(Spacer(1, 10 * mm))
    verdict = Table(
        [
            [Paragraph(_text(content.verdict_word), styles["verdict"])],
            [Paragraph(_text(content.verdict), styles["cover"])],
        ],
        colWidths=[width],
    )
    verdict.setStyle(
        TableStyle(
            [
                ("BOX", (0, 0), (-1, -1), 1.5, colors.HexColor(branding.primary)),
                ("TOPPADDING", (0, 0), (-1, -1), 8),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 8),
                ("LEFTPADDING", (0, 0), (-1, -1), 10),
            ]
        )
    )
    add(verdict)
    add(Spacer(1, 8 * mm))
    for line in content.headline:
        add(Paragraph(f"• {_text(line)}", styles["cover"]))
    add(Spacer(1, 8 * mm))
    add(_fields_table(content.inspection, styles, width))
    if content.amends:
        add(Spacer(1, 4 * mm))
        add(Paragraph(f"<b>Amendment.</b> {_text(content.amends)}", styles["body"]))
    add(NextPageTemplate("body"))
    add(PageBreak())

    # Summary page.
    add(Paragraph("Summary", styles["h1"]))
    add(Paragraph(_text(content.verdict), styles["body"]))
    if content.amendment:
        add(Paragraph("What this amendment changed", styles["h2"]))
        for line in content.amendment:
            add(Paragraph(f"• {_text(line)}", styles["body"]))
    if content.notices:
        add(Paragraph("Points to act on or watch", styles["h2"]))
        add(
            _grid(
                ["Result", "Component", "What was found"],
                [[n.result, n.tag, n.message] for n in content.notices],
                [width * 0.17, width * 0.13, width * 0.70],
                styles,
                branding,
                0,
            )
        )
    add(Paragraph("Next inspections", styles["h2"]))
    add(_fields_table(content.schedule, styles, width))
    if content.changes_since_last:
        add(Paragraph(CHANGES_TITLE, styles["h2"]))
        add(Paragraph(_text(content.changes_since_last), styles["body"]))
    add(Paragraph("Not inspected", styles["h2"]))
    add(
        Paragraph(
            _text(content.not_inspected or "Every part listed was inspected."), styles["body"]
        )
    )
    add(Paragraph("Safety", styles["h2"]))
    for caution in content.cautions:
        add(Paragraph(f"• {_text(caution)}", styles["small"]))
    add(Spacer(1, 2 * mm))
    add(Paragraph(_text(content.deferral), styles["small"]))

    add(PageBreak())
    add(Paragraph("The site and its protection system", styles["h1"]))
    add(_fields_table(content.site, styles, width))
    add(Spacer(1, 4 * mm))
    add(_fields_table(content.structure, styles, width))
    add(Paragraph("Instruments", styles["h2"]))
    if content.instruments:
        add(
            _grid(
                ["Instrument", "Serial", "Calibration due", "On the day"],
                [list(row) for row in content.instruments],
                [width * 0.4, width * 0.2, width * 0.18, width * 0.22],
                styles,
                branding,
            )
        )
    else:
        add(Paragraph("No instrument was recorded.", styles["body"]))

    add(CondPageBreak(60 * mm))
    add(Paragraph("Readings", styles["h1"]))
    if content.readings:
        add(
            Paragraph(
                "Each reading with the limit it was judged against and the result in words; "
                "the limits are those of the rule set named in the site details.",
                styles["small"],
            )
        )
        add(Spacer(1, 2 * mm))
        add(
            _grid(
                ["Tag", "Component", "Quantity, method", "Value", "Limit", "Result"],
                [
                    [
                        r.tag,
                        r.component,
                        f"{r.quantity}, {r.method}",
                        r.value,
                        r.limit,
                        r.result + (f" ({r.note})" if r.note else ""),
                    ]
                    for r in content.readings
                ],
                [w * width for w in (0.1, 0.17, 0.3, 0.12, 0.12, 0.19)],
                styles,
                branding,
                5,
            )
        )
    else:
        add(Paragraph("No readings were taken at this visit.", styles["body"]))

    add(CondPageBreak(60 * mm))
    add(Paragraph("Findings", styles["h1"]))
    if not content.findings:
        add(Paragraph("No findings were recorded.", styles["body"]))
    for finding in content.findings:
        block: list[Flowable] = [
            Paragraph(
                f"{_text(finding.tag)} — {_text(finding.grade)}"
                + (f" · {_text(finding.category)}" if finding.category else ""),
                styles["h2"],
            ),
            Paragraph(_text(finding.text or "No remark."), styles["body"]),
        ]
        if finding.remedial_action:
            due = f" (by {finding.due_by})" if finding.due_by else ""
            block.append(
                Paragraph(
                    f"<b>Remedial action{due}:</b> {_text(finding.remedial_action)}", styles["body"]
                )
            )
        block.extend(_photo_grid(finding.photos, styles, width))
        add(KeepTogether(block))

    if content.trends:
        add(CondPageBreak(80 * mm))
        add(Paragraph("Electrode trends", styles["h1"]))
        add(
            Paragraph(
                "Earth resistance of each electrode over the years, with a robust fitted line "
                "(Theil–Sen) carried forward to show when it would reach its limit.",
                styles["small"],
            )
        )
        charts = [
            [
                trend_drawing(chart, width / 2 - 4, 58 * mm, branding.primary),
                Paragraph(_text(chart.summary), styles["small"]),
            ]
            for chart in content.trends
        ]
        rows = [charts[i : i + 2] for i in range(0, len(charts), 2)]
        if rows and len(rows[-1]) == 1:
            rows[-1].append("")
        grid = Table(rows, colWidths=[width / 2, width / 2])
        grid.setStyle(
            TableStyle(
                [
                    ("VALIGN", (0, 0), (-1, -1), "TOP"),
                    ("LEFTPADDING", (0, 0), (-1, -1), 0),
                    ("BOTTOMPADDING", (0, 0), (-1, -1), 8),
                ]
            )
        )
        add(grid)

    story.extend(earthing_flowables(content.earthing, styles, width, branding.primary))
    if content.general_photos:
        add(CondPageBreak(80 * mm))
        add(Paragraph("Photos", styles["h1"]))
        story.extend(_photo_grid(content.general_photos, styles, width))

    add(CondPageBreak(75 * mm))
    add(Paragraph("Sign-off", styles["h1"]))
    signer = content.signer_name or "not named"
    lines = [f"Inspector: {signer}"]
    if content.signer_qualification:
        lines.append(f"Qualification: {content.signer_qualification}")
    if content.signer_organisation:
        lines.append(f"Organisation: {content.signer_organisation}")
    lines.append(f"Inspection date: {content.inspection_date.isoformat()}")
    for line in lines:
        add(Paragraph(_text(line), styles["body"]))
    add(Spacer(1, 3 * mm))
    add(
        Paragraph(
            "Digital signature (check it with <i>inspectkit verify</i> or any PDF "
            "reader that validates signatures):",
            styles["small"],
        )
    )
    add(Spacer(1, 2 * mm))
    add(_SignatureBox(95 * mm, 26 * mm, slot))
    return story


def render_report(content: ReportContent, branding: Branding) -> RenderedReport:
    """Lay out a report as PDF bytes, with an empty box reserved for the signature.

    Raises:
        RenderError: a photo cannot be read.
    """
    register_fonts()
    _binary_streams()
    out = BytesIO()
    slot: dict[str, Any] = {}
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
    story = _story(content, branding, slot)
    doc.build(story, canvasmaker=_numbered_canvas(content, branding))
    data = out.getvalue()
    return RenderedReport(
        data=data, pages=doc.page, signature_slot=SignatureSlot(page=slot["page"], box=slot["box"])
    )
