"""The report's roof plan: the recorded geometry drawn to scale, each rooftop item marked
with its verdict, and the verdicts in a table beside it.

Drawn with reportlab graphics: roofs, air-termination conductors, air terminals, down
conductors, rooftop items, each air terminal's protected circle at the height of the
item it is nearest to, a scale bar and a north arrow. A verdict is always written
beside its item and drawn with its own outline (fail: heavy with a cross, watch:
dashed, ok: thin), so the plan reads the same printed in grey.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from reportlab.graphics.shapes import Circle, Drawing, Line, Polygon, PolyLine, Rect, String
from reportlab.lib import colors
from reportlab.lib.styles import ParagraphStyle
from reportlab.lib.units import mm
from reportlab.platypus import CondPageBreak, Flowable, Paragraph, Spacer, Table, TableStyle

from inspectkit.engine.conformity_verdicts import Verdict
from inspectkit.engine.lps_layout import Layout
from inspectkit.engine.rolling_sphere import protected_radius
from inspectkit.geometry_model import GeometryItem
from inspectkit.model import Severity
from inspectkit.report.content import ReportContent, RoofPlan
from inspectkit.report.layout import Kit

#: How each verdict is drawn: fill, outline width, dash pattern, and a cross or not.
_LOOK = {
    Severity.FAIL: (colors.HexColor("#f4b6b0"), 1.6, None, True),
    Severity.WATCH: (colors.HexColor("#f9dfa0"), 1.0, (3, 2), False),
    Severity.OK: (colors.HexColor("#c9e8c4"), 0.6, None, False),
}
_WORD = {Severity.FAIL: "FAIL", Severity.WATCH: "WATCH", Severity.OK: "OK"}
_INK = colors.HexColor("#222222")
_CONDUCTOR = colors.HexColor("#1f4e8c")
_FONT = "Vera"


def plan_drawing(plan: RoofPlan, width: float, height: float) -> Drawing:
    """The roof plan scaled to fit `width` × `height` points, north up."""
    layout = Layout.of(plan.geometry)
    xs = [x for g in plan.geometry for x, _ in g.points]
    ys = [y for g in plan.geometry for _, y in g.points]
    low_x, high_x, low_y, high_y = min(xs), max(xs), min(ys), max(ys)
    pad = 0.08 * max(high_x - low_x, high_y - low_y, 1.0)
    low_x, high_x, low_y, high_y = low_x - pad, high_x + pad, low_y - pad, high_y + pad
    room = 14.0  # points below the plan for the scale bar
    k = min(width / (high_x - low_x), (height - room) / (high_y - low_y))
    drawing = Drawing(width, (high_y - low_y) * k + room)

    def at(x: float, y: float) -> tuple[float, float]:
        return ((x - low_x) * k, room + (y - low_y) * k)

    def flat(points: Sequence[tuple[float, float]]) -> list[float]:
        return [v for p in points for v in at(*p)]

    for roof in layout.roofs:
        drawing.add(
            Polygon(
                flat(roof.points),
                fillColor=colors.HexColor("#eeeeee"),
                strokeColor=_INK,
                strokeWidth=0.8,
            )
        )
        x = min(at(*p)[0] for p in roof.points)
        y = max(at(*p)[1] for p in roof.points)
        drawing.add(
            String(
                x + 30,
                y - 9,
                f"roof {roof.tag}, z = {roof.z_m:g} m",
                fontName=_FONT,
                fontSize=6,
                fillColor=_INK,
            )
        )
    verdicts = {v.tag: v for v in plan.judged.items}
    _protected_circles(drawing, layout, at, k, plan.judged.radius_m)
    for item in layout.items:
        _item(drawing, item, verdicts.get(item.tag), flat, at)
    for conductor in layout.conductors:
        drawing.add(PolyLine(flat(conductor.points), strokeColor=_CONDUCTOR, strokeWidth=1.2))
    for down in layout.downs:
        x, y = at(*down.points[0])
        drawing.add(Rect(x - 2.5, y - 2.5, 5, 5, fillColor=_INK, strokeColor=_INK))
        drawing.add(String(x + 3.5, y - 7, down.tag, fontName=_FONT, fontSize=5.5, fillColor=_INK))
    for rod in layout.terminals:
        x, y = at(*rod.points[0])
        drawing.add(Circle(x, y, 2.2, fillColor=_CONDUCTOR, strokeColor=_CONDUCTOR))
        drawing.add(
            String(x + 3, y + 2.5, rod.tag, fontName=_FONT, fontSize=5.5, fillColor=_CONDUCTOR)
        )
    _scale_bar(drawing, k, width)
    _north_arrow(drawing, width, drawing.height)
    return drawing


def _protected_circles(drawing: Drawing, layout: Layout, at, k: float, r: float) -> None:  # noqa: ANN001
    """Each air terminal's protected radius (single-rod closed form, IEC 62305-3 Annex A)
    at the top of the rooftop item nearest it, dashed."""
    if not layout.items:
        return
    for rod in layout.terminals:
        base = layout.roof_height_at(rod.points[0])
        nearest = min(layout.items, key=lambda i: _distance(rod.points[0], i.points))
        height = nearest.z_m - base
        if not 0 <= height < rod.z_m - base <= r:
            continue
        radius = protected_radius(r, rod.z_m - base, height)
        x, y = at(*rod.points[0])
        drawing.add(
            Circle(
                x,
                y,
                radius * k,
                fillColor=None,
                strokeColor=_CONDUCTOR,
                strokeWidth=0.5,
                strokeDashArray=(2, 2),
            )
        )
        drawing.add(
            String(
                x + radius * k * 0.71 + 1,
                y - radius * k * 0.71 - 6,
                f"{radius:.1f} m at {nearest.tag}",
                fontName=_FONT,
                fontSize=5,
                fillColor=_CONDUCTOR,
            )
        )


def _item(drawing: Drawing, item: GeometryItem, verdict: Verdict | None, flat, at) -> None:  # noqa: ANN001
    severity = verdict.severity if verdict else Severity.OK
    fill, stroke, dash, cross = _LOOK[severity]
    drawing.add(
        Polygon(
            flat(item.points),
            fillColor=fill,
            strokeColor=_INK,
            strokeWidth=stroke,
            strokeDashArray=dash,
        )
    )
    corners = [at(*p) for p in item.points]
    if cross:
        drawing.add(Line(*corners[0], *corners[2], strokeColor=_INK, strokeWidth=stroke))
        drawing.add(
            Line(*corners[1], *corners[3 % len(corners)], strokeColor=_INK, strokeWidth=stroke)
        )
    if verdict and verdict.protection and verdict.protection.exposed:
        x, y = at(*verdict.protection.worst)
        drawing.add(Circle(x, y, 1.8, fillColor=_INK, strokeColor=_INK))
    right = max(c[0] for c in corners)
    top = max(c[1] for c in corners)
    drawing.add(
        String(
            right + 2,
            top - 6,
            f"{item.tag} {_WORD[severity]}",
            fontName="Vera-Bold",
            fontSize=6.5,
            fillColor=_INK,
        )
    )


def _scale_bar(drawing: Drawing, k: float, width: float) -> None:
    """A bar of a round length near a fifth of the plan's width, labelled in metres."""
    target = width / 5 / k
    length = min((n for n in (1, 2, 5, 10, 20, 50, 100, 200, 500) if n >= target), default=1000)
    bar = length * k
    drawing.add(Rect(0, 3, bar / 2, 3, fillColor=_INK, strokeColor=_INK, strokeWidth=0.5))
    drawing.add(
        Rect(bar / 2, 3, bar / 2, 3, fillColor=colors.white, strokeColor=_INK, strokeWidth=0.5)
    )
    drawing.add(String(0, 8, "0", fontName=_FONT, fontSize=6, fillColor=_INK))
    drawing.add(String(bar - 3, 8, f"{length:g} m", fontName=_FONT, fontSize=6, fillColor=_INK))


