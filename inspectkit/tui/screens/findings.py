"""Open defects across every site, oldest due first, and resolving one."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Static

from inspectkit.model import Grade
from inspectkit.store.queries import OpenFinding, later_inspections, open_findings
from inspectkit.tui.dialogs.choice import ChoiceDialog

#: Grades in one short word each, so the column fits an 80-column screen.
_GRADE_WORD = {Grade.SOUND: "sound", Grade.NEEDS_ATTENTION: "attention", Grade.DEFECT: "defect"}


class FindingsScreen(Screen[None]):
    """Every open defect with its age and due-by date; resolve one with the visit that fixed it."""

    CSS_PATH = "findings.tcss"

    BINDINGS = [
        Binding(
            "r", "resolve", "Resolve", id="findings.resolve",
            tooltip="Record the inspection that put the highlighted finding right",
        ),
        Binding(
            "enter", "open_site", "Open site", id="findings.open",
            tooltip="Open the site of the highlighted finding",
        ),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.items: dict[str, OpenFinding] = {}

    @property
    def table(self) -> DataTable[object]:
        return self.query_one("#findings", DataTable)

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("Open findings", classes="section-title")
        yield DataTable(id="findings", cursor_type="row", zebra_stripes=True)
        yield Static("", id="detail")
        yield Static("", id="status", classes="hint")
        yield Footer()

    def on_mount(self) -> None:
        for label, key in (
            ("Due by", "due"), ("Age", "age"), ("Site", "site"), ("Tag", "tag"),
            ("Grade", "grade"), ("Finding", "text"),
        ):
            self.table.add_column(label, key=key)

    def on_screen_resume(self) -> None:
        self.reload()

    def reload(self) -> None:
        today = self.app.today
        table = self.table
        table.clear()
        self.items = {o.finding.id: o for o in open_findings(self.app.store)}
        for item in self.items.values():
            due = item.finding.due_by
            late = due is not None and due < today
            due_cell = Text(
                f"{due.isoformat()}{' late' if late else ''}" if due else "—",
                style="bold red" if late else "",
            )
            table.add_row(
                due_cell,
                f"{(today - item.found_on).days} d",
                item.site_name,
                item.tag,
                _GRADE_WORD[item.finding.grade],
                item.finding.text,
                key=item.finding.id,
            )
        self.query_one("#status", Static).update(
            f"{len(self.items)} open · r resolve · Enter open site"
        )

    def highlighted(self) -> OpenFinding | None:
        table = self.table
        if table.row_count == 0:
            return None
        key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key
        return self.items.get(str(key.value))

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        """The whole text of the highlighted finding, wrapped, since the column cuts it."""
        item = self.items.get(str(event.row_key.value))
        detail = self.query_one("#detail", Static)
        if item is None:
            detail.update("")
            return
        finding = item.finding
        text = Text.assemble(
            (f"{item.site_name} {item.tag}".strip(), "bold"),
            f" · found {item.found_on.isoformat()}\n{finding.text}",
        )
        if finding.remedial_action:
            text.append(f"\nRemedy: {finding.remedial_action}", style="italic")
        detail.update(text)

    def action_open_site(self) -> None:
        item = self.highlighted()
        if item is not None:
            from inspectkit.tui.screens.site import SiteScreen

            self.app.push_screen(SiteScreen(item.site_id))

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_open_site()

    def action_resolve(self) -> None:
        item = self.highlighted()
        if item is None:
            self.notify("No open finding to resolve")
            return
        visits = later_inspections(self.app.store, item)
        if not visits:
            self.notify(
                f"No visit to {item.site_name} since {item.found_on.isoformat()}; "
                "record the repair with a new inspection first",
                severity="warning",
            )
            return
        choices = [
            (v.id, f"{v.date.isoformat()}  {v.kind.value.replace('_', '-')}  {v.state.value}")
            for v in visits
        ]

        def chosen(inspection_id: str | None) -> None:
            if inspection_id is None:
                return
            self.app.store.save(item.finding.model_copy(update={"resolved_by": inspection_id}))
            self.notify(f"Finding at {item.site_name} {item.tag} marked resolved")
            self.reload()

        self.app.push_screen(
            ChoiceDialog(f"Which visit put right: {item.finding.text}", choices), chosen
        )
