"""A form that edits one record and hands it back only once the model accepts it.

Every screen that edits a record (site, component, inspector, instrument) uses this
one dialog with a list of fields, so validation is shown the same way everywhere:
the model's own message under the field it concerns, the rest of the form as typed.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Generic, TypeVar

from pydantic import ValidationError
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Checkbox, Input, Label, Select, Static

from inspectkit.model import Record, explain
from inspectkit.tui.widgets.held_keys import PickList, ShownCheckbox

R = TypeVar("R", bound=Record)


@dataclass(frozen=True)
class Field:
    """One field of a form.

    Attributes:
        name: The model's field name.
        label: What the form calls it.
        hint: What to type, shown as placeholder and after a refusal.
        choices: (label, value) pairs for a pick list; empty for free text.
        optional: A blank entry means "none" rather than an empty text.
        flag: A yes/no field shown as a checkbox.
    """

    name: str
    label: str
    hint: str = ""
    choices: Sequence[tuple[str, str]] = ()
    optional: bool = False
    flag: bool = False


class RecordDialog(ModalScreen[R | None], Generic[R]):
    """Dismisses with the validated record, or None when cancelled; saves nothing itself."""

    DEFAULT_CSS = """
    RecordDialog { align: center middle; }
    RecordDialog > VerticalScroll {
        width: 90; max-width: 100%; height: auto; max-height: 100%;
        border: thick $primary; background: $surface; padding: 0 1;
    }
    RecordDialog #title { text-style: bold; margin-bottom: 1; }
    RecordDialog .row { height: auto; }
    RecordDialog .row Label { width: 18; padding-top: 0; }
    RecordDialog .row Input, RecordDialog .row Select { width: 1fr; }
    RecordDialog .error { color: $error; padding-left: 18; display: none; }
    RecordDialog .error.shown { display: block; }
    RecordDialog #form-error { padding-left: 0; }
    RecordDialog #buttons { height: auto; align-horizontal: right; margin-top: 1; }
    RecordDialog Button { margin-left: 1; }
    """

    BINDINGS = [
        Binding("ctrl+s", "save", "Save", id="form.save", tooltip="Check the form and save it"),
        Binding("escape", "cancel", "Cancel", id="form.cancel", tooltip="Close without saving"),
    ]

    def __init__(self, title: str, model: type[R], fields: Sequence[Field], base: dict[str, Any]):
        """Args:
        title: What is being edited, e.g. "New component".
        model: The record type the form builds.
        fields: The fields shown, in order.
        base: The record's current values (or the fixed ones of a new record).
        """
        super().__init__()
        self.form_title = title
        self.model = model
        self.fields = list(fields)
        self.base = base

    def compose(self) -> ComposeResult:
        with VerticalScroll() as form:
            form.can_focus = False  # Tab walks the fields and buttons, not their frame
            yield Static(self.form_title, id="title")
            for field in self.fields:
                with Horizontal(classes="row"):
                    yield Label(field.label, id=f"label-{field.name}")
                    yield self._editor(field)
                yield Static("", id=f"error-{field.name}", classes="error")
            yield Static("", id="form-error", classes="error")
            with Horizontal(id="buttons"):
                yield Button("Cancel", id="cancel", compact=True)
                yield Button("Save (ctrl+s)", id="save", variant="primary", compact=True)

    def on_mount(self) -> None:
        """Open with the first field ready for typing, so no key goes astray."""
        if self.fields:
            self.set_focus(self.query_one(f"#field-{self.fields[0].name}"))

    def _editor(self, field: Field) -> Input | Select[str] | Checkbox:
        current = self.base.get(field.name)
        widget_id = f"field-{field.name}"
        if field.flag:
            return ShownCheckbox(value=bool(current), id=widget_id, compact=True)
        if field.choices:
            value = _text(current)
            known = {v for _, v in field.choices}
            return PickList(
                list(field.choices),
                value=value if value in known else Select.NULL,
                allow_blank=field.optional or value not in known,
                id=widget_id,
                compact=True,
            )
        return Input(_text(current), placeholder=field.hint, id=widget_id, compact=True)

    def values(self) -> dict[str, Any]:
        """The form as typed, blanks of optional fields as None."""
        out: dict[str, Any] = {}
        for field in self.fields:
            widget = self.query_one(f"#field-{field.name}")
            if isinstance(widget, Checkbox):
                out[field.name] = widget.value
                continue
            value = widget.value
            if value is Select.NULL or (isinstance(value, str) and not value.strip()):
                out[field.name] = None if field.optional else ""
            else:
                out[field.name] = value.strip() if isinstance(value, str) else value
        return out

    def action_save(self) -> None:
        data = {**self.base, **self.values()}
        try:
            record = self.model.model_validate(data)
        except ValidationError as error:
            self._show_errors(explain(error))
            return
        self.dismiss(record)

    def _show_errors(self, text: str) -> None:
        """Each "field: message" line under its field; the rest under the form.

        A pick list left blank gets "choose one" rather than the model's list of
        internal values, since the list on screen already shows the choices.
        """
        by_field: dict[str, list[str]] = {}
        fields = {f.name: f for f in self.fields}
        typed = self.values()
        for line in text.splitlines():
            name, _, message = line.partition(": ")
            name = name.split(".")[0]
            inner, _, rest = message.partition(": ")
            if name == "record" and inner in fields:  # a whole-record check naming its field
                name, message = inner, rest
            field = fields.get(name)
            if field is None:
                name, message = "", line.removeprefix("record: ")
            elif field.choices and typed.get(name) in ("", None):
                message = f"choose a {field.label.lower()} from the list"
            elif field.hint and field.hint not in message:
                message = f"{message} (expected {field.hint})"
            if message not in by_field.get(name, []):
                by_field.setdefault(name, []).append(message)
        for field in [*self.fields, None]:
            key = field.name if field else ""
            label = self.query_one(f"#error-{key}" if key else "#form-error", Static)
            messages = by_field.get(key, [])
            label.update("\n".join(messages))
            label.set_class(bool(messages), "shown")
        first = next((f for f in self.fields if f.name in by_field), None)
        if first is not None:
            self.query_one(f"#field-{first.name}").focus()

    def action_cancel(self) -> None:
        self.dismiss(None)

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        if event.button.id == "save":
            self.action_save()
        else:
            self.action_cancel()


def _text(value: Any) -> str:
    """A stored value as the text a field shows."""
    if value is None:
        return ""
    if hasattr(value, "value"):
        return str(value.value)
    if hasattr(value, "isoformat"):
        return value.isoformat()
    return str(value)
