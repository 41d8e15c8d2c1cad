"""Moving along the walkdown: the fields of the next component at once, their frame just after.

A move changes what the pane's fields show in one synchronous step
(`StopPane.show`), so no key can arrive while no field is in focus; what frames
the fields and takes no key follows once the keys sent with the move have reached
the field (`_frame_later`), with repaints held until then. DEVELOPERS.md ("The
walkdown screen and its keys") says why; `bench/bench_walkdown_move.py` times it.
"""

from __future__ import annotations

import asyncio

from textual.binding import Binding

from inspectkit.engine.walking import Stop
from inspectkit.tui.screens.walkdown_parts import WalkdownParts
from inspectkit.tui.widgets.stop_pane import StopView
from inspectkit.tui.widgets.tag_prompt import TagPrompt

#: How long a move waits at most for keys sent to the field being left (seconds).
_SETTLE_TIMEOUT = 0.5

MOVE_BINDINGS = [
    Binding(
        "pagedown",
        "step(1)",
        "Next",
        id="walkdown.next",
        priority=True,
        tooltip="Save this component and go to the next one on the walk",
    ),
    Binding(
        "pageup",
        "step(-1)",
        "Prev",
        id="walkdown.previous",
        priority=True,
        tooltip="Save this component and go back to the one before",
    ),
    Binding(
        "ctrl+g",
        "go_to_tag",
        "Tag",
        id="walkdown.tag",
        priority=True,
        tooltip="Jump to a component by the tag painted on it",
    ),
    Binding(
        "ctrl+l",
        "focus_list",
        "List",
        id="walkdown.list",
        tooltip="Move to the list of components",
    ),
]


class WalkdownMoves:
    """The walkdown's moves and the repaints they hold, mixed into the screen."""

    async def action_step(self: WalkdownParts, delta: int) -> None:
        """Go to the next (or previous) component on the walk."""
        if self.stops:
            await self.show_stop(self.index + delta)

    def action_focus_list(self: WalkdownParts) -> None:
        self.stop_list.focus()

    def action_go_to_tag(self: WalkdownParts) -> None:
        """Ask for a tag; the walk moves as Enter arrives, before the prompt closes."""
        tags = [s.component.tag for s in self.stops]
        self.app.push_screen(TagPrompt(tags, lambda tag: self.move_now(tags.index(tag))))

    async def show_stop(self: WalkdownParts, index: int, *, focus_entry: bool = True) -> None:
        """Leave the current component (saving what can be saved) and show another.

        Keys already handed to the field being left are let in first, so they are
        saved on the component they were typed for; keys arriving meanwhile wait in
        the app's queue and reach the next component's first field.
        """
        await self._settle()
        self.move_now(index, focus_entry=focus_entry)

    async def _settle(self: WalkdownParts) -> None:
        """Wait until the widget in focus has handled every key already sent to it."""
        loop = asyncio.get_running_loop()
        for _ in range(8):
            widget = self.focused
            if widget is None or not getattr(widget, "keys_waiting", 0):
                return
            handled = loop.create_future()
            widget.call_later(handled.set_result, None)
            try:
                await asyncio.wait_for(handled, _SETTLE_TIMEOUT)
            except TimeoutError:
                return
            if self.focused is widget:
                return

    def move_now(self: WalkdownParts, index: int, *, focus_entry: bool = True) -> None:
        """Leave the current component and show another, in one step with nothing awaited."""
        if not self.stops:
            return
        if self.pane.component_id:
            self.keep_unsaved()
        self.index = max(0, min(index, len(self.stops) - 1))
        self.pane.show(self._view(self.stop))
        if focus_entry:
            self.set_focus(self.pane.first_field(), scroll_visible=False)
        self._frame_later()

    def _frame_later(self: WalkdownParts) -> None:
        """Show what frames the fields (heading, list highlight, position) once the keys
        already sent have reached the field in focus, and paint nothing until then.

        Those keys wait in the app's queue: a callback queued there behind them, which
        queues another behind them at the field they went to, runs after the field took
        them. Repaints are held (`App.batch_update`) so the screen never shows one
        component's fields under another's heading; `on_unmount` lets go if it must.
        """
        if self._framing.is_pending:
            return
        self._framing.hold(self.app.batch_update())

        def behind_the_keys() -> None:
            # Only a field of this screen: a dialog's may close before it runs the callback.
            focused = self.app.focused
            if focused is None or focused.screen is not self or not focused.call_later(self._frame):
                self._frame()

        if not self.app.call_later(behind_the_keys):
            self._frame()

    def _frame(self: WalkdownParts) -> None:
        try:
            if self.is_attached and self.stops:
                self.stop_list.highlighted = self.index
                self.pane.show_around(self._view(self.stop))
                self._show_where()
        finally:
            self._framing.release()

    def on_unmount(self: WalkdownParts) -> None:
        self._framing.release()

    def _view(self: WalkdownParts, stop: Stop) -> StopView:
        cid = stop.component.id
        parent = self._by_id.get(stop.component.parent_id or "")
        return StopView(
            stop=stop,
            parent_tag=parent.component.tag if parent else None,
            outcomes={q: o for q in stop.quantities
                      if (o := self.saved.readings.get((cid, q))) is not None},
            choices={q: c for q in stop.quantities if (c := self.choices.get((cid, q)))},
            finding=self.saved.findings.get(cid),
            photos=self.saved.photos.get(cid, 0),
            typed={field: text for (c, field), text in self.drafts.items() if c == cid},
        )  # fmt: skip

    def _show_where(self: WalkdownParts, *, count: bool = False) -> None:
        """The position on the walk, and how many components are done (counted after a save)."""
        if count or self._done is None:
            self._done = sum(1 for s in self.stops if self._complete(s))
        self.bar.show_where(self.index, len(self.stops), self._done)
