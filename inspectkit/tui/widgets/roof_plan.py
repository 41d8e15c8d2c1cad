"""The site screen's roof plan: the geometry as a list with verdicts and a text drawing.

The drawing is made of characters, north up, so it works in any terminal: roofs as
`·`, conductors as `-` `|` `/` `\\`, air terminals `A`, down conductors `D`, and each
rooftop item filled with the letter of its verdict (`X` fail, `?` watch, `o` ok) as
well as its colour. The item highlighted in the list is drawn reversed with its tag.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widget import Widget
from textual.widgets import DataTable, Static

from inspectkit.engine.conformity import assess
from inspectkit.engine.conformity_verdicts import Conformity
from inspectkit.geometry_model import GeometryItem, GeometryKind
from inspectkit.model import SiteRecords
from inspectkit.store.geometry import delete_geometry_item
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.geometry import edit_geometry

#: Fill letter and style of an item by verdict: the letter alone tells them apart.
_FILL = {
    "fail": ("X", "bold white on red"),
    "watch": ("?", "bold black on yellow"),
    "ok": ("o", "green"),
}
_MARKS = {
    GeometryKind.AIR_TERMINAL: ("A", "bold cyan"),
    GeometryKind.DOWN_CONDUCTOR: ("D", "bold magenta"),
}
#: A character cell is about twice as tall as it is wide.
_ASPECT = 2.0


def plan_text(
    geometry: Sequence[GeometryItem],
    judged: Conformity | None,
    width: int,
    height: int,
    selected: str | None = None,
) -> Text:
    """The geometry drawn in `width` × `height` characters, north up, with a scale line."""
    if not geometry:
        return Text("No geometry recorded: add items with g, or import a file.")
    width, height = max(width, 20), max(height - 1, 6)
    xs = [x for g in geometry for x, _ in g.points]
    ys = [y for g in geometry for _, y in g.points]
    low_x, low_y = min(xs), min(ys)
    span_x, span_y = max(max(xs) - low_x, 1.0), max(max(ys) - low_y, 1.0)
    k = min((width - 2) / span_x, (height - 1) * _ASPECT / span_y)
    grid = [[" "] * width for _ in range(height)]
    style: dict[tuple[int, int], str] = {}

    def cell(x: float, y: float) -> tuple[int, int]:
        return (round((x - low_x) * k), height - 1 - round((y - low_y) * k / _ASPECT))

    def put(x: float, y: float, char: str, how: str = "") -> None:
        col, row = cell(x, y)
        if 0 <= row < height and 0 <= col < width:
            grid[row][col] = char
            if how:
                style[(row, col)] = how

    verdicts = {v.tag: v.severity.value for v in judged.items} if judged else {}
    for roof in (g for g in geometry if g.kind is GeometryKind.ROOF):
        _fill(roof.points, cell, lambda r, c: _set(grid, r, c, "·"), width, height)
    for item in (g for g in geometry if g.kind is GeometryKind.ROOFTOP_ITEM):
        char, how = _FILL[verdicts.get(item.tag, "ok")]
        if item.tag == selected:
            how = f"{how} reverse"
        _fill(
            item.points,
            cell,
            lambda r, c, ch=char, h=how: _mark(grid, style, r, c, ch, h),
            width,
            height,
        )
    for conductor in (g for g in geometry if g.kind is GeometryKind.AIR_CONDUCTOR):
        for a, b in zip(conductor.points, conductor.points[1:], strict=False):
            _line(a, b, k, put)
    for part in geometry:
        if part.kind in _MARKS:
            put(*part.points[0], *_MARKS[part.kind])
    text = Text()
    for row, chars in enumerate(grid):
        for col, char in enumerate(chars):
            text.append(char, style=style.get((row, col), ""))
        text.append("\n")
    bar = _scale(k)
    text.append(f"N↑  {'─' * bar[0]} {bar[1]:g} m   X fail  ? watch  o ok  A rod  D down")
    return text


def _set(grid: list[list[str]], row: int, col: int, char: str) -> None:
    grid[row][col] = char


def _mark(grid, style, row: int, col: int, char: str, how: str) -> None:  # noqa: ANN001
    grid[row][col] = char
    style[(row, col)] = how


def _fill(points, cell, paint, width: int, height: int) -> None:  # noqa: ANN001
    """Paint every character cell whose centre lies inside the polygon (at least one)."""
    corners = [cell(x, y) for x, y in points]
    cols = [c for c, _ in corners]
    rows = [r for _, r in corners]
    painted = False
    for row in range(max(min(rows), 0), min(max(rows), height - 1) + 1):
        for col in range(max(min(cols), 0), min(max(cols), width - 1) + 1):
            if _inside(col, row, corners):
                paint(row, col)
                painted = True
    if not painted:
        col, row = round(sum(cols) / len(cols)), round(sum(rows) / len(rows))
        if 0 <= row < height and 0 <= col < width:
            paint(row, col)


def _inside(x: float, y: float, polygon: list[tuple[int, int]]) -> bool:
    inside = False
    for (x0, y0), (x1, y1) in zip(polygon, polygon[1:] + polygon[:1], strict=True):
        if (y0 > y) != (y1 > y) and x < x0 + (y - y0) * (x1 - x0) / (y1 - y0):
            inside = not inside
    return inside


def _line(a, b, k: float, put) -> None:  # noqa: ANN001
    dx, dy = b[0] - a[0], (b[1] - a[1]) / _ASPECT
    char = (
        "-"
        if abs(dx) >= 2 * abs(dy)
        else "|"
        if abs(dy) >= 2 * abs(dx)
        else ("/" if dx * dy > 0 else "\\")
    )
    steps = max(int(math.hypot(b[0] - a[0], b[1] - a[1]) * k * 2), 1)
    for n in range(steps + 1):
        t = n / steps
        put(a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1]), char, "bold blue")


def _scale(k: float) -> tuple[int, float]:
    """A scale line of a round length, 4 to 20 characters long."""
    for metres in (1, 2, 5, 10, 20, 50, 100, 200, 500):
        if metres * k >= 4:
            return (min(round(metres * k), 40), float(metres))
    return (4, 4 / k)


class RoofPlanPane(Widget):
    """The site's geometry: a list of what is drawn with each verdict, and the plan."""

    DEFAULT_CSS = """
    RoofPlanPane { height: 1fr; }
    RoofPlanPane #geometry { height: 30%; min-height: 4; }
    RoofPlanPane #plan-drawing { height: 1fr; }
    RoofPlanPane #plan-verdict { height: auto; max-height: 4; background: $boost; }
    """

    BINDINGS = [
        Binding(
            "g",
            "add",
            "Add geometry",
            id="plan.add",
            tooltip="Draw a roof, conductor, rod, down conductor or rooftop item",
        ),
        Binding(
            "enter",
            "edit",
            "Edit",
            id="plan.edit",
            show=False,
            tooltip="Edit the highlighted geometry item",
        ),
        Binding(
            "delete",
            "remove",
            "Remove",
            id="plan.remove",
            tooltip="Remove the highlighted geometry item, drawn by mistake",
        ),
    ]

    def __init__(self, **kwargs: object) -> None:
        super().__init__(**kwargs)  # type: ignore[arg-type]
        self.records: SiteRecords | None = None
        self.judged: Conformity | None = None

    @property
    def table(self) -> DataTable:
        return self.query_one("#geometry", DataTable)

    def compose(self) -> ComposeResult:
        with Vertical():
            yield DataTable(id="geometry", cursor_type="row")
            yield Static("", id="plan-verdict")
            yield Static("", id="plan-drawing")

    def on_mount(self) -> None:
        self.table.add_columns("Tag", "Verdict", "Kind", "What")

    def show(self, records: SiteRecords) -> None:
        """Fill the list and the plan from the site's records."""
        self.records = records
        self.judged = assess(records.site, records.geometry) if records.geometry else None
        verdicts = {v.tag: v.severity.value for v in self.judged.items} if self.judged else {}
        table = self.table
        keep = self.selected_item()
        table.clear()
        # What is judged first, then the system it is judged against.
        ordered = sorted(records.geometry, key=lambda g: g.kind is not GeometryKind.ROOFTOP_ITEM)
        for item in ordered:
            verdict = verdicts.get(item.tag, "") if item.kind is GeometryKind.ROOFTOP_ITEM else ""
            table.add_row(item.tag, verdict.upper(), item.kind.label, item.what, key=item.id)
        if keep is not None and keep.id in {g.id for g in records.geometry}:
            table.move_cursor(row=table.get_row_index(keep.id))
        self._draw()

    def selected_item(self) -> GeometryItem | None:
        if self.records is None or self.table.row_count == 0:
            return None
        key = self.table.coordinate_to_cell_key(self.table.cursor_coordinate).row_key.value
        return next((g for g in self.records.geometry if g.id == key), None)

    def _draw(self) -> None:
        """The verdict of the highlighted item first, then (once the layout has settled
        round its height) the plan in the room left."""
        selected = self.selected_item()
        geometry = self.records.geometry if self.records else []
        said = ""
        if selected is not None and self.judged is not None:
            verdict = next((v for v in self.judged.items if v.tag == selected.tag), None)
            said = verdict.message if verdict else f"{selected.tag}: {selected.kind.label}"
        elif self.records is not None and not geometry:
            said = "No geometry recorded; this site is not checked for protection."
        self.query_one("#plan-verdict", Static).update(Text(said))
        self.call_after_refresh(self._draw_plan)

    def _draw_plan(self) -> None:
        selected = self.selected_item()
        drawing = self.query_one("#plan-drawing", Static)
        size = drawing.content_size
        geometry = self.records.geometry if self.records else []
        drawing.update(
            plan_text(
                geometry,
                self.judged,
                size.width or 60,
                size.height or 16,
                selected.tag if selected else None,
            )
        )

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        event.stop()
        self._draw()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_edit()

    def on_resize(self) -> None:
        self._draw()

    def _reload(self, *_: object) -> None:
        """Read and judge the site again (the site screen does both)."""
        reload = getattr(self.screen, "reload", None)
        if reload is not None:
            reload()

    def _open(self, item: GeometryItem | None) -> None:
        if self.records is not None:
            edit_geometry(self.screen, self.records.site.id, item, self._reload)

    def action_remove(self) -> None:
        item = self.selected_item()
        if item is None:
            return

        def answered(yes: bool | None) -> None:
            if yes:
                delete_geometry_item(self.app.store, item.id)  # type: ignore[attr-defined]
                self.notify(f"{item.tag} removed from the roof plan")
                self._reload()

        question = f"Remove {item.tag} ({item.kind.label}) from the roof plan?"
        self.app.push_screen(ConfirmDialog(question, yes_label="Remove"), answered)

    def action_add(self) -> None:
        self._open(None)

    def action_edit(self) -> None:
        item = self.selected_item()
        if item is None:
            self.notify("No geometry yet: press g to add some")
            return
        self._open(item)