def _north_arrow(drawing: Drawing, width: float, height: float) -> None:
    x, y = width - 10, height - 22
    drawing.add(
        Polygon([x, y + 16, x - 4, y, x, y + 4, x + 4, y], fillColor=_INK, strokeColor=_INK)
    )
    drawing.add(String(x - 3, y + 18, "N", fontName="Vera-Bold", fontSize=8, fillColor=_INK))


def _distance(point: tuple[float, float], polygon: Sequence[tuple[float, float]]) -> float:
    cx = sum(p[0] for p in polygon) / len(polygon)
    cy = sum(p[1] for p in polygon) / len(polygon)
    return math.dist(point, (cx, cy))


def roof_plan(content: ReportContent, kit: Kit) -> list[Flowable]:
    """The report section: the site's roof plan and its verdicts, when it has geometry."""
    return plan_section(content.roof_plan, kit.styles, kit.width)


def plan_section(
    plan: RoofPlan | None, styles: dict[str, ParagraphStyle], width: float
) -> list[Flowable]:
    """The report's roof plan section; nothing when the site has no geometry."""
    if plan is None:
        return []
    judged = plan.judged
    story: list[Flowable] = [CondPageBreak(150 * mm)]
    story.append(Paragraph("Roof plan and protection", styles["h1"]))
    story.append(
        Paragraph(
            f"Level {judged.level.value}: {judged.resolution}. Items are marked FAIL (heavy "
            "outline, crossed), WATCH (dashed) or OK (thin); a dot marks an exposed item's "
            "worst point; dashed circles are each air terminal's protected radius at the top "
            "of the item nearest it; squares are down conductors.",
            styles["small"],
        )
    )
    story.append(Spacer(1, 2 * mm))
    story.append(_PlanFlowable(plan, width, 120 * mm))
    story.append(Spacer(1, 3 * mm))
    rows = [
        [
            Paragraph("<b>Item</b>", styles["cell"]),
            Paragraph("<b>Verdict</b>", styles["cell"]),
            Paragraph("<b>What was found</b>", styles["cell"]),
        ]
    ]
    for v in (*judged.items, *judged.system):
        rows.append(
            [
                Paragraph(v.tag, styles["cell"]),
                Paragraph(_WORD[v.severity], styles["cell"]),
                Paragraph(_escape(v.message), styles["cell"]),
            ]
        )
    table = Table(rows, colWidths=[20 * mm, 16 * mm, width - 36 * mm], repeatRows=1)
    table.setStyle(
        TableStyle(
            [
                ("VALIGN", (0, 0), (-1, -1), "TOP"),
                ("LINEBELOW", (0, 0), (-1, -1), 0.3, colors.grey),
            ]
        )
    )
    story.append(table)
    return story


class _PlanFlowable(Flowable):
    """The drawing, built when the page width is known."""

    def __init__(self, plan: RoofPlan, width: float, height: float) -> None:
        super().__init__()
        self.plan, self.box = plan, (width, height)

    def wrap(self, available_width: float, available_height: float) -> tuple[float, float]:
        self.drawing = plan_drawing(self.plan, min(self.box[0], available_width), self.box[1])
        return self.drawing.width, self.drawing.height

    def draw(self) -> None:
        self.drawing.drawOn(self.canv, 0, 0)


def _escape(text: str) -> str:
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
