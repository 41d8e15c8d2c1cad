"""The list of every site, worst first, with its state in words and colour."""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import date

from rich.text import Text
from textual import events, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.message import Message
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import DataTable, Footer, Header, Input, Static
from textual.worker import get_current_worker

from inspectkit.engine.standing import WORDS_WORST_FIRST
from inspectkit.printable import printable
from inspectkit.profiles import level_shown
from inspectkit.site_states import ERROR, SiteState, assess_all
from inspectkit.store import Store
from inspectkit.store.queries import last_write, site_listing
from inspectkit.tui.widgets.state_badge import state_text
from inspectkit.wording import counted

#: How the list can be ordered, in the order the sort key cycles through them.
SORTS = ("state", "name", "due", "client", "town", "level")
#: Columns of the list: heading, key (the key doubles as the sort name).
COLUMNS = (
    ("State", "state"),
    ("Site", "name"),
    ("Level", "level"),
    ("Client", "client"),
    ("Town", "town"),
    ("Next due", "due"),
)
#: Shown too when the terminal is at least WIDE columns across.
WIDE_COLUMNS = (("Inspection due", "kind"), ("Last visit", "last"))
WIDE = 110
#: Widths of the columns whose content has a known size.
FIXED_WIDTHS = {"state": 10, "level": 5, "due": 10, "kind": 14, "last": 10}
#: A list longer than this is filtered once typing pauses for TYPING_PAUSE seconds,
#: since refilling it takes longer than the gap between two keys.
LONG_LIST = 300
TYPING_PAUSE = 0.15
#: States are sent to the screen in batches this big, so the list repaints a few times.
BATCH = 250


def _column_widths(width: int, wide: bool) -> dict[str, int]:
    """Widths of every column so the whole row fits across the terminal.

    The fixed columns keep their width; name, client and town share what is left,
    the name taking the largest part.
    """
    keys = [key for _, key in COLUMNS + (WIDE_COLUMNS if wide else ())]
    fixed = sum(FIXED_WIDTHS[key] for key in keys if key in FIXED_WIDTHS)
    free = max(30, width - fixed - 2 * len(keys) - 2)
    name, client = free * 9 // 20, free * 7 // 20
    return {**FIXED_WIDTHS, "name": name, "client": client, "town": free - name - client}


@dataclass(frozen=True)
class SiteRow:
    """One line of the list."""

    site_id: str
    name: str
    level: str
    client: str
    town: str
    last_visit: date | None
    state: SiteState | None = None

    def matches(self, text: str) -> bool:
        """Whether the filter text is in the name, client or town (any case)."""
        return not text or any(text in v.lower() for v in (self.name, self.client, self.town))

    def sort_key(self, by: str) -> tuple[object, ...]:
        due = self.state.next_due if self.state and self.state.next_due else date.max
        if by == "state":
            if self.state is None:  # not yet judged: after every judged site
                return (len(WORDS_WORST_FIRST), due, self.name.lower())
            return self.state.order_key(self.name)
        if by == "due":
            return (due, self.name.lower())
        return (getattr(self, by).lower(), self.name.lower())


def list_rows(store: Store) -> list[SiteRow]:
    """The list's columns for every site, without building full records (it paints first)."""
    return [
        SiteRow(site_id, name, level_shown(profile, level), client, town, last)
        for site_id, name, level, client, town, last, profile in site_listing(store)
    ]


