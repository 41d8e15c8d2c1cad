"""The report's earthing section: survey table and chart, electrode lengths against l1, traverses.

Laid out from `EarthingReport` with reportlab; charts differ by marker and dash as
well as colour, so they read in black and white. `earthing` is one
of the report's `SECTIONS`; it returns nothing when the site has no earthing data.
"""

from __future__ import annotations

from reportlab.graphics.charts.lineplots import LinePlot
from reportlab.graphics.shapes import Drawing, Line, String
from reportlab.graphics.widgets.markers import makeMarker
from reportlab.lib import colors
from reportlab.lib.units import mm
from reportlab.platypus import CondPageBreak, Flowable, KeepTogether, Table

from inspectkit.engine.fall_of_potential import POTENTIAL_PROBE_FRACTION
from inspectkit.report.content import ReportContent
from inspectkit.report.earthing_content import SurveyBlock, TraverseBlock
from inspectkit.report.layout import Kit, grid

FONT = "Vera"
_MARKERS = ("FilledCircle", "FilledSquare", "FilledDiamond", "Circle")
_DASHES = (None, (4, 2), (1, 2), (6, 2, 1, 2))


def _rho(text: str) -> str:
    """ρ spelt "rho": the report's font (Vera) has no ρ."""
    return text.replace("ρ", "rho")


def _grid(head: list[str], rows: list[list[str]], shares: tuple[float, ...], kit: Kit) -> Table:
    return grid(head, [[_rho(v) for v in row] for row in rows],
                [w * kit.width for w in shares], kit.styles, kit.branding)  # fmt: skip


def _plot(width: float, height: float, title: str) -> tuple[Drawing, LinePlot]:
    drawing = Drawing(width, height)
    plot = LinePlot()
    plot.x, plot.y = 40, 28
    plot.width, plot.height = width - 56, height - 50
    for axis in (plot.xValueAxis, plot.yValueAxis):
        axis.labels.fontName = FONT
        axis.labels.fontSize = 7
        axis.labelTextFormat = lambda v: f"{v:g}"
    drawing.add(String(4, height - 12, title, fontName=FONT, fontSize=8))
    return drawing, plot


def survey_drawing(surveys: tuple[SurveyBlock, ...], width: float, height: float,
                   colour: str) -> Drawing:  # fmt: skip
    """ρ against spacing a, one marked line per survey (a log scale would hide few points)."""
    drawing, plot = _plot(width, height, "Apparent resistivity rho (Ω·m) against spacing a (m)")
    plot.data = [[(a, rho) for a, _, rho, _ in s.rows] for s in surveys]
    for n, _ in enumerate(surveys):
        plot.lines[n].strokeColor = colors.HexColor(colour if n == 0 else "#444444")
        plot.lines[n].strokeDashArray = _DASHES[n % len(_DASHES)]
        plot.lines[n].symbol = makeMarker(_MARKERS[n % len(_MARKERS)], size=4)
    top = max(rho for s in surveys for _, _, rho, _ in s.rows)
    plot.yValueAxis.valueMin, plot.yValueAxis.valueMax = 0, top * 1.15
    plot.xValueAxis.valueMin = 0
    drawing.add(plot)
    return drawing


def traverse_drawing(block: TraverseBlock, width: float, height: float, colour: str) -> Drawing:
    """R against P's position as % of E–C, the 61.8 % line, and the plateau band about it."""
    title = f"{block.tag}: R (Ω) against P (% of E–C, C at {block.current_probe_m:g} m)"
    drawing, plot = _plot(width, height, title)
    lines = [list(block.points)]
    if block.value_ohm is not None:
        for side in (1 - block.tolerance, 1 + block.tolerance):
            lines.append([(0.0, block.value_ohm * side), (100.0, block.value_ohm * side)])
    plot.data = lines
    plot.lines[0].strokeColor = colors.HexColor(colour)
    plot.lines[0].symbol = makeMarker("FilledCircle", size=4)
    for n in range(1, len(lines)):
        plot.lines[n].strokeColor = colors.HexColor("#777777")
        plot.lines[n].strokeDashArray = (3, 2)
        plot.lines[n].strokeWidth = 0.6
    top = max(r for _, r in block.points) * 1.15
    plot.xValueAxis.valueMin, plot.xValueAxis.valueMax = 0, 100
    plot.yValueAxis.valueMin, plot.yValueAxis.valueMax = 0, top
    drawing.add(plot)
    x = plot.x + plot.width * POTENTIAL_PROBE_FRACTION
    drawing.add(Line(x, plot.y, x, plot.y + plot.height, strokeColor=colors.HexColor("#B00020"),
                     strokeWidth=0.8, strokeDashArray=(1, 2)))  # fmt: skip
    drawing.add(String(x + 2, plot.y + plot.height - 8, "61.8 %", fontName=FONT, fontSize=6))
    return drawing


def earthing(content: ReportContent, kit: Kit) -> list[Flowable]:
    """The section's flowables, or none when the site has no earthing data."""
    report = content.earthing
    if report is None:
        return []
    colour = kit.branding.primary

    def para(text: str, style: str = "body") -> Flowable:
        return kit.para(_rho(text), style)

    out: list[Flowable] = [
        CondPageBreak(80 * mm),
        para("Earthing", "h1"),
        para(
            f"Design soil resistivity: {report.design}. Electrode lengths are judged against "
            "IEC 62305-3 clause 5.4.2 with l1 from its Figure 2 (key points from memory); "
            "expected rod resistances by Dwight's formula (IEEE Std 142). Both are advice: a "
            "short electrode may be acceptable below the resistance limit, and layered soil "
            "alone can explain a difference.",
            "small",
        ),
    ]
    if report.surveys:
        out.append(para("Soil resistivity (Wenner, IEEE Std 81)", "h2"))
        for survey in report.surveys:
            rows = [[f"{a:g}", f"{r:.4g}", f"{rho:.3g}", flag] for a, r, rho, flag in survey.rows]
            out.append(KeepTogether([
                para(survey.title),
                _grid(["a (m)", "R (Ω)", "rho (Ω·m)", "note"], rows, (0.15, 0.2, 0.2, 0.45), kit),
                para(survey.message, "small"),
            ]))  # fmt: skip
        out.append(survey_drawing(report.surveys, kit.width, 55 * mm, colour))
    if report.electrodes:
        out.append(para("Electrodes against the minimum length l1", "h2"))
        out.append(_grid(
            ["Tag", "Form", "Size", "Needs", "Result", "Expected", "Measured"],
            [list(row) for row in report.electrodes],
            (0.08, 0.15, 0.15, 0.17, 0.15, 0.1, 0.2), kit,
        ))  # fmt: skip
    out.extend(para(note, "small") for note in report.notes)
    heading = para("Fall-of-potential traverses (IEEE Std 81)", "h2")
    for n, block in enumerate(report.traverses):
        band = f"±{100 * block.tolerance:g} %"
        out.append(KeepTogether([
            *([heading] if n == 0 else []),
            traverse_drawing(block, kit.width * 0.62, 55 * mm, colour),
            para(f"{block.verdict}. Dashed lines: the {band} plateau band about the 61.8 % "
                 "value.", "small"),
        ]))  # fmt: skip
    return out
