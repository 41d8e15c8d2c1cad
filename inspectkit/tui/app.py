"""The terminal UI application and the one factory that builds it."""

from __future__ import annotations

from pathlib import Path

from textual.app import App, ComposeResult
from textual.widgets import DataTable, Footer, Header

from inspectkit.store import Store
from inspectkit.store.queries import site_summaries


class InspectApp(App[None]):
    """Minimal site list; the screens grow from here."""

    TITLE = "inspectkit"

    def __init__(self, db_path: Path) -> None:
        super().__init__()
        self.db_path = db_path

    def compose(self) -> ComposeResult:
        yield Header()
        yield DataTable(id="sites")
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#sites", DataTable)
        table.add_columns("site", "level", "client", "town", "last visit")
        with Store.open(self.db_path) as store:
            for s in site_summaries(store):
                last = s.last_visit.isoformat() if s.last_visit else "never"
                table.add_row(
                    s.site.name, s.site.protection_level.value, s.site.client, s.site.town, last
                )


def make_app(db_path: Path) -> InspectApp:
    """Build the app for the command line and for tests alike."""
    return InspectApp(db_path)
