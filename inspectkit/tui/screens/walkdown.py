"""The walkdown: component by component in walking order, every field saved as it is left.

The screen holds the visit's state, builds the bar, the list and the pane, and
keeps what is typed and not saved; its mixins hold the rest, one concern each:
moves (`walkdown_moves.py`), the pane's savers (`walkdown_saving.py`), finishing
(`walkdown_finish.py`), the keys that ask in a dialog (`walkdown_dialogs.py`) and
earthing (`tui/widgets/walkdown_earthing.py`).
"""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import Header, OptionList, Static
from textual.widgets.option_list import Option

from inspectkit.engine.walking import Stop
from inspectkit.model import Inspection, Method, Quantity
from inspectkit.printable import printable
from inspectkit.store import Store
from inspectkit.tui.screens.walkdown_dialogs import DIALOG_BINDINGS, WalkdownDialogs
from inspectkit.tui.screens.walkdown_finish import FINISH_BINDINGS, WalkdownFinish
from inspectkit.tui.screens.walkdown_moves import MOVE_BINDINGS, WalkdownMoves
from inspectkit.tui.screens.walkdown_saving import WalkdownSaving
from inspectkit.tui.widgets.held_paint import HeldPaint
from inspectkit.tui.widgets.steady_footer import SteadyFooter
from inspectkit.tui.widgets.stop_list import StopList, complete, prompt
from inspectkit.tui.widgets.stop_pane import StopPane
from inspectkit.tui.widgets.walk_bar import WalkBar
from inspectkit.tui.widgets.walkdown_earthing import EARTHING_BINDINGS, WalkdownEarthing
from inspectkit.walkdown.continuing import (
    SavedEntries,
    drafts_for,
    drafts_told,
    keep_drafts,
    saved_entries,
)
from inspectkit.walkdown.judging import site_context
from inspectkit.walkdown.visit import walk_for
from inspectkit.wording import counted

#: How often what is typed and not saved is kept in the database (seconds).
_DRAFT_EVERY = 0.5


