"""The next round day by day: drop, pin or move a visit, re-plan, export, and make drafts for it."""

from __future__ import annotations

from datetime import date, timedelta

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Input, Static

from inspectkit.plan.access import AccessError, parse_access
from inspectkit.plan.calendar import WorkCalendar
from inspectkit.plan.drafts import create_drafts
from inspectkit.plan.export import write_csv, write_ics
from inspectkit.plan.geo import PointError, format_point, parse_point
from inspectkit.plan.planner import (
    PlannedDay,
    RoundPlan,
    Visit,
    Window,
    make_plan,
    save_depot,
    saved_depot,
)
from inspectkit.plan.round import Candidate
from inspectkit.plan.settings import PlanSettingsError, load_plan_settings
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.holiday_calendar import choose_holiday_calendar

#: Window lengths `w` steps through, in days.
WINDOWS = (14, 30, 60, 90)
#: How far `[` and `]` look for another day the site can be visited on.
MOVE_REACH_DAYS = 60
#: Columns: heading, key, width (None: a share of what the fixed ones leave).
COLUMNS = (
    ("#", "order", 2), ("Site", "site", None), ("Kind", "kind", None),
    ("Time", "onsite", 5), ("Drive", "drive", 5), ("At", "arrive", 5), ("Note", "note", 11),
)


def _free_widths(width: int) -> tuple[int, int]:
    """Widths of the site and kind columns so a row fits across the terminal."""
    fixed = sum(w for _, _, w in COLUMNS if w is not None) + 2 * len(COLUMNS) + 2
    free = max(30, width - fixed)
    return free * 11 // 20, free - free * 11 // 20


def _short(kind_label: str) -> str:
    """A visit's kinds in few columns: "complete+recheck"."""
    return kind_label.replace(" + ", "+").replace("re-check", "recheck").replace(" visit", "")


def _hhmm(minutes: float) -> str:
    whole = round(minutes)
    return f"{whole // 60}:{whole % 60:02d}"


