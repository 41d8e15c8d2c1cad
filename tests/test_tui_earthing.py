"""Earthing on screen: the site's Earthing tab and the calculators, driven through the pilot."""

# ruff: noqa: F811 - the demo fixtures are imported, then named as arguments

from __future__ import annotations

from pathlib import Path

from earthing_factories import ANCHOR, demo, demo_template  # noqa: F401
from textual.widgets import Input, Static

from inspectkit.model import Site
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.screens.calculator import CalculatorScreen
from inspectkit.tui.screens.site import SiteScreen
from inspectkit.tui.widgets.earthing_panel import EarthingPanel


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
