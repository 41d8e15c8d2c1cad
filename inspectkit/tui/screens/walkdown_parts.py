"""What the walkdown screen offers the mixins it is made of.

`WalkdownScreen` is one Textual screen assembled from mixins, one concern each
(moves, saving, finishing, the keys that ask first, earthing). Their methods take
`self: WalkdownParts`, so each says in one place which of the screen's names the
others may lean on; a name missing here is private to the module that uses it.
Mixins rather than helper objects: Textual finds actions (`action_step`) and
handlers (`on_unmount`) on the screen itself, and the tests drive the screen's
own methods.
"""

from __future__ import annotations

from typing import Any, Protocol

from textual.widget import Widget

from inspectkit.earthing_values import Traverse
from inspectkit.engine.walking import Stop
from inspectkit.model import Inspection, Method, Quantity
from inspectkit.store import Store
from inspectkit.tui.widgets.held_paint import HeldPaint
from inspectkit.tui.widgets.stop_list import StopList
from inspectkit.tui.widgets.stop_pane import StopPane, StopView
from inspectkit.tui.widgets.walk_bar import WalkBar
from inspectkit.walkdown.continuing import SavedEntries
from inspectkit.walkdown.judging import ReadingOutcome, SiteContext


class WalkdownParts(Protocol):
    """The walkdown screen as its mixins see it (`tui/screens/walkdown.py` has the state)."""

    app: Any
    inspection_id: str
    stops: list[Stop]
    index: int
    saved: SavedEntries
    drafts: dict[tuple[str, str], str]
    choices: dict[tuple[str, Quantity], tuple[Method, bool]]
    context: SiteContext
    bar: WalkBar
    _by_id: dict[str, Stop]
    _done: int | None
    _finished: bool
    _framing: HeldPaint

    @property
    def store(self) -> Store: ...
    @property
    def stop(self) -> Stop: ...
    @property
    def pane(self) -> StopPane: ...
    @property
    def stop_list(self) -> StopList: ...
    @property
    def inspection(self) -> Inspection: ...
    @property
    def focused(self) -> Widget | None: ...
    @property
    def is_attached(self) -> bool: ...
    def notify(self, message: str, *, severity: str = ...) -> None: ...
    def dismiss(self) -> Any: ...
    def set_focus(self, widget: Widget | None, scroll_visible: bool = ...) -> None: ...
    def call_after_refresh(self, callback: Any, *args: Any) -> bool: ...
    def keep_unsaved(self) -> None: ...
    def _complete(self, stop: Stop) -> bool: ...
    def _refresh_mark(self) -> None: ...
    async def show_stop(self, index: int, *, focus_entry: bool = ...) -> None: ...
    async def _settle(self) -> None: ...
    def move_now(self, index: int, *, focus_entry: bool = ...) -> None: ...
    def _frame_later(self) -> None: ...
    def _frame(self) -> None: ...
    def _view(self, stop: Stop) -> StopView: ...
    def _show_where(self, *, count: bool = ...) -> None: ...
    def _photo_saved(self, here: str, count: int) -> None: ...
    def _save_reading(
        self, component_id: str, quantity: Quantity, text: str, method: Method, doubtful: bool,
        traverse: Traverse | None = None,
    ) -> ReadingOutcome: ...  # fmt: skip
    def _save_traverse(self, quantity: Quantity, traverse: Traverse | None) -> None: ...