class PlanScreen(Screen[None]):
    """The round from today over the window, planned from the saved depot."""

    CSS_PATH = "plan.tcss"

    BINDINGS = [
        Binding(
            "d", "drop", "Drop/keep", id="plan.drop",
            tooltip="Take the highlighted site out of the round, or put it back",
        ),
        Binding(
            "p", "pin", "Pin/unpin", id="plan.pin",
            tooltip="Put the highlighted site's day first, or let priority decide again",
        ),
        Binding(
            "w", "window", "Window", id="plan.window",
            tooltip="Plan over the next 14, 30, 60 or 90 days",
        ),
        Binding(
            "c", "drafts", "Create drafts", id="plan.drafts",
            tooltip="Make a draft inspection for every planned visit",
        ),
        Binding(
            "[", "move(-1)", "Earlier day", id="plan.earlier", show=False,
            tooltip="Move the highlighted visit to the day before on which it can be made",
        ),
        Binding(
            "]", "move(1)", "Later day", id="plan.later", show=False,
            tooltip="Move the highlighted visit to the next day on which it can be made",
        ),
        Binding(
            "x", "export", "Export", id="plan.export", show=False,
            tooltip="Write the round as CSV and iCalendar beside the database",
        ),
        Binding(
            "h", "holidays", "Holidays", id="plan.holidays", show=False,
            tooltip="Choose the country and region whose public holidays are not booked",
        ),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.days = 30
        self.dropped: set[str] = set()
        self.pinned: set[str] = set()
        self.moved: dict[str, date] = {}
        self.plan: RoundPlan | None = None
        self.told: set[str] = set()

    @property
    def table(self) -> DataTable[object]:
        return self.query_one("#round", DataTable)

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("", id="summary", classes="section-title")
        yield Input(placeholder="Depot LAT,LON, Enter to save", id="depot")
        yield DataTable(id="round", cursor_type="row", zebra_stripes=True)
        yield Static("", id="why")
        yield Static("", id="status", classes="hint")
        yield Footer()

    def on_mount(self) -> None:
        site_width, kind_width = _free_widths(self.app.size.width)
        for label, key, width in COLUMNS:
            width = width or (site_width if key == "site" else kind_width)
            self.table.add_column(label, key=key, width=width)
        depot = self.query_one("#depot", Input)
        depot.value = self._depot_text()
        # With no depot there is nothing to plan from: start where it is typed.
        (self.table if depot.value else depot).focus()

    def on_screen_resume(self) -> None:
        self.replan()

    def _depot_text(self) -> str:
        try:
            depot = saved_depot(self.app.store)
        except PointError:
            return ""
        return format_point(depot) if depot else ""

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        try:
            depot = parse_point(event.value, "depot")
        except PointError as exc:
            self.notify(str(exc), severity="error")
            return
        save_depot(self.app.store, depot)
        self.notify(f"Depot saved: {format_point(depot)}")
        self.table.focus()
        self.replan()

    def replan(self) -> None:
        """Plan again from the store with the current window, drops and pins."""
        window = Window(self.app.today, self.days)
        try:
            self.plan = make_plan(
                self.app.store, window, load_plan_settings(),
                dropped=self.dropped, pinned=self.pinned, moved=self.moved,
            )
        except (PointError, PlanSettingsError) as exc:
            self.plan = None
            self.table.clear()
            self.query_one("#summary", Static).update("No round planned")
            self.query_one("#status", Static).update(
                "Type the depot's position above (LAT,LON) and press Enter"
                if isinstance(exc, PointError)
                else str(exc)
            )
            return
        self._show(self.plan)
        for note in self.plan.notes:
            if note not in self.told:
                self.told.add(note)
                self.notify(note, severity="warning", timeout=8)

    def _show(self, plan: RoundPlan) -> None:
        table = self.table
        table.clear()
        for day in plan.days:
            table.add_row(
                "",
                Text(f"{day.day:%a %d %b}", style="bold"),
                _day_state(day),
                "", "", Text(f"{day.back:%H:%M}", style="bold"),
                "back",
                key=f"day:{day.day.isoformat()}",
            )
            pause = day.break_start
            for visit in day.visits:
                if pause is not None and pause < visit.start:
                    self._break_row(day)
                    pause = None
                c = visit.candidate
                table.add_row(
                    str(visit.order), c.site.name, _short(c.kind_label),
                    _hhmm(c.onsite_minutes), _hhmm(visit.drive_minutes),
                    visit.start.strftime("%H:%M"), self._note(c, visit), key=c.site.id,
                )
            if pause is not None:
                self._break_row(day)
        for title, group in (("no position", plan.no_position), ("dropped", plan.dropped)):
            if group:
                table.add_row("", Text(title, style="bold italic"), key=f"day:{title}")
            for c in group:
                table.add_row(
                    "", c.site.name, _short(c.kind_label), _hhmm(c.onsite_minutes), "", "",
                    self._note(c), key=c.site.id,
                )
        if plan.unbookable:
            table.add_row("", Text("no day fits", style="bold italic"), key="day:unbookable")
        for c, why in plan.unbookable:
            table.add_row("", c.site.name, _short(c.kind_label), "", "", "", why, key=c.site.id)
        late = len(plan.past_window)
        self.query_one("#summary", Static).update(
            f"Round {plan.window.first:%d %b} – {plan.window.last:%d %b %Y}: "
            f"{len(plan.visits)} visits on {len(plan.days)} days, {plan.km:.0f} road km"
            + ("" if plan.settings.roads else f" (est. ×{plan.settings.road_factor:g})")
            + (f" · {late} days past the window" if late else "")
        )
        self.query_one("#status", Static).update(
            f"{len(plan.no_position)} no position · {len(plan.dropped)} dropped · "
            f"{len(plan.unbookable)} no day · [ ] move · x export · h holidays "
            f"({plan.settings.holiday_country or 'none'})"
        )

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        """Say why the highlighted site is in the round, and what waits for later."""
        plan, key = self.plan, event.row_key.value
        found = None
        if plan is not None:
            groups = (
                [v.candidate for _, v in plan.visits],
                plan.no_position,
                plan.dropped,
                [c for c, _ in plan.unbookable],
            )
            found = next((c for g in groups for c in g if c.site.id == key), None)
        blocked = [] if plan is None else [w for c, w in plan.unbookable if c.site.id == key]
        parts = [f"no day: {w}" for w in blocked]
        if found is not None:
            parts += [r.text for r in found.reasons] + list(found.waiting)
        text = "; ".join(parts)
        self.query_one("#why", Static).update(f"why: {text}" if text else "")

    def _break_row(self, day: PlannedDay) -> None:
        assert day.break_start is not None and day.break_end is not None
        self.table.add_row(
            "", Text("break", style="italic"), "", "", "", f"{day.break_start:%H:%M}",
            f"to {day.break_end:%H:%M}", key=f"day:break:{day.day.isoformat()}",
        )

    def _note(self, c: Candidate, visit: Visit | None = None) -> Text:
        words = []
        if c.site.id in self.pinned:
            words.append("pinned")
        if visit is not None and not visit.fits:
            words.append("outside hrs")
        if c.overdue_days:
            words.append(f"{c.overdue_days} d late")
        elif any(r.what in ("recheck", "return") for r in c.reasons):
            words.append(_short(c.kind_label.split(" + ")[-1]))
        late = c.overdue_days or (visit is not None and not visit.fits)
        return Text(" · ".join(words), style="bold red" if late else "")

    def highlighted_site(self) -> str | None:
        """The site id on the highlighted row; None on a day's heading."""
        table = self.table
        if table.row_count == 0:
            return None
        key = str(table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value)
        return None if key.startswith("day:") else key

    def _toggle(self, chosen: set[str]) -> None:
        site_id = self.highlighted_site()
        if site_id is None:
            self.notify("Highlight a site first")
            return
        chosen.symmetric_difference_update({site_id})
        self.replan()
        if site_id in self.table.rows:
            self.table.move_cursor(row=self.table.get_row_index(site_id))

    def action_drop(self) -> None:
        self._toggle(self.dropped)

    def action_pin(self) -> None:
        self._toggle(self.pinned)

    def action_move(self, step: int) -> None:
        """Move the highlighted visit to the nearest day before or after on which it can be made."""
        site_id, plan = self.highlighted_site(), self.plan
        found = None if plan is None else _visit_day(plan, site_id)
        if plan is None or site_id is None or found is None:
            self.notify("Highlight a planned visit first")
            return
        day, visit = found
        target = _next_open_day(plan, day.day, step, visit.candidate)
        if target is None:
            self.notify(f"No day within {MOVE_REACH_DAYS} days that way", severity="warning")
            return
        self.moved[site_id] = target
        self.replan()
        if site_id in self.table.rows:
            self.table.move_cursor(row=self.table.get_row_index(site_id))
        self.notify(f"{visit.candidate.site.name} moved to {target:%a %d %b}")

    def action_export(self) -> None:
        """Write the round as it stands, moves included, beside the database."""
        plan = self.plan
        if plan is None or not plan.visits:
            self.notify("No planned visits to export")
            return
        from inspectkit.model import utcnow

        stem = self.app.db_path.parent / f"round-{plan.window.first.isoformat()}"
        try:
            csv_path = write_csv(plan, stem.with_suffix(".csv"))
            ics_path = write_ics(plan, stem.with_suffix(".ics"), utcnow())
        except OSError as exc:
            self.notify(f"Cannot write {exc.filename}: {exc.strerror}", severity="error")
            return
        self.notify(f"Written: {csv_path.name} and {ics_path.name} in {csv_path.parent}")

    def action_holidays(self) -> None:
        current = self.plan.settings if self.plan else None
        choose_holiday_calendar(self.app, current, lambda _: self.replan())

    def action_window(self) -> None:
        self.days = WINDOWS[(WINDOWS.index(self.days) + 1) % len(WINDOWS)]
        self.replan()

    def action_drafts(self) -> None:
        plan = self.plan
        if plan is None or not plan.visits:
            self.notify("No planned visits to make drafts for")
            return

        def answered(yes: bool | None) -> None:
            if yes:
                made = create_drafts(self.app.store, plan)
                self.notify(f"{len(made)} draft inspections created")

        self.app.push_screen(
            ConfirmDialog(
                f"Make draft inspections for the {len(plan.visits)} planned visits? "
                "Drafts already made for the same site, kind and day are kept as they are.",
                yes_label="Create drafts",
            ),
            answered,
        )


def _day_state(day: PlannedDay) -> Text:
    if day.too_long:
        return Text("TOO LONG", style="bold red")
    if day.outside_window:
        return Text("MISSES ACCESS", style="bold red")
    moved = " · moved" if day.moved else ""
    return Text(f"{len(day.visits)} · {day.km:.0f} km{moved}", style="bold")


def _visit_day(plan: RoundPlan, site_id: str | None) -> tuple[PlannedDay, Visit] | None:
    return next(((d, v) for d, v in plan.visits if v.candidate.site.id == site_id), None)


def _next_open_day(plan: RoundPlan, start: date, step: int, c: Candidate) -> date | None:
    """The nearest day from `start` in the direction of `step` the site can be visited on.

    Not before the window's first day, nor before a remedy the visit re-checks is due.
    """
    calendar = WorkCalendar(plan.settings)
    try:
        access = parse_access(c.site.access)
    except AccessError:
        return None
    floor = max(plan.window.first, c.earliest or plan.window.first)
    day = start
    for _ in range(MOVE_REACH_DAYS):
        day += timedelta(days=step)
        if day < floor:
            return None
        if calendar.site_closed_why(day, access) is None:
            return day
    return None
