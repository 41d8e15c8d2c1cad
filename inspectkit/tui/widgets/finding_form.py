"""How a component was found: a grade, and for anything not sound, what and what to do."""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Label, RadioButton, RadioSet, Static

from inspectkit.model import Finding, Grade
from inspectkit.tui.widgets.saving_field import SAVED, SavingField
from inspectkit.walkdown import WalkdownError

#: Grade words as the inspector reads them, in the order of the buttons.
GRADE_WORDS: dict[Grade, str] = {
    Grade.SOUND: "sound",
    Grade.NEEDS_ATTENTION: "needs attention",
    Grade.DEFECT: "defect",
}
GRADE_STYLES: dict[Grade, str] = {
    Grade.SOUND: "bold green",
    Grade.NEEDS_ATTENTION: "bold yellow",
    Grade.DEFECT: "bold white on red",
}
_GRADES = list(GRADE_WORDS)

#: The finding's words: key, label and an example; all but the first only when not sound.
_FIELDS = (
    ("text", "what was found / note", "e.g. clamp loose, conductor bent at the gutter"),
    ("remedial", "remedial action", "e.g. re-tighten clamp, replace fixing"),
    ("due", "due by (YYYY-MM-DD)", "e.g. 2026-07-31"),
)

#: Which of the form's fields a refusal from the record's model is about.
_FIELD_OF = {"text": "text", "remedial_action": "remedial", "due_by": "due"}

#: Saves grade, text, remedial action and due date together; raises WalkdownError.
FindingSaver = Callable[[Grade, str, str, str], Finding]


class FindingForm(Vertical):
    """The grade buttons and the finding's words, saved as one finding whenever one is left.

    Attributes:
        finding: The finding as last saved, or None before the component is graded.
    """

    DEFAULT_CSS = """
    FindingForm { height: auto; }
    FindingForm RadioSet { layout: horizontal; height: auto; width: 100%; }
    FindingForm > RadioSet > RadioButton { width: auto; margin-right: 2; }
    FindingForm > #grade-status { height: auto; margin-bottom: 1; }
    FindingForm > #grade-status.-error { color: $error; text-style: bold; }
    FindingForm.-sound > .only-not-sound { display: none; }
    """

    def __init__(self, save: FindingSaver, finding: Finding | None) -> None:
        super().__init__(id="finding")
        self._save_finding = save
        self.finding = finding

    def compose(self) -> ComposeResult:
        chosen = self.finding.grade if self.finding else None
        yield Label("grade")
        with RadioSet(id="grade"):
            for grade, word in GRADE_WORDS.items():
                yield RadioButton(word, value=grade is chosen, id=f"grade-{grade.value}")
        yield Static(self._grade_text(), id="grade-status")
        finding = self.finding
        saved = {
            "text": finding.text if finding else "",
            "remedial": finding.remedial_action if finding else "",
            "due": finding.due_by.isoformat() if finding and finding.due_by else "",
        }
        for key, label, example in _FIELDS:
            field = SavingField(
                label,
                lambda t, key=key: self._save(key, t),
                value=saved[key],
                placeholder=example,
                id=f"finding-{key}",
            )
            yield field.set_class(key != "text", "only-not-sound")

    def on_mount(self) -> None:
        self.set_class(self.chosen in (None, Grade.SOUND), "-sound")

    @property
    def chosen(self) -> Grade | None:
        """The grade whose button is on, saved or not."""
        index = self.query_one(RadioSet).pressed_index
        return _GRADES[index] if index >= 0 else None

    def _grade_text(self) -> Text:
        if self.finding is None:
            return Text("not graded yet", style="dim")
        grade = self.finding.grade
        text = Text(f" {GRADE_WORDS[grade].upper()} ", style=GRADE_STYLES[grade])
        text.append("  ")
        return text.append_text(SAVED)

    def _field(self, key: str) -> SavingField:
        return self.query_one(f"#finding-{key}", SavingField)

    def _save(self, changed: str, text: str) -> Text:
        """Save the finding with `text` in the field `changed`; the status for that field."""
        grade = self.chosen
        if grade is None:
            raise WalkdownError("grade", "pick a grade first: sound, needs attention or defect")
        values = {key: self._field(key).value for key, _, _ in _FIELDS}
        values[changed] = text
        try:
            self.finding = self._save_finding(
                grade, values["text"], values["remedial"], values["due"]
            )
        except WalkdownError as exc:
            at_fault = _FIELD_OF.get(exc.field)
            if at_fault is None or at_fault == changed or changed == "grade":
                raise
            self._field(at_fault).show_error(str(exc))
            raise WalkdownError(
                changed, "kept as typed until the field marked ✗ is fixed"
            ) from None
        self._show_grade()
        self._all_saved(but=changed)
        return SAVED

    def _all_saved(self, but: str) -> None:
        """The other fields went into the finding just saved: say so where they waited."""
        for key, _, _ in _FIELDS:
            field = self._field(key)
            if key != but and (field.dirty or field.has_class("-error")):
                field.saved_value = field.value
                field.show_status(SAVED)

    def _show_grade(self) -> None:
        status = self.query_one("#grade-status", Static)
        status.remove_class("-error")
        status.update(self._grade_text())

    def on_radio_set_changed(self, event: RadioSet.Changed) -> None:
        event.stop()
        grade = _GRADES[event.index]
        self.set_class(grade is Grade.SOUND, "-sound")
        if self.finding is not None and self.finding.grade is grade:
            return
        status = self.query_one("#grade-status", Static)
        try:
            self._save("grade", "")
        except WalkdownError as exc:
            status.add_class("-error")
            status.update(
                Text(f"✗ {GRADE_WORDS[grade]} not saved: {exc}\n  type what was found below")
            )
            return
