"""Recording a Wenner soil survey from the site screen: spacings, readings, depth, direction."""

from __future__ import annotations

from collections.abc import Callable
from datetime import date

from rich.text import Text
from textual.app import ComposeResult
from textual.widgets import Input, Label, Static

from inspectkit.earthing_jobs import EarthingInputError
from inspectkit.model import SoilSurvey
from inspectkit.tui.dialogs.entry_dialog import EntryDialog, entry_bindings

#: The inputs, as `earthing_jobs.record_survey` names them, with a label and an example.
FIELDS = (
    ("day", "Date", "YYYY-MM-DD"),
    ("points", "Spacing a=reading R", "1 m=25.1; 2 m=11.9; 4 m=5.6"),
    ("depth", "Probe depth b", "0.2 m (blank: shallow)"),
    ("direction", "Direction of the line", "N–S, east lawn"),
    ("chosen_spacing", "Design ρ at spacing", "4 m (blank: nearest each electrode's length)"),
)
#: Saves the survey from the inputs by name; raises EarthingInputError naming one.
SaveSurvey = Callable[..., SoilSurvey]
#: The job's input names where they differ from the dialog's.
_FIELD_OF = {"chosen_spacing_m": "chosen_spacing", "probe_depth_m": "depth", "date": "day"}


class SurveyDialog(EntryDialog[SoilSurvey]):
    """The survey typed in one go; Save hands it to `save` and closes only once it is accepted.

    A refusal names the input and keeps everything as typed; Esc saves nothing.
    """

    DEFAULT_CSS = """
    SurveyDialog Input.-refused { background: $error 40%; }
    """

    BINDINGS = entry_bindings("survey", "the survey")
    NOTE_ID = "survey-error"

    def __init__(self, site_name: str, today: date, save: SaveSurvey) -> None:
        super().__init__(f"[b]Wenner soil survey at {site_name}[/b]")
        self.today = today
        self.save = save

    def inputs(self) -> ComposeResult:
        for name, label, example in FIELDS:
            yield Label(label)
            start = self.today.isoformat() if name == "day" else ""
            yield Input(start, placeholder=f"e.g. {example}", id=f"survey-{name}")

    def on_mount(self) -> None:
        self.query_one("#survey-points", Input).focus()

    def values(self) -> dict[str, str]:
        return {name: self.query_one(f"#survey-{name}", Input).value for name, _, _ in FIELDS}

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.action_save()

    def action_save(self) -> None:
        for name, _, _ in FIELDS:
            self.query_one(f"#survey-{name}", Input).remove_class("-refused")
        values = self.values()
        try:
            day = date.fromisoformat(values.pop("day").strip())
        except ValueError:
            self._refused("day", "give the day of the survey as YYYY-MM-DD")
            return
        try:
            survey = self.save(day=day, **values)
        except EarthingInputError as exc:
            self._refused(_FIELD_OF.get(exc.field, exc.field), str(exc))
            return
        self.dismiss(survey)

    def _refused(self, name: str, message: str) -> None:
        label = next((lab for n, lab, _ in FIELDS if n == name), "Survey")
        if any(n == name for n, _, _ in FIELDS):
            box = self.query_one(f"#survey-{name}", Input)
            box.add_class("-refused")
            box.focus()
        self.query_one("#survey-error", Static).update(Text(f"REFUSED {label}: {message}"))
