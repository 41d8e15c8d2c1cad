"""The building blocks a report's sections are laid out with: styles, tables, photo grids.

Kept apart from the sections (`sections.py`) and from the document and its pages
(`render.py`), so that a new section needs only these and its own function.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from io import BytesIO
from typing import Any

from reportlab.lib import colors
from reportlab.lib.enums import TA_CENTER
from reportlab.lib.pagesizes import A4
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.platypus import Flowable, Image, Paragraph, Table, TableStyle

from inspectkit.engine.results import SEVERITY_WORDS
from inspectkit.model import Severity
from inspectkit.report.branding import Branding
from inspectkit.report.content import Field, PhotoItem
from inspectkit.report.photos import downscale

PAGE = A4
MARGIN = 18 * mm
PHOTO_WIDTH = 80 * mm
_RED, _AMBER = "#F6D5D5", "#FBEBC8"
#: Results whose cells get a tint; the word in the cell says the same, for print in grey.
RESULT_TINTS = {
    SEVERITY_WORDS[Severity.FAIL].shout: _RED,
    SEVERITY_WORDS[Severity.OVERDUE].shout: _RED,
    SEVERITY_WORDS[Severity.WATCH].shout: _AMBER,
    SEVERITY_WORDS[Severity.INCOMPLETE].shout: _AMBER,
    SEVERITY_WORDS[Severity.RETAKE].shout: _AMBER,
}


class RenderError(Exception):
    """A report could not be laid out; the message says which part and why."""


@dataclass
class Kit:
    """What every section is laid out with.

    Attributes:
        branding: the inspecting organisation's name, colours and logo.
        styles: paragraph styles by name ("body", "h1", "cell", …).
        width: the text width of a page, in points.
        slot: filled in by the signature box with the page and place it was drawn at.
    """

    branding: Branding
    styles: dict[str, ParagraphStyle]
    width: float
    slot: dict[str, Any] = field(default_factory=dict)

    def para(self, text: str, style: str = "body") -> Paragraph:
        """A paragraph of plain text (escaped) in a named style."""
        return Paragraph(text_of(text), self.styles[style])


def text_of(value: str) -> str:
    """Plain text made safe for a Paragraph's mini-markup."""
    return value.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def make_styles(branding: Branding) -> dict[str, ParagraphStyle]:
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


def make_kit(branding: Branding) -> Kit:
    """The styles and page width for one report."""
    return Kit(branding, make_styles(branding), PAGE[0] - 2 * MARGIN)


class SignatureBox(Flowable):
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


def fields_table(
    fields: tuple[Field, ...], styles: dict[str, ParagraphStyle], width: float
) -> Table:
    rows = [
        [
            Paragraph(text_of(f.label), styles["cellbold"]),
            Paragraph(text_of(f.value or "—"), styles["cell"]),
        ]
        for f in fields
    ]
    return styled(
        Table(rows, colWidths=[width * 0.32, width * 0.68]),
        ("LINEBELOW", (0, 0), (-1, -1), 0.25, colors.HexColor("#CCCCCC")),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
        ("TOPPADDING", (0, 0), (-1, -1), 3),
    )


def styled(table: Table, *commands: tuple[Any, ...]) -> Table:
    """The table with its cells aligned to the top and these style commands applied."""
    table.setStyle(TableStyle([("VALIGN", (0, 0), (-1, -1), "TOP"), *commands]))
    return table


def grid(
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
            cells.append(Paragraph(text_of(value), style))
        body.append(cells)
        if result_column is not None:
            word = row[result_column].split(":")[0].split(" ")[0]  # "FAIL: above the limit"
            tint = RESULT_TINTS.get(word)
            if tint:
                tints.append(
                    (
                        "BACKGROUND",
                        (result_column, index),
                        (result_column, index),
                        colors.HexColor(tint),
                    )
                )
    return styled(
        Table(
            [[Paragraph(text_of(h), styles["head"]) for h in header], *body],
            colWidths=widths,
            repeatRows=1,
        ),
        ("BACKGROUND", (0, 0), (-1, 0), colors.HexColor(branding.primary)),
        ("GRID", (0, 0), (-1, -1), 0.25, colors.HexColor("#BBBBBB")),
        ("TOPPADDING", (0, 0), (-1, -1), 2.5),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 2.5),
        *tints,
    )


def photo_grid(
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
                Paragraph(text_of(item.caption), styles["caption"]),
            ]
        )
    if not cells:
        return []
    return [two_up(cells, width, ("BOTTOMPADDING", (0, 0), (-1, -1), 6))]


def two_up(cells: list[Any], width: float, *commands: tuple[Any, ...]) -> Table:
    """Cells two to a row across the page (photos, charts), styled with `commands`."""
    rows = [cells[i : i + 2] for i in range(0, len(cells), 2)]
    if len(rows[-1]) == 1:
        rows[-1].append("")
    return styled(Table(rows, colWidths=[width / 2, width / 2]), *commands)