class SitesScreen(Screen[None]):
    """Every site; type to filter, Enter to open."""

    CSS_PATH = "sites.tcss"

    BINDINGS = [
        Binding("enter", "open_site", "Open", id="sites.open", tooltip="Open the highlighted site"),
        Binding(
            "ctrl+o",
            "cycle_sort",
            "Sort",
            id="sites.sort",
            tooltip="Order by state, name, due date, client, town or level in turn",
        ),
        Binding(
            "ctrl+r",
            "reverse_sort",
            "Reverse",
            id="sites.reverse",
            tooltip="Reverse the order of the list",
        ),
        Binding(
            "ctrl+n",
            "new_site",
            "New site",
            id="sites.new",
            tooltip="Add a site to the list",
        ),
        Binding(
            "escape",
            "clear_filter",
            "Clear filter",
            id="sites.clear",
            tooltip="Show every site again",
            show=False,
        ),
    ]

    class StatesComputed(Message):
        """A batch of site states from the background worker.

        Attributes:
            states: site id → its state.
            done: True on the last batch.
        """

        def __init__(self, states: dict[str, SiteState], done: bool) -> None:
            super().__init__()
            self.states = states
            self.done = done

    def __init__(self) -> None:
        super().__init__()
        self.wide = False
        #: The last audit row seen when the list was read (every write adds one).
        self.seen_write: int | None = -1
        #: The width the columns were last laid out for.
        self.laid_out_for = 0
        self.rows: dict[str, SiteRow] = {}
        self.sort_by = "state"
        self.descending = False
        self.states_ready = False
        self._filter_timer: Timer | None = None

    @property
    def table(self) -> DataTable[object]:
        return self.query_one("#sites", DataTable)

    @property
    def filter_input(self) -> Input:
        return self.query_one("#filter", Input)

    def compose(self) -> ComposeResult:
        yield Header()
        yield Input(
            placeholder="type to filter by name, client or town", id="filter", select_on_focus=False
        )
        yield DataTable(id="sites", cursor_type="row", zebra_stripes=True)
        yield Static("", id="status", classes="hint")
        yield Footer()

    def on_mount(self) -> None:
        self.table.focus()

    def on_resize(self, event: events.Resize) -> None:
        """Lay the columns out again only when the width really changed (each costs a rebuild)."""
        if event.size.width == self.laid_out_for:
            return
        self.laid_out_for = event.size.width
        self.wide = event.size.width >= WIDE
        table = self.table
        table.clear(columns=True)
        widths = _column_widths(event.size.width, self.wide)
        for label, key in COLUMNS + (WIDE_COLUMNS if self.wide else ()):
            table.add_column(label, key=key, width=widths.get(key))
        if self.rows:
            self.rebuild()

    def on_screen_resume(self) -> None:
        """Back on the list: read and judge again only if something was written meanwhile."""
        version = last_write(self.app.store)
        if version != self.seen_write or not self.rows:
            self.seen_write = version
            self.reload()

    def reload(self) -> None:
        """Read the sites again (one query) and judge them in the background."""
        known = self.rows
        self.rows = {
            row.site_id: replace(row, state=known[row.site_id].state)
            if row.site_id in known
            else row
            for row in list_rows(self.app.store)
        }
        self.rebuild()
        # Judge the sites once the list is on screen, so the first paint does not wait.
        self.call_after_refresh(self.compute_states, list(self.rows))

    @work(thread=True, exclusive=True, group="site-states")
    def compute_states(self, site_ids: list[str]) -> None:
        """Judge every site on a connection of the worker's own, posting batches back."""
        worker = get_current_worker()
        batch: dict[str, SiteState] = {}
        for site_id, state in assess_all(
            self.app.db_path, site_ids, self.app.today, lambda: worker.is_cancelled
        ):
            batch[site_id] = state
            if len(batch) >= BATCH:
                self.post_message(self.StatesComputed(batch, done=False))
                batch = {}
        if not worker.is_cancelled:
            self.post_message(self.StatesComputed(batch, done=True))

    def on_sites_screen_states_computed(self, message: StatesComputed) -> None:
        for site_id, state in message.states.items():
            if site_id in self.rows:
                self.rows[site_id] = replace(self.rows[site_id], state=state)
        self._tell_unjudged(message.states)
        self.states_ready = message.done
        if message.done or self.sort_by not in ("state", "due"):
            self.rebuild()
        else:
            self.refresh_states(message.states)

    def _tell_unjudged(self, states: dict[str, SiteState]) -> None:
        """Say which sites could not be judged and why; the rest of the list carries on."""
        failed = [
            self.rows[site_id]
            for site_id, state in states.items()
            if state.word == ERROR and site_id in self.rows
        ]
        if not failed:
            return
        first = failed[0]
        more = f" (and {counted(len(failed) - 1, 'more site')})" if len(failed) > 1 else ""
        self.notify(
            f"{first.name} could not be judged{more}: {first.state.reason}. "  # type: ignore[union-attr]
            "Highlight it for the reason; the other sites are judged.",
            title="Site not judged",
            severity="error",
            timeout=10,
            markup=False,
        )

    def refresh_states(self, states: dict[str, SiteState]) -> None:
        """Fill in states without reordering, so the cursor does not jump while they arrive."""
        table = self.table
        for site_id in states:
            if site_id in table.rows:
                cells = self._cells(self.rows[site_id])
                table.update_cell(site_id, "state", cells[0])
                table.update_cell(site_id, "due", cells[5])
                if self.wide:
                    table.update_cell(site_id, "kind", cells[6])

    def visible_rows(self) -> list[SiteRow]:
        text = self.filter_input.value.strip().lower()
        rows = [row for row in self.rows.values() if row.matches(text)]
        return sorted(rows, key=lambda r: r.sort_key(self.sort_by), reverse=self.descending)

    def rebuild(self) -> None:
        """Clear and refill the table in one go (removing rows one by one is quadratic).

        The cursor stays on the site it was on, unless it was on the top row: then
        it stays on the top row, so the worst site is highlighted as states arrive.
        """
        table = self.table
        if not table.columns:
            return  # laid out on the first resize, which rebuilds
        current = None if table.cursor_row == 0 else self.highlighted_site_id()
        table.clear()
        rows = self.visible_rows()
        for row in rows:
            table.add_row(*self._cells(row), key=row.site_id)
        if current is not None and current in table.rows:
            table.move_cursor(row=table.get_row_index(current))
        self.show_status(len(rows))

    def _state_cells(self, row: SiteRow) -> tuple[Text, Text]:
        """The state and next-due cells; both pending (…) until the state is known."""
        state = row.state
        if state is None:
            return state_text(None), state_text(None)
        return state_text(state.word), Text(state.next_due.isoformat() if state.next_due else "—")

    def _cells(self, row: SiteRow) -> tuple[object, ...]:
        state_cell, due_cell = self._state_cells(row)
        # Text, not str: names are shown as typed, never read as markup.
        cells: tuple[object, ...] = (
            state_cell, Text(printable(row.name)), Text(row.level), Text(printable(row.client)),
            Text(printable(row.town)), due_cell
        )
        if self.wide:
            kind = row.state.next_kind.replace("_", "-") if row.state else ""
            last = row.last_visit.isoformat() if row.last_visit else "never"
            cells += (Text(kind), Text(last))
        return cells

    def show_status(self, shown: int | None = None) -> None:
        """Counts and order; for a highlighted site that could not be judged, the reason."""
        shown = self.table.row_count if shown is None else shown
        order = f"{self.sort_by}{' reversed' if self.descending else ''}"
        judging = "" if self.states_ready else " · judging sites…"
        row = self.rows.get(self.highlighted_site_id() or "")
        status = Text(f"{shown} of {len(self.rows)} sites · sorted by {order}{judging}")
        if row is not None and row.state is not None and row.state.reason:
            status = Text.assemble(
                (f"{printable(row.name)}: {row.state.word}", "bold"), f" · {row.state.reason}"
            )
        self.query_one("#status", Static).update(status)

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        self.show_status()

    def highlighted_site_id(self) -> str | None:
        table = self.table
        if table.row_count == 0:
            return None
        key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key
        return None if key.value is None else str(key.value)

    # ------------------------------------------------------------------ input

    def on_input_changed(self, event: Input.Changed) -> None:
        """Filter at once on a short list; on a long one, once typing pauses."""
        if event.input.id != "filter":
            return
        if self._filter_timer is not None:
            self._filter_timer.stop()
        if len(self.rows) <= LONG_LIST:
            self._apply_filter()
        else:
            self._filter_timer = self.set_timer(TYPING_PAUSE, self._apply_filter)

    def _apply_filter(self) -> None:
        self._filter_timer = None
        self.rebuild()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if event.input.id == "filter":
            if self._filter_timer is not None:
                self._filter_timer.stop()
                self._apply_filter()
            self.action_open_site()

    def on_key(self, event: events.Key) -> None:
        """Typing anywhere on the list goes to the filter; arrows from the filter go to the list."""
        filter_input = self.filter_input
        if self.focused is self.table and event.is_printable and event.character:
            filter_input.focus()
            filter_input.insert_text_at_cursor(event.character)
            event.stop()
        elif self.focused is self.table and event.key == "backspace" and filter_input.value:
            filter_input.focus()
            filter_input.action_delete_left()
            event.stop()
        elif self.focused is filter_input and event.key in ("down", "up", "pagedown", "pageup"):
            self.table.focus()

    def on_data_table_row_selected(self, event: DataTable.RowSelected) -> None:
        event.stop()
        self.action_open_site()

    def on_data_table_header_selected(self, event: DataTable.HeaderSelected) -> None:
        """Clicking a column header orders by it; clicking it again reverses."""
        by = str(event.column_key.value)
        by = {"kind": "due", "last": "due"}.get(by, by)
        if by not in SORTS:
            return
        self.descending = not self.descending if by == self.sort_by else False
        self.sort_by = by
        self.rebuild()

    # ---------------------------------------------------------------- actions

    def action_open_site(self) -> None:
        site_id = self.highlighted_site_id()
        if site_id is None:
            self.notify("No site matches the filter; press Escape to clear it")
            return
        from inspectkit.tui.screens.site import SiteScreen

        self.app.push_screen(SiteScreen(site_id))

    def action_cycle_sort(self) -> None:
        self.sort_by = SORTS[(SORTS.index(self.sort_by) + 1) % len(SORTS)]
        self.descending = False
        self.rebuild()

    def action_reverse_sort(self) -> None:
        self.descending = not self.descending
        self.rebuild()

    def action_clear_filter(self) -> None:
        self.filter_input.value = ""
        self.table.focus()

    def action_new_site(self) -> None:
        from inspectkit.tui.dialogs.editors import site_dialog

        def saved(site: object) -> None:
            if site is not None:
                self.app.store.save(site)
                self.notify(f"Site {site.name} added")  # type: ignore[attr-defined]
                self.reload()

        self.app.push_screen(site_dialog(), saved)
