"""Earthing on screen: the site's Earthing tab and the calculators, driven through the pilot."""

# ruff: noqa: F811 - the demo fixtures are imported, then named as arguments

from __future__ import annotations

from pathlib import Path

from earthing_factories import ANCHOR, demo, demo_template  # noqa: F401
from textual.app import App
from textual.widgets import Input, Static

from inspectkit.earthing_values import Traverse, make_traverse
from inspectkit.model import Site, SoilSurvey
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.survey_entry import SurveyDialog
from inspectkit.tui.dialogs.traverse_entry import TraverseDialog
from inspectkit.tui.screens.calculator import CalculatorScreen
from inspectkit.tui.screens.site import SiteScreen
from inspectkit.tui.widgets.earthing_panel import EarthingPanel
from inspectkit.tui.widgets.traverse_view import traverse_line


def _site_id(path: Path, start: str) -> str:
    with Store.open(path) as store:
        return store.select(Site, "name LIKE ?", [f"{start}%"])[0].id


async def _site(pilot, path: Path, start: str) -> SiteScreen:  # type: ignore[no-untyped-def]
    await pilot.app.workers.wait_for_complete()
    screen = SiteScreen(_site_id(path, start))
    await pilot.app.push_screen(screen)
    await pilot.pause()
    return screen


def _text(widget: Static) -> str:
    return str(widget.render())


async def test_the_site_screen_shows_surveys_lengths_and_traverses(demo: Path) -> None:
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(160, 48)) as pilot:
        screen = await _site(pilot, demo, "Aldermere")
        shown = _text(screen.query_one(EarthingPanel))
    assert "Design ρ: 41 Ω·m" in shown
    assert "layered: ρ goes from 14 Ω·m at 1 m to 41 Ω·m at 16 m" in shown
    assert "E-04 type A, vertical length 2 m, needs 2.5 m: SHORT" in shown
    assert "E-02 traverse" in shown and "at 61.8 %, plateau" in shown


async def test_a_site_without_earthing_records_says_how_to_add_them(demo: Path) -> None:
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await _site(pilot, demo, "Pellow")
        shown = _text(screen.query_one(EarthingPanel))
    assert "No soil survey, electrode size or traverse recorded yet" in shown


async def test_calculators_open_from_the_site_filled_from_the_component(demo: Path) -> None:
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await _site(pilot, demo, "Aldermere")
        e04 = next(c for c in screen.records.components if c.tag == "E-04")
        tree = screen.tree
        for branch in tree.root.children:
            for leaf in branch.children:
                if leaf.data == e04.id:
                    tree.move_cursor(leaf)
        await pilot.press("c")
        await pilot.pause()
        calc = pilot.app.screen
        assert isinstance(calc, CalculatorScreen)
        assert calc.shown == "traverse"
        assert calc.query_one("#rod--length", Input).value == "2 m"
        assert calc.query_one("#rod--diameter", Input).value == "16 mm"
        # The design ρ at the spacing nearest the 2 m rod: 16.5 Ω·m (demo survey).
        assert calc.query_one("#rod--resistivity", Input).value == "16.5 Ω·m"
        assert calc.query_one("#l1--level", Input).value == "II"
        calc.work("rod")
        await pilot.pause()
        # Dwight (IEEE Std 142): 16.5/(2π·2)·(ln(8·2/0.016) − 1) = 7.76 Ω.
        assert "R = 7.76 Ω" in _text(calc.query_one("#rod--answer", Static))
        await pilot.press("escape")
        assert isinstance(pilot.app.screen, SiteScreen)


async def test_a_refused_input_is_named_on_screen(demo: Path) -> None:
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.app.workers.wait_for_complete()
        calc = CalculatorScreen({"l1": {"level": "II", "resistivity": "4000"}}, first="l1")
        await pilot.app.push_screen(calc)
        await pilot.pause()
        calc.query_one("#l1--resistivity", Input).focus()
        await pilot.press("enter")
        await pilot.pause()
        answer = _text(calc.query_one("#l1--answer", Static))
        assert answer.startswith("REFUSED Soil ρ:")
        assert "ends at 3000 Ω·m" in answer
        assert calc.query_one("#l1--resistivity", Input).has_class("-refused")
        assert pilot.app.focused is calc.query_one("#l1--resistivity", Input)