class WalkdownScreen(
    WalkdownMoves, WalkdownSaving, WalkdownFinish, WalkdownDialogs, WalkdownEarthing, Screen[None]
):
    """One visit, walked component by component; nothing typed here waits for a Save key.

    A field saves when it is left (Tab, Enter, a click elsewhere, or moving to
    another component) and only then says "saved". A field that cannot be saved
    says what it expects and keeps what was typed; moving on keeps it too, unsaved.
    """

    CSS_PATH = "walkdown.tcss"
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (120, "-wide")]

    BINDINGS = [
        *MOVE_BINDINGS,
        *FINISH_BINDINGS,
        *DIALOG_BINDINGS,
        Binding(
            "escape",
            "leave",
            "Back",
            id="walkdown.back",
            tooltip="Save and leave the walkdown; it can be continued later",
        ),
        *EARTHING_BINDINGS,
    ]

    def __init__(self, inspection_id: str) -> None:
        super().__init__()
        self.inspection_id = inspection_id
        self.stops: list[Stop] = []
        self.index = 0
        self.saved = SavedEntries({}, {}, {})
        #: Text that could not be saved, by (component id, field id), kept as typed.
        self.drafts: dict[tuple[str, str], str] = {}
        #: Method and doubt picked before a value was typed, by (component id, quantity).
        self.choices: dict[tuple[str, Quantity], tuple[Method, bool]] = {}
        self._by_id: dict[str, Stop] = {}
        self._done: int | None = None
        self._place: str | None = None
        self._finished = False
        #: What `keep_typing` last kept: the unsaved texts and the component in view.
        self._kept: tuple[dict[tuple[str, str], str], str] = ({}, "")
        #: Repaints held from a move until what frames its fields is shown (`_frame_later`).
        self._framing = HeldPaint()

    # ------------------------------------------------------------ accessors

    @property
    def store(self) -> Store:
        return self.app.store  # type: ignore[attr-defined, no-any-return]

    @property
    def stop(self) -> Stop:
        return self.stops[self.index]

    @property
    def stop_list(self) -> StopList:
        return self._stop_list

    @property
    def pane(self) -> StopPane:
        return self._pane

    @property
    def inspection(self) -> Inspection:
        inspection = self.store.get(Inspection, self.inspection_id)
        assert inspection is not None
        return inspection

    # ------------------------------------------------------------- building

    def compose(self) -> ComposeResult:
        inspection = self.inspection
        self.context = site_context(self.store, inspection.site_id)
        site = self.context.site
        self.stops = walk_for(self.store, self.inspection_id)
        self._by_id = {s.component.id: s for s in self.stops}
        self.saved = saved_entries(self.store, self.inspection_id)
        kept = drafts_for(self.store, self.inspection_id)
        self.drafts = {key: text for key, text in kept.texts.items() if key[0] in self._by_id}
        self._place = kept.place
        self.title = printable(site.name)
        self.sub_title = f"{inspection.kind.value.replace('_', '-')} inspection, {inspection.date}"
        yield Header()
        self.bar = WalkBar(self.store, self.inspection_id, inspection.soil,
                           getattr(self.app, "today", None))  # fmt: skip
        yield self.bar
        with Horizontal(id="body"):
            self._stop_list = StopList(*self._options(), id="stops")
            self._stop_list.on_go = self.move_now
            yield self._stop_list
            self._pane = StopPane(self._save_reading, self._save_finding, self._save_photo,
                                  id="detail")  # fmt: skip
            if self.stops:
                yield self._pane
            else:
                yield Static("This site has no components in service to inspect.", id="detail")
        yield SteadyFooter()

    def on_screen_resume(self) -> None:
        """Back from another screen: components, instruments or the choice may have changed."""
        self.context = site_context(self.store, self.context.site.id)
        self.bar.refresh_instruments()

    def on_mount(self) -> None:
        if not self.stops:
            return
        where = next((i for i, s in enumerate(self.stops) if s.component.id == self._place), 0)
        self.move_now(where)
        self._kept = self._unsaved()
        if self.drafts:
            tags = {cid: stop.component.tag for cid, stop in self._by_id.items()}
            self.notify(
                drafts_told(self.drafts, tags) + ". Save them with Enter, or clear the field.",
                title="Typed before the walkdown closed",
                severity="warning",
                timeout=30,
            )
        self.set_interval(_DRAFT_EVERY, self.keep_typing)

    # ---------------------------------------------------- what is not saved

    def _unsaved(self) -> tuple[dict[tuple[str, str], str], str]:
        """Everything typed and not saved (on every component), and the component in view."""
        pane = self.pane
        cid = pane.component_id
        texts = {key: text for key, text in self.drafts.items() if key[0] != cid}
        for field in pane.fields():
            if field.dirty and field.value.strip():
                texts[(cid, field.draft_key)] = field.value
        return texts, cid

    def keep_typing(self) -> None:
        """Keep in the database what is typed and not saved, if it changed since last time."""
        if not self.stops or not self.pane.component_id or self._finished:
            return
        unsaved = self._unsaved()
        if unsaved != self._kept:
            keep_drafts(self.store, self.inspection_id, *unsaved)
            self._kept = unsaved

    def keep_unsaved(self) -> None:
        """Save every changed field of the stop in view; keep refused text as typed."""
        pane = self.pane
        cid = pane.component_id
        refused = 0
        for field in pane.fields():
            key = (cid, field.draft_key)
            if field.dirty and not field.commit():
                self.drafts[key] = field.value
                refused += 1
            else:
                self.drafts.pop(key, None)
        for entry in pane.entries:
            key = (cid, entry.quantity)
            if (choices := entry.pending_choices) is not None:
                self.choices[key] = choices
            else:
                self.choices.pop(key, None)
        if refused:
            tag = self._by_id[cid].component.tag
            self.notify(
                f"{tag}: {counted(refused, 'field')} not saved, kept as typed", severity="warning"
            )

    # ---------------------------------------------------------- the stop list

    def _options(self) -> list[Option]:
        return [Option(self._prompt(i), id=f"stop-{i}") for i in range(len(self.stops))]

    def _prompt(self, index: int) -> Text:
        return prompt(self.stops[index], self.saved, wide=self.has_class("-wide"))

    def _complete(self, stop: Stop) -> bool:
        return complete(stop, self.saved)

    def _refresh_mark(self) -> None:
        self.stop_list.replace_option_prompt_at_index(self.index, self._prompt(self.index))
        self._show_where(count=True)

    def on_resize(self) -> None:
        if self.stops:
            for index in range(len(self.stops)):
                self.stop_list.replace_option_prompt_at_index(index, self._prompt(index))

    @on(OptionList.OptionSelected, "#stops")
    def _picked(self, event: OptionList.OptionSelected) -> None:
        if event.option_index != self.index:
            self.move_now(event.option_index)

    # ------------------------------------------------------------- leaving

    def action_leave(self) -> None:
        if self.stops:
            self.keep_unsaved()
            self.keep_typing()
        self.dismiss()
