"""The visit's details the report prints: weather, what was not inspected, who came, alterations."""

from __future__ import annotations

from collections.abc import Callable

from inspectkit.model import Inspection
from inspectkit.tui.dialogs.record_form import Field, RecordDialog
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.visit import DETAIL_LABELS

#: What to type in each detail, shown as the placeholder and after a refusal.
_HINTS = {
    "weather": "a few words, e.g. dry, overcast, 12 °C",
    "not_inspected": "what and why, e.g. north roof: no safe access",
    "accompanied_by": "name and role, e.g. site manager",
    "changes_since_last": "changes to the structure since the last visit",
    "notes": "anything else about the visit",
}

#: Saves the details as typed (blank clears one) and returns the inspection as saved.
SaveDetails = Callable[..., Inspection]


class VisitDetailsDialog(RecordDialog[Inspection]):
    """The five details prefilled; Save hands them to `save` and closes only once it accepts.

    Unlike the other record forms this one saves itself, through the same function
    the command line calls, so its checks are those of the command. A refusal is
    shown under the field it names and the rest stays as typed; Esc saves nothing.
    """

    def __init__(self, inspection: Inspection, save: SaveDetails) -> None:
        """Args:
        inspection: The visit, for the fields' current values.
        save: Called with the five fields by name (`walkdown.visit.set_details` bound to
            the store and the inspection).
        """
        fields = [Field(name, label, _HINTS[name]) for name, label in DETAIL_LABELS.items()]
        title = f"Visit details, {inspection.date.isoformat()}"
        super().__init__(title, Inspection, fields, inspection.model_dump())
        self.save = save

    def action_save(self) -> None:
        try:
            saved = self.save(**self.values())
        except WalkdownError as exc:
            text = str(exc)
            if exc.field not in DETAIL_LABELS:
                text = f"record: {text}"  # about the visit as a whole: under the form
            elif not text.startswith(f"{exc.field}: "):
                text = f"{exc.field}: {text}"
            self._show_errors(text)
            return
        self.dismiss(saved)
