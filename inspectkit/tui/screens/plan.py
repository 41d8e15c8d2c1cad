"""The next round day by day: drop or pin a site, re-plan, and make draft inspections for it."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Header, Input, Static

from inspectkit.plan.drafts import create_drafts
from inspectkit.plan.geo import PointError, format_point, parse_point
from inspectkit.plan.planner import RoundPlan, Window, make_plan, save_depot, saved_depot
from inspectkit.plan.round import Candidate
from inspectkit.plan.settings import PlanSettingsError, load_plan_settings
from inspectkit.tui.dialogs.confirm import ConfirmDialog

#: Window lengths `w` steps through, in days.
WINDOWS = (14, 30, 60, 90)
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
    return kind_label.replace(" + ", "+").replace("re-check", "recheck")


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
    ]

    def __init__(self) -> None:
        super().__init__()
        self.days = 30
        self.dropped: set[str] = set()
        self.pinned: set[str] = set()
        self.plan: RoundPlan | None = None

    @property
    def table(self) -> DataTable[object]:
        return self.query_one("#round", DataTable)

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static("", id="summary", classes="section-title")
        yield Input(placeholder="Depot LAT,LON, Enter to save", id="depot")
        yield DataTable(id="round", cursor_type="row", zebra_stripes=True)
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
                dropped=self.dropped, pinned=self.pinned,
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

    def _show(self, plan: RoundPlan) -> None:
        table = self.table
        table.clear()
        for day in plan.days:
            table.add_row(
                "",
                Text(f"{day.day:%a %d %b}", style="bold"),
                Text("TOO LONG", style="bold red")
                if day.too_long
                else Text(f"{len(day.visits)} · {day.km:.0f} km", style="bold"),
                "", "", Text(f"{day.back:%H:%M}", style="bold"), "back",
                key=f"day:{day.day.isoformat()}",
            )
            for visit in day.visits:
                c = visit.candidate
                table.add_row(
                    str(visit.order), c.site.name, _short(c.kind_label),
                    _hhmm(c.onsite_minutes), _hhmm(visit.drive_minutes),
                    visit.arrive.strftime("%H:%M"), self._note(c), key=c.site.id,
                )
        for title, group in (("no position", plan.no_position), ("dropped", plan.dropped)):
            if group:
                table.add_row("", Text(title, style="bold italic"), key=f"day:{title}")
            for c in group:
                table.add_row(
                    "", c.site.name, _short(c.kind_label), _hhmm(c.onsite_minutes), "", "",
                    self._note(c), key=c.site.id,
                )
        late = len(plan.past_window)
        self.query_one("#summary", Static).update(
            f"Round {plan.window.first:%d %b} – {plan.window.last:%d %b %Y}: "
            f"{len(plan.visits)} visits on {len(plan.days)} days, {plan.km:.0f} km"
            + (f" · {late} days past the window" if late else "")
        )
        self.query_one("#status", Static).update(
            f"{len(plan.no_position)} without position · {len(plan.dropped)} dropped · "
            "d drop · p pin · w window · c drafts"
        )

    def _note(self, c: Candidate) -> Text:
        words = []
        if c.site.id in self.pinned:
            words.append("pinned")
        if c.overdue_days:
            words.append(f"{c.overdue_days} d late")
        return Text(" · ".join(words), style="bold red" if c.overdue_days else "")

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
