"""Fields that take their keys in the order they were typed, whatever the machine's load.

Textual hands each key to the widget in focus through that widget's own queue, and
runs most key bindings (Enter, Tab, Backspace, the arrows) later, when the key comes
back up to the app. On a busy laptop several keys wait in those queues at once, so a
value typed straight after Enter, Tab or a move to the next component could land in
the field that was just left, or after a key typed later. The widgets here act on
every key they use the moment they take it from their queue, and a key that reached
a widget after the focus moved on is passed to the field now in focus, in order.
"""

from __future__ import annotations

from collections.abc import Callable

from textual import events
from textual.binding import Binding
from textual.message import Message
from textual.widget import Widget
from textual.widgets import Checkbox, Input, RadioButton, RadioSet, Select

#: What an Input does at once with a key it would otherwise leave to a binding.
_INPUT_ACTIONS: dict[str, str] = {
    "backspace": "delete_left",
    "delete": "delete_right",
    "left": "cursor_left",
    "right": "cursor_right",
    "home": "home",
    "end": "end",
    "ctrl+u": "delete_left_all",
    "ctrl+w": "delete_left_word",
}


def pass_on(widget: Widget, event: events.Key) -> bool:
    """Send a key that came here after the focus moved to the widget now in focus.

    Returns:
        True when the key was passed on (the caller does nothing more with it).
    """
    try:
        focused = widget.app.focused  # the active screen's: a dialog on top takes the keys
    except Exception:  # noqa: BLE001 - a widget being removed has no app
        return False
    if focused is None or widget in focused.ancestors_with_self:
        return False  # in focus, or a key coming up from a part of it (a menu)
    event.stop()
    event.prevent_default()
    focused.post_message(events.Key(event.key, event.character))
    return True


class HeldKeys:
    """Mixed into a field: counts the keys waiting for it, and acts on its own keys at once.

    Attributes:
        keys_waiting: Keys sent to the widget and not yet handled; a move to another
            component waits for these first (`WalkdownScreen.show_stop`).
    """

    keys_waiting = 0

    def post_message(self, message: Message) -> bool:
        if isinstance(message, events.Key):
            self.keys_waiting += 1
        return super().post_message(message)  # type: ignore[misc, no-any-return]

    async def _on_key(self, event: events.Key) -> None:
        self.keys_waiting = max(0, self.keys_waiting - 1)
        if pass_on(self, event):  # type: ignore[arg-type]
            return
        action = self.key_action(event.key)
        if action is not None:
            event.stop()
            event.prevent_default()
            action()
            return
        await super()._on_key(event)  # type: ignore[misc]

    def key_action(self, key: str) -> Callable[[], object] | None:
        """What the widget does with `key` at once, or None to leave it to Textual."""
        return None


class FieldInput(HeldKeys, Input):
    """An Input that moves on (Enter, Tab) and edits (Backspace, arrows) as each key arrives.

    Attributes:
        on_enter: Called on Enter instead of posting `Submitted` (the field saves
            and moves the focus on at once).
        on_tab: Called on Tab or shift+Tab with +1 or -1 (the field saves, then the
            focus moves).
    """

    def __init__(self, *args: object, **kwargs: object) -> None:
        super().__init__(*args, **kwargs)
        self.on_enter: Callable[[], object] | None = None
        self.on_tab: Callable[[int], object] | None = None

    def key_action(self, key: str) -> Callable[[], object] | None:
        if key == "enter":
            return self.on_enter
        if key in ("tab", "shift+tab") and (on_tab := self.on_tab) is not None:
            return lambda: on_tab(1 if key == "tab" else -1)
        name = _INPUT_ACTIONS.get(key)
        return getattr(self, f"action_{name}") if name else None


class GradeButtons(HeldKeys, RadioSet):
    """Grade buttons whose arrows, Enter and clicks act at once; `on_pick` saves the grade.

    Attributes:
        on_pick: Called with the index of the button switched on by a key or a click.
    """

    def __init__(self, *buttons: RadioButton, id: str | None = None) -> None:
        super().__init__(*buttons, id=id)
        self.on_pick: Callable[[int], object] | None = None

    def key_action(self, key: str) -> Callable[[], object] | None:
        if self._selected is None and key in ("down", "right", "up", "left", "enter", "space"):
            self._selected = max(self.pressed_index, 0)
        if key in ("down", "right"):
            return self.action_next_button
        if key in ("up", "left"):
            return self.action_previous_button
        if key in ("enter", "space"):
            return lambda: self.pick(self._selected or 0)
        return None

    def pick(self, index: int) -> None:
        """The inspector chose the button at `index`: show it on and save it."""
        self.show_pressed(index)
        self._selected = index
        if self.on_pick is not None:
            self.on_pick(index)

    def show_pressed(self, index: int | None) -> None:
        """Switch on one button (None: none) without a message, nothing highlighted yet."""
        buttons = list(self.query(RadioButton))
        with self.prevent(RadioButton.Changed, RadioSet.Changed):
            for n, button in enumerate(buttons):
                if button.value != (n == index):
                    button.value = n == index
        self._pressed_button = buttons[index] if index is not None else None
        self._selected = None


class GradeButton(RadioButton):
    """One grade: its dot shows only when it is on; a click picks it through its set."""

    @property
    def BUTTON_INNER(self) -> str:  # type: ignore[override]  # noqa: N802 - Textual's name
        return "●" if self.value else " "

    async def _on_click(self, _: events.Click) -> None:
        buttons = self.parent
        if isinstance(buttons, GradeButtons):
            buttons.pick(list(buttons.query(RadioButton)).index(self))


class ShownCheckbox(HeldKeys, Checkbox):
    """A checkbox that shows a cross only when ticked; `on_toggle` hears each change at once.

    Attributes:
        on_toggle: Called with the new value when a key or a click changes it.
    """

    def __init__(self, *args: object, **kwargs: object) -> None:
        super().__init__(*args, **kwargs)
        self.on_toggle: Callable[[bool], object] | None = None

    @property
    def BUTTON_INNER(self) -> str:  # type: ignore[override]  # noqa: N802 - Textual's name
        return "X" if self.value else " "

    def key_action(self, key: str) -> Callable[[], object] | None:
        return self.toggle if key in ("enter", "space") else None

    def toggle(self) -> ShownCheckbox:
        super().toggle()
        if self.on_toggle is not None:
            self.on_toggle(self.value)
        return self


class PickList(HeldKeys, Select[str], inherit_bindings=False):
    """A pick list that opens on Enter or a click only, so typing or Space never opens it."""

    BINDINGS = [Binding("enter", "show_overlay", "Show menu", show=False)]
