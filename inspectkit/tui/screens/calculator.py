"""The earthing calculators on one screen, filled in from the component being inspected."""

from __future__ import annotations

from datetime import date

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Header, Input, Label, Static, TabbedContent, TabPane

from inspectkit.calculators import CALCULATORS, FIELDS, CalcInputError, prefill, work_out
from inspectkit.model import Component, ComponentKind, SiteRecords

#: Tab titles, short enough for an 80-column screen.
TITLES = {"rod": "Rod", "wenner": "Wenner", "traverse": "Traverse", "parallel": "Parallel",
          "l1": "l1", "separation": "Separation"}  # fmt: skip


def calculator_for(
    records: SiteRecords, component: Component | None, today: date
) -> CalculatorScreen:
    """The calculators filled in from a site and the component in hand (an electrode's
    size, the site's ρ and level); an electrode opens on the traverse, others on l1."""
    about = f"Filled in from {component.tag} at {records.site.name}" if component else (
        f"Filled in from {records.site.name}"
    )
    electrode = component is not None and component.kind is ComponentKind.EARTH_ELECTRODE
    return CalculatorScreen(
        prefill(records, component, today), about, "traverse" if electrode else "l1"
    )


class CalculatorScreen(Screen[None]):
    """Rod resistance, Wenner ρ, probe placement, parallel electrodes, l1 and separation.

    The same functions as `inspectkit calc` work the answers out; Enter in any
    input works out its tab. Nothing is saved: a calculator only answers.
    """

    CSS_PATH = "calculator.tcss"

    BINDINGS = [
        Binding(
            "escape", "app.pop_screen", "Back", id="calc.back", tooltip="Back to where you were"
        ),
        Binding(
            "ctrl+w", "work_out", "Work out", id="calc.work_out",
            tooltip="Work out the calculator shown, from its inputs",
        ),
    ]

    def __init__(
        self, inputs: dict[str, dict[str, str]] | None = None, about: str = "", first: str = "rod"
    ) -> None:
        """Args:
        inputs: Text to start each calculator's inputs with, by calculator and field.
        about: What the inputs were filled from (`E-04 at Aldermere …`).
        first: The calculator shown first.
        """
        super().__init__()
        self.inputs = inputs or {}
        self.about = about
        self.first = first if first in CALCULATORS else "rod"

    def compose(self) -> ComposeResult:
        yield Header()
        yield Static(self.about or "Earthing calculators", id="calc-about", classes="hint")
        with TabbedContent(initial=f"calc-{self.first}", id="calc-tabs"):
            for name in CALCULATORS:
                with TabPane(TITLES[name], id=f"calc-{name}"), VerticalScroll():
                    for field, label, example in FIELDS[name]:
                        with Horizontal(classes="calc-row"):
                            yield Label(label, classes="calc-label")
                            yield Input(
                                self.inputs.get(name, {}).get(field, ""),
                                placeholder=f"e.g. {example}",
                                id=f"{name}--{field}",
                            )
                    yield Static("Enter works it out.", id=f"{name}--answer", classes="calc-answer")
        yield Footer()

    @property
    def shown(self) -> str:
        """The calculator on the tab shown."""
        return self.query_one(TabbedContent).active.removeprefix("calc-")

    def values(self, name: str) -> dict[str, str]:
        """The calculator's inputs as typed."""
        return {
            field: self.query_one(f"#{name}--{field}", Input).value for field, _, _ in FIELDS[name]
        }

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.work(str(event.input.id).split("--")[0])

    def action_work_out(self) -> None:
        self.work(self.shown)

    def work(self, name: str) -> None:
        """Work calculator `name` out and show the answer, or which input is wrong and why."""
        answer_box = self.query_one(f"#{name}--answer", Static)
        for field, _, _ in FIELDS[name]:
            self.query_one(f"#{name}--{field}", Input).remove_class("-refused")
        try:
            answer = work_out(name, self.values(name))
        except CalcInputError as exc:
            box = self.query_one(f"#{name}--{exc.field}", Input)
            box.add_class("-refused")
            box.focus()
            label = next(lab for f, lab, _ in FIELDS[name] if f == exc.field)
            answer_box.update(Text(f"REFUSED {label}: {exc}", style="bold"))
            return
        text = Text()
        for line in answer.lines:
            text.append(f"{line}\n")
        text.append(f"source: {answer.source}", style="dim")
        answer_box.update(text)
