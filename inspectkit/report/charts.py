"""Trend charts for earth electrodes, drawn with reportlab.graphics.

Each chart shows the readings as dots, the fitted line carried forward to the
forecast, the acceptance limit as a dashed line and, where the fitted line
reaches the limit, a marked crossing with its date. Lines differ by dash and
marker as well as colour, so the chart reads in black and white too.
"""

from __future__ import annotations

from datetime import date

from reportlab.graphics.charts.lineplots import LinePlot
from reportlab.graphics.shapes import Drawing, Line, String
from reportlab.graphics.widgets.markers import makeMarker
from reportlab.lib import colors

from inspectkit.report.content import TrendChart

FONT = "Vera"


def _year_label(ordinal: float) -> str:
    day = date.fromordinal(max(1, int(round(ordinal))))
    return f"{day.year}-{day.month:02d}"


def trend_drawing(chart: TrendChart, width: float, height: float, colour: str) -> Drawing:
    """A drawing of one electrode's readings, fitted line, limit and forecast crossing.

    Args:
        chart: The trend to draw.
        width, height: Size in points.
        colour: The branding's primary colour (#RRGGBB) for the readings.
    """
    drawing = Drawing(width, height)
    plot = LinePlot()
    plot.x, plot.y = 42, 30
    plot.width, plot.height = width - 60, height - 52
    # Each reading is its own one-point series, so the dots are not joined up.
    readings = [[(d.toordinal(), v)] for d, v in chart.points]
    fit = [(d.toordinal(), v) for d, v in chart.fit]
    xs = [x for line in readings for x, _ in line] + [x for x, _ in fit]
    ys = [y for line in readings for _, y in line] + [y for _, y in fit]
    if chart.limit is not None:
        ys.append(chart.limit)
    # A margin either side, so the first and last dots sit clear of the axes.
    margin = max(30, (max(xs) - min(xs)) // 25)
    low_x, high_x = min(xs) - margin, max(xs) + margin
    main = colors.HexColor(colour)
    lines: list[tuple[list[tuple[float, float]], object, float, object]] = []
    if fit:
        lines.append((fit, colors.HexColor("#444444"), 1.2, None))
    if chart.limit is not None:
        lines.append(
            ([(low_x, chart.limit), (high_x, chart.limit)], colors.HexColor("#B00020"), 1, (4, 3))
        )
    plot.data = [line for line, *_ in lines] + readings
    for index, (_, stroke, thickness, dash) in enumerate(lines):
        plot.lines[index].strokeColor = stroke
        plot.lines[index].strokeWidth = thickness
        plot.lines[index].strokeDashArray = dash
    for index in range(len(lines), len(plot.data)):
        plot.lines[index].strokeColor = main
        plot.lines[index].symbol = makeMarker(
            "FilledCircle", size=4.5, fillColor=main, strokeColor=main
        )
    plot.joinedLines = 1
    plot.xValueAxis.valueMin, plot.xValueAxis.valueMax = low_x, high_x
    plot.xValueAxis.labelTextFormat = _year_label
    plot.xValueAxis.maximumTicks = 5
    plot.yValueAxis.valueMin = 0
    plot.yValueAxis.valueMax = max(ys) * 1.15 if ys and max(ys) > 0 else 1
    plot.yValueAxis.labelTextFormat = lambda v: f"{v:g}"
    for axis in (plot.xValueAxis, plot.yValueAxis):
        axis.labels.fontName = FONT
        axis.labels.fontSize = 7
    drawing.add(plot)
    drawing.add(
        String(4, height - 12, f"{chart.tag}: earth resistance (Ω)", fontName=FONT, fontSize=8)
    )
    legend = "• readings   — fitted line"
    if chart.limit is not None:
        legend += "   - - limit"
    drawing.add(String(width - 4, height - 12, legend, fontName=FONT, fontSize=7, textAnchor="end"))
    if (
        chart.crossing is not None
        and chart.limit is not None
        and low_x <= chart.crossing.toordinal() <= high_x
    ):
        x = plot.x + plot.width * (chart.crossing.toordinal() - low_x) / (high_x - low_x)
        y = plot.y + plot.height * chart.limit / plot.yValueAxis.valueMax
        drawing.add(
            Line(x, plot.y, x, y, strokeColor=colors.HexColor("#B00020"), strokeDashArray=(1, 2))
        )
        drawing.add(
            String(
                x,
                y + 4,
                f"reaches limit {chart.crossing.isoformat()}",
                fontName=FONT,
                fontSize=7,
                textAnchor="middle",
            )
        )
    return drawing
