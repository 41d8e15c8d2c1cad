"""Who is inspecting, with which instrument, each site's rule set, and where the data lives."""

from __future__ import annotations

from datetime import date

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import Screen
from textual.widgets import Button, DataTable, Footer, Header, Label, Select, Static

from inspectkit.model import Inspector, Instrument, Record, Site
from inspectkit.plan.settings import PlanSettingsError, load_plan_settings
from inspectkit.retiring import in_service, retire
from inspectkit.store.record_queries import organisations_by_name, sites_by_name
from inspectkit.tui.dialogs.choice import ChoiceDialog
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.editors import inspector_dialog, instrument_dialog, profile_choices
from inspectkit.tui.dialogs.holiday_calendar import choose_holiday_calendar, holiday_text
from inspectkit.tui.widgets.held_keys import PickList


def _instrument_label(instrument: Instrument, today: date) -> str:
    """Description, serial and calibration date, flagged when calibration has lapsed."""
    label = f"{instrument.description} #{instrument.serial}"
    due = instrument.calibration_due
    if due is None:
        return label
    lapsed = " LAPSED" if due < today else ""
    return f"{label} · calibration due {due.isoformat()}{lapsed}"


class SettingsScreen(Screen[None]):
    """Choices kept in the database, so they travel with it."""

    CSS_PATH = "settings.tcss"

    BINDINGS = [
        Binding(
            "i", "add_inspector", "Add inspector", id="settings.add_inspector",
            tooltip="Add a person who inspects and signs, and choose them",
        ),
        Binding(
            "m", "add_instrument", "Add instrument", id="settings.add_instrument",
            tooltip="Add a test instrument with its calibration date, and choose it",
        ),
        Binding(
            "p", "pick_profile", "Site profile", id="settings.profile",
            tooltip="Choose the rule set the highlighted site is held to",
        ),
        Binding(
            "h", "holidays", "Holidays", id="settings.holidays", show=False,
            tooltip="Choose the country and region whose public holidays rounds leave out",
        ),
        Binding(
            "r", "retire", "Retire", id="settings.retire", show=False,
            tooltip="Retire the chosen inspector or instrument (the one whose picker has focus)",
        ),
    ]

    @property
    def profiles_table(self) -> DataTable[object]:
        return self.query_one("#profiles", DataTable)

    def compose(self) -> ComposeResult:
        yield Header()
        with Vertical(id="choices"):
            with Horizontal(classes="setting"):
                yield Label("Inspector", classes="setting-label")
                yield PickList([], id="inspector", prompt="choose the inspector", compact=True)
                yield Button("Add…", id="add-inspector", compact=True)
                yield Button("Retire…", id="retire-inspector", compact=True)
            with Horizontal(classes="setting"):
                yield Label("Instrument", classes="setting-label")
                yield PickList([], id="instrument", prompt="choose the instrument", compact=True)
                yield Button("Add…", id="add-instrument", compact=True)
                yield Button("Retire…", id="retire-instrument", compact=True)
            with Horizontal(classes="setting"):
                yield Label("Data folder", classes="setting-label")
                yield Static("", id="data-folder")
            with Horizontal(classes="setting"):
                yield Label("Holidays", classes="setting-label")
                yield Static("", id="holidays")
                yield Button("Change…", id="change-holidays", compact=True)
        yield Static("Profile per site (p to change)", classes="section-title")
        yield DataTable(id="profiles", cursor_type="row", zebra_stripes=True)
        yield Footer()

    def on_mount(self) -> None:
        self.profiles_table.add_column("Site", key="site")
        self.profiles_table.add_column("Profile", key="profile")
        app = self.app
        photos = app.store.photos_dir
        self.query_one("#data-folder", Static).update(
            f"{app.db_path.parent}\ndatabase {app.db_path.name} · photos {photos.name}/"
        )

    def on_screen_resume(self) -> None:
        self.reload()

    def reload(self) -> None:
        store, prefs = self.app.store, self.app.settings
        self._fill(
            "#inspector",
            [(i.name + (f" · {i.organisation}" if i.organisation else ""), i.id)
             for i in in_service(store, Inspector, "name")],
            prefs.inspector_id,
        )
        self._fill(
            "#instrument",
            [(_instrument_label(i, self.app.today), i.id)
             for i in in_service(store, Instrument, "description")],
            prefs.instrument_id,
        )
        self.query_one("#holidays", Static).update(holiday_text())
        table = self.profiles_table
        table.clear()
        for site in sites_by_name(store):
            table.add_row(site.name, site.profile, key=site.id)

    def _fill(self, selector: str, options: list[tuple[str, str]], value: str | None) -> None:
        select = self.query_one(selector, Select)
        with select.prevent(Select.Changed):
            select.set_options(options)
            if value in {v for _, v in options}:
                select.value = value

    def on_select_changed(self, event: Select.Changed) -> None:
        if event.value is Select.NULL:
            return
        prefs = self.app.settings
        if event.select.id == "inspector" and event.value != prefs.inspector_id:
            prefs.inspector_id = str(event.value)
            self.notify("Inspector for new inspections changed")
        elif event.select.id == "instrument" and event.value != prefs.instrument_id:
            prefs.instrument_id = str(event.value)
            self.notify("Default instrument changed")

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "add-inspector":
            self.action_add_inspector()
        elif event.button.id == "add-instrument":
            self.action_add_instrument()
        elif event.button.id in ("retire-inspector", "retire-instrument"):
            self._retire(Inspector if event.button.id == "retire-inspector" else Instrument)
        elif event.button.id == "change-holidays":
            self.action_holidays()

    def action_holidays(self) -> None:
        try:
            current = load_plan_settings()
        except PlanSettingsError:
            current = None
        choose_holiday_calendar(self.app, current, lambda _: self.reload())

    def action_retire(self) -> None:
        """Retire what the focused row is about: its picker, or its Retire button."""
        focused = self.focused
        row = focused.parent if focused is not None else None
        if row is not None and row.query("#inspector"):
            self._retire(Inspector)
        elif row is not None and row.query("#instrument"):
            self._retire(Instrument)
        else:
            self.notify("Put the cursor on the inspector or the instrument first",
                        severity="warning")  # fmt: skip

    def _retire(self, model: type[Inspector] | type[Instrument]) -> None:
        """Ask, then retire the chosen inspector or instrument: kept for history, not offered."""
        select = self.query_one(f"#{model.table}", Select)
        if select.value is Select.NULL:
            self.notify(f"Choose the {model.table} to retire first", severity="warning")
            return
        record = self.app.store.get(model, str(select.value))
        if record is None:
            return
        name = (record.name if isinstance(record, Inspector)
                else f"{record.description} {record.serial}")  # fmt: skip

        def done(confirmed: bool | None) -> None:
            if confirmed:
                retire(self.app.store, model, record.id, self.app.today)
                self.notify(f"{name} retired: kept for old records, no longer offered")
                self.reload()

        question = f"Retire {name}?\nOld inspections keep it; pickers no longer offer it."
        self.app.push_screen(ConfirmDialog(question, yes_label="Retire"), done)

    def _add(self, dialog: object, setting: str) -> None:
        def saved(record: Record | None) -> None:
            if record is None:
                return
            self.app.store.save(record)
            setattr(self.app.settings, setting, record.id)
            self.notify("Saved and chosen")
            self.reload()

        self.app.push_screen(dialog, saved)  # type: ignore[arg-type]

    def action_add_inspector(self) -> None:
        organisations = organisations_by_name(self.app.store)
        self._add(inspector_dialog(organisations), "inspector_id")

    def action_add_instrument(self) -> None:
        self._add(instrument_dialog(), "instrument_id")

    def action_pick_profile(self) -> None:
        table = self.profiles_table
        if table.row_count == 0:
            return
        site_id = str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
        site = self.app.store.get(Site, site_id)
        if site is None:
            return

        def chosen(name: str | None) -> None:
            if name and name != site.profile:
                self.app.store.save(site.model_copy(update={"profile": name}))
                self.notify(f"{site.name} is now held to {name}")
                self.reload()

        self.app.push_screen(
            ChoiceDialog(f"Rule set for {site.name}", profile_choices()), chosen
        )

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_pick_profile()
