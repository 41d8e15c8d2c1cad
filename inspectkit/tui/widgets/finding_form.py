"""How a component was found: a grade, and for anything not sound, what and what to do."""

from __future__ import annotations

from collections.abc import Callable

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Label, Static

from inspectkit.model import Finding, Grade
from inspectkit.tui.widgets.held_keys import GradeButton, GradeButtons
from inspectkit.tui.widgets.saving_field import SAVED, SavingField
from inspectkit.walkdown.errors import WalkdownError

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

#: Saves, for a component, grade, text, remedial action and due date together;
#: raises WalkdownError.
FindingSaver = Callable[[str, Grade, str, str, str], Finding]


class FindingForm(Vertical):
    """The grade buttons and the finding's words, saved as one finding whenever one is left.

    The walkdown `load`s each component's finding into the same form as it moves.

    Attributes:
        component_id: The component the form shows and saves the finding of.
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

    def __init__(self, save: FindingSaver) -> None:
        super().__init__(id="finding")
        self._save_finding = save
        self.component_id = ""
        self.finding: Finding | None = None
        self.chosen: Grade | None = None
        """The grade whose button is on, saved or not."""
        self._grade_shown = self._grade_text()
        self._fields: dict[str, SavingField] = {}

    def compose(self) -> ComposeResult:
        yield Label("grade")
        buttons = GradeButtons(
            *(GradeButton(word, id=f"grade-{grade.value}") for grade, word in GRADE_WORDS.items()),
            id="grade",
        )
        buttons.on_pick = self._picked
        yield buttons
        yield Static(self._grade_text(), id="grade-status")
        for key, label, example in _FIELDS:
            field = SavingField(
                label,
                lambda t, key=key: self._save(key, t),
                placeholder=example,
                id=f"finding-{key}",
            )
            yield field.set_class(key != "text", "only-not-sound")

    def load(self, component_id: str, finding: Finding | None, typed: dict[str, str]) -> None:
        """Show one component's finding (and words typed but not saved) in place of the last."""
        self.component_id = component_id
        self.finding = finding
        self.chosen = finding.grade if finding else None
        buttons = self.query_one(GradeButtons)
        pressed = _GRADES.index(self.chosen) if self.chosen else None
        buttons.show_pressed(pressed)
        self._show_grade()
        saved = {
            "text": finding.text if finding else "",
            "remedial": finding.remedial_action if finding else "",
            "due": finding.due_by.isoformat() if finding and finding.due_by else "",
        }
        for key, _, _ in _FIELDS:
            field = self._field(key)
            field.load(saved[key], typed=typed.get(key))
        self.set_class(self.chosen in (None, Grade.SOUND), "-sound")

    def fields(self) -> list[SavingField]:
        return [self._field(key) for key, _, _ in _FIELDS]

    def _grade_text(self) -> Text:
        if self.finding is None:
            return Text("not graded yet", style="dim")
        grade = self.finding.grade
        text = Text(f" {GRADE_WORDS[grade].upper()} ", style=GRADE_STYLES[grade])
        text.append("  ")
        return text.append_text(SAVED)

    def _field(self, key: str) -> SavingField:
        if key not in self._fields:
            self._fields[key] = self.query_one(f"#finding-{key}", SavingField)
        return self._fields[key]

    def _save(self, changed: str, text: str) -> Text:
        """Save the finding with `text` in the field `changed`; the status for that field."""
        grade = self.chosen
        if grade is None:
            raise WalkdownError("grade", "pick a grade first: sound, needs attention or defect")
        values = {key: self._field(key).value for key, _, _ in _FIELDS}
        values[changed] = text
        try:
            self.finding = self._save_finding(
                self.component_id, grade, values["text"], values["remedial"], values["due"]
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
        shown = self._grade_text()
        if status.has_class("-error") or shown != self._grade_shown:
            status.remove_class("-error")
            status.update(shown)
            self._grade_shown = shown

    def _picked(self, index: int) -> None:
        """A grade was chosen (key or click): save it with the words, as it happens."""
        grade = _GRADES[index]
        self.chosen = grade
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
