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
    readings = [(d.toordinal(), v) for d, v in chart.points]
    series = [readings]
    fit = [(d.toordinal(), v) for d, v in chart.fit]
    if fit:
        series.append(fit)
    xs = [x for line in series for x, _ in line]
    ys = [y for line in series for _, y in line]
    if chart.limit is not None:
        ys.append(chart.limit)
    low_x, high_x = min(xs), max(xs)
    if high_x - low_x < 60:
        low_x, high_x = low_x - 30, high_x + 30
    if chart.limit is not None:
        series.append([(low_x, chart.limit), (high_x, chart.limit)])
    plot.data = series
    main = colors.HexColor(colour)
    plot.lines[0].strokeColor = main
    plot.lines[0].strokeWidth = 0
    plot.lines[0].symbol = makeMarker("FilledCircle", size=4, fillColor=main, strokeColor=main)
    styles = []
    if fit:
        styles.append((colors.HexColor("#444444"), 1.2, None))
    if chart.limit is not None:
        styles.append((colors.HexColor("#B00020"), 1, (4, 3)))
    for index, (stroke, thickness, dash) in enumerate(styles, start=1):
        plot.lines[index].strokeColor = stroke
        plot.lines[index].strokeWidth = thickness
        plot.lines[index].strokeDashArray = dash
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
    drawing.add(String(4, height - 12, f"{chart.tag}: earth resistance (Ω)", fontName=FONT,
                       fontSize=8))
    legend = "● readings   — fitted line"
    if chart.limit is not None:
        legend += "   - - limit"
    drawing.add(String(width - 4, height - 12, legend, fontName=FONT, fontSize=7,
                       textAnchor="end"))
    if chart.crossing is not None and chart.limit is not None and low_x <= chart.crossing.toordinal() <= high_x:
        x = plot.x + plot.width * (chart.crossing.toordinal() - low_x) / (high_x - low_x)
        y = plot.y + plot.height * chart.limit / plot.yValueAxis.valueMax
        drawing.add(Line(x, plot.y, x, y, strokeColor=colors.HexColor("#B00020"),
                         strokeDashArray=(1, 2)))
        drawing.add(String(x, y + 4, f"reaches limit {chart.crossing.isoformat()}",
                           fontName=FONT, fontSize=7, textAnchor="middle"))
    return drawing
