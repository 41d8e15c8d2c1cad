"""The terminal UI application and the one factory that builds it."""

from __future__ import annotations

from datetime import date, datetime
from pathlib import Path

from textual.app import App
from textual.binding import Binding

from inspectkit.model import utcnow
from inspectkit.store import Store
from inspectkit.store.preferences import Preferences
from inspectkit.tui.commands import ActionsProvider
from inspectkit.tui.dialogs.cautions import CautionsDialog
from inspectkit.tui.screens.findings import FindingsScreen
from inspectkit.tui.screens.plan import PlanScreen
from inspectkit.tui.screens.settings import SettingsScreen
from inspectkit.tui.screens.sites import SitesScreen


class InspectApp(App[None]):
    """The inspector's whole day: sites, a site, the walkdown, findings, settings.

    Screens reachable from anywhere are modes, each keeping its own stack (a site
    opened from the list stays open while findings are looked at). To add one
    (the plan, say): add its class to MODES and a Binding below that switches to it;
    the command palette picks the binding up by itself. A screen about one site
    (the report) gets a Binding on SiteScreen instead.

    Every Binding has an id (`app.findings`, `sites.sort`, `site.walkdown`...): the
    setting `keymap`, a JSON object of id → key, moves keys without touching code.
    """

    TITLE = "inspectkit"
    CSS_PATH = "app.tcss"
    COMMANDS = App.COMMANDS | {ActionsProvider}
    DEFAULT_MODE = "sites"
    MODES = {
        "sites": SitesScreen,
        "findings": FindingsScreen,
        "settings": SettingsScreen,
        "plan": PlanScreen,
    }

    BINDINGS = [
        Binding(
            "f1", "cautions", "Cautions", id="app.cautions",
            tooltip="Show the safety cautions again",
        ),
        Binding("f2", "switch_mode('sites')", "Sites", id="app.sites", tooltip="Every site"),
        Binding(
            "f3", "switch_mode('findings')", "Findings", id="app.findings",
            tooltip="Open defects across all sites",
        ),
        Binding(
            "f4", "switch_mode('settings')", "Settings", id="app.settings",
            tooltip="Inspector, instrument, profiles and data folder",
        ),
        # The footer is full at 80 columns; the command palette lists it.
        Binding(
            "f5", "switch_mode('plan')", "Plan", id="app.plan",
            tooltip="The next round of visits, day by day", show=False,
        ),
    ]

    def __init__(self, db_path: Path, today: date | None = None) -> None:
        """Args:
        db_path: the database to open (created if missing).
        today: the day to judge states by; None follows the clock (tests fix it).
        """
        super().__init__()
        self.db_path = Path(db_path)
        self._today = today
        self.store = Store.open(self.db_path)
        _first_start_organisation(self.store)
        self.settings = Preferences(self.store)
        self.set_keymap(self.settings.keymap)
        self.sub_title = self.db_path.name

    @property
    def today(self) -> date:
        """The day states and due dates are judged by."""
        return self._today or date.today()

    def now(self) -> datetime:
        """When a reading typed now was taken: the clock, on `today` when the day is fixed."""
        clock = utcnow()
        return clock if self._today is None else datetime.combine(self._today, clock.timetz())

    def on_mount(self) -> None:
        if not self.settings.cautions_acknowledged:
            self.action_cautions()

    def action_cautions(self) -> None:
        """Show the cautions; acknowledging them keeps them from opening by themselves."""

        def done(acknowledged: bool | None) -> None:
            if acknowledged and not self.settings.cautions_acknowledged:
                self.settings.acknowledge_cautions()

        if not isinstance(self.screen, CautionsDialog):
            self.push_screen(CautionsDialog(), done)

    def on_unmount(self) -> None:
        self.store.close()


def _first_start_organisation(store: Store) -> None:
    """At first start the branding file becomes the default organisation (see letterhead)."""
    from inspectkit.report.branding import BrandingError
    from inspectkit.report.letterhead import ensure_default_organisation

    try:
        ensure_default_organisation(store)
    except BrandingError:
        pass  # a broken branding file is reported when a report is made, not at start


def make_app(db_path: Path, today: date | None = None) -> InspectApp:
    """Build the app for the command line and for tests alike."""
    return InspectApp(db_path, today=today)
