"""Finishing a walkdown: what is still missing, then the test joints opened, then done.

Asked in turn: the question listing what is missing (`missing_for_completion`);
if joints were opened for isolated readings, whether every one was reconnected
and re-tested, and if not, why. `finish_inspection` keeps the answer and refuses
what the rules refuse; the screen only asks and says.
"""

from __future__ import annotations

from typing import Any

from rich.text import Text
from textual.binding import Binding

from inspectkit.tui.dialogs.choice import ChoiceDialog
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.text_prompt import TextPrompt
from inspectkit.tui.screens.walkdown_parts import WalkdownParts
from inspectkit.walkdown.completion import (
    Missing,
    finish_inspection,
    joints_not_retested,
    missing_for_completion,
    opened_joints,
)
from inspectkit.walkdown.continuing import forget_drafts
from inspectkit.walkdown.errors import WalkdownError

#: How many ungraded tags the finish question names before "and N more".
_UNGRADED_SHOWN = 20

FINISH_BINDINGS = [
    Binding(
        "ctrl+f",
        "finish",
        "Finish",
        id="walkdown.finish",
        priority=True,
        tooltip="Mark the inspection complete, after listing what is missing",
    ),
]


class WalkdownFinish:
    """The walkdown's finish key, mixed into the screen."""

    def action_finish(self: WalkdownParts) -> None:
        if self.stops:
            self.keep_unsaved()
        missing = missing_for_completion(self.store, self.inspection_id)
        opened = [c.tag for c in opened_joints(self.store, self.inspection_id)]
        untested = joints_not_retested(self.store, self.inspection_id)

        def finish(**answer: Any) -> None:
            try:
                finish_inspection(self.store, self.inspection_id, **answer)
            except WalkdownError as exc:
                self.notify(str(exc), severity="error")
                return
            forget_drafts(self.store, self.inspection_id)
            self._finished = True
            self.notify("Inspection marked complete")
            self.dismiss()

        def why_not(words: str | None) -> None:
            if words:
                finish(not_reconnected=words)

        def joints(answer: str | None) -> None:
            if answer == "yes":
                finish(reconnected=True)
            elif answer == "no":
                self.app.push_screen(
                    TextPrompt("Why were they not all reconnected and re-tested?",
                               "e.g. TJ-03 bolt seized, left for the fitter", required=True),
                    why_not,
                )  # fmt: skip

        def done(confirmed: bool | None) -> None:
            if not confirmed:
                return
            if not opened:
                finish()
                return
            self.app.push_screen(
                ChoiceDialog(
                    f"Test joints opened for isolated readings: {', '.join(opened)}.\n"
                    + (
                        f"No reading across {', '.join(untested)} since it was opened.\n"
                        if untested
                        else ""
                    )
                    + "Was every one reconnected and re-tested?",
                    [("yes", "Yes: all reconnected and re-tested"), ("no", "No: say why")],
                ),
                joints,
            )

        self.app.push_screen(
            ConfirmDialog(_finish_question(missing), yes_label="Mark complete"), done
        )


def _finish_question(missing: list[Missing]) -> Text:
    """The question before marking complete, with what is still missing listed first."""
    if not missing:
        return Text(
            "Every component is graded and every test taken.\nMark the inspection complete?"
        )
    text = Text("Still missing:\n", style="bold")
    for item in missing:
        if item.component is None:
            text.append(f" • {item.what}\n")
    ungraded = [item.component.tag for item in missing if item.component is not None]
    if ungraded:
        shown = ", ".join(ungraded[:_UNGRADED_SHOWN])
        more = len(ungraded) - _UNGRADED_SHOWN
        text.append(f" • not graded yet: {shown}{f' and {more} more' if more > 0 else ''}\n")
    text.append("\nMark the inspection complete anyway?", style="bold")
    return text