class TraverseHarness(App[None]):
    """Only the traverse dialog, and what it returned."""

    def __init__(self) -> None:
        super().__init__()
        self.returned: list[object] = []

    def on_mount(self) -> None:
        self.push_screen(TraverseDialog("E-01", 0.05), self.returned.append)


async def test_the_traverse_dialog_judges_as_typed_and_returns_the_traverse() -> None:
    app = TraverseHarness()
    async with app.run_test(size=(80, 24)) as pilot:
        dialog = app.screen
        dialog.query_one("#traverse-c", Input).value = "40 m"
        dialog.query_one("#traverse-points", Input).value = "52%=3.8; 60%=3.9; 64%=4.1"
        await pilot.pause()
        preview = _text(dialog.query_one("#traverse-preview", Static))
        # None near 72 %: the plateau cannot be checked (common practice), said in words.
        assert "NO PLATEAU: no reading near 72 %" in preview
        dialog.query_one("#traverse-points", Input).value = "52%=3.8; 60%=3.9"
        await pilot.pause()
        assert "not yet: traverse: holds 2 reading(s)" in _text(
            dialog.query_one("#traverse-preview", Static)
        )
        await pilot.press("ctrl+s")  # refused: the dialog stays
        assert app.screen is dialog
        dialog.query_one("#traverse-points", Input).value = "52%=3.8; 60%=3.9; 64%=4.1; 72%=4.0"
        await pilot.pause()
        # IEEE Std 81's 61.8 % position, linear between 60 % and 64 %: 3.99 Ω.
        assert "3.99 Ω at 61.8 %, PLATEAU" in _text(dialog.query_one("#traverse-preview", Static))
        await pilot.press("ctrl+s")
        await pilot.pause()
    (traverse,) = app.returned
    assert isinstance(traverse, Traverse) and traverse.current_probe_m == 40.0


async def test_the_traverse_dialog_names_what_is_wrong() -> None:
    app = TraverseHarness()
    async with app.run_test(size=(80, 24)) as pilot:
        dialog = app.screen
        dialog.query_one("#traverse-c", Input).value = "40 kg"
        dialog.query_one("#traverse-points", Input).value = "52%=3.8; 61.8%=3.9; 72%=4.0"
        await pilot.pause()
        assert "current probe distance" in _text(dialog.query_one("#traverse-preview", Static))
        await pilot.press("escape")
        await pilot.pause()
    assert app.returned == [None]


def test_the_traverse_line_says_no_plateau_in_words() -> None:
    traverse = make_traverse(20.0, [(10.4, 3.0), (12.36, 3.9), (14.4, 5.2)])
    line = traverse_line(traverse, 0.05).plain
    assert "NO PLATEAU" in line and "at least 134 m" in line


async def test_a_soil_survey_is_recorded_from_the_site_screen(demo: Path) -> None:
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(100, 34)) as pilot:
        screen = await _site(pilot, demo, "Pellow")
        await pilot.press("s")
        await pilot.pause()
        dialog = pilot.app.screen
        assert isinstance(dialog, SurveyDialog)
        dialog.query_one("#survey-points", Input).value = "1 m=3.1; 2 m=1.5; 1=1.4"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert pilot.app.screen is dialog, "a refused survey keeps the dialog open"
        assert "REFUSED Spacing a=reading R" in _text(dialog.query_one("#survey-error", Static))
        with Store.open(demo) as store:
            assert len(store.select(SoilSurvey)) == 2, "the demo's two surveys, nothing more"
        dialog.query_one("#survey-points", Input).value = "1 m=3.1; 2 m=1.5; 4 m=0.8"
        dialog.query_one("#survey-direction", Input).value = "N–S"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert pilot.app.screen is screen
        # IEEE Std 81, ρ = 2π·a·R: the highest is 2π × 4 × 0.8 = 20.1 Ω·m.
        assert "Design ρ: 20.1 Ω·m (highest of the survey" in _text(screen.query_one(EarthingPanel))
    with Store.open(demo) as store:
        assert len(store.select(SoilSurvey)) == 3
