"""Earthing in the walkdown: a traverse typed as an electrode's earth reading, the calculators."""

# ruff: noqa: F811 - the demo fixtures are imported, then named as arguments

from __future__ import annotations

from pathlib import Path

from earthing_factories import ANCHOR, demo, demo_template  # noqa: F401
from textual.widgets import Input, Static

from inspectkit.earthing_values import read_traverse
from inspectkit.model import Quantity, Reading, Site
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.traverse_entry import TraverseDialog
from inspectkit.tui.screens.calculator import CalculatorScreen
from inspectkit.tui.screens.walkdown import WalkdownScreen
from inspectkit.tui.widgets.traverse_view import TraverseView
from inspectkit.walkdown.visit import start_inspection

SITE = "Aldermere"


def _visit(path: Path) -> str:
    with Store.open(path) as store:
        site = store.select(Site, "name LIKE ?", [f"{SITE}%"])[0]
        return start_inspection(store, site.id, "complete", None, ANCHOR).id


async def _walk_to(pilot, visit_id: str, tag: str) -> WalkdownScreen:  # type: ignore[no-untyped-def]
    await pilot.app.workers.wait_for_complete()
    screen = WalkdownScreen(visit_id)
    await pilot.app.push_screen(screen)
    await pilot.pause()
    await screen.show_stop(next(i for i, s in enumerate(screen.stops) if s.component.tag == tag))
    await pilot.pause()
    return screen


async def test_a_traverse_becomes_the_electrodes_reading_and_shows_as_a_curve(demo: Path) -> None:
    visit_id = _visit(demo)
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(120, 40)) as pilot:
        screen = await _walk_to(pilot, visit_id, "E-02")
        await pilot.press("ctrl+r")
        await pilot.pause()
        dialog = pilot.app.screen
        assert isinstance(dialog, TraverseDialog)
        dialog.query_one("#traverse-c", Input).value = "20 m"
        dialog.query_one("#traverse-points", Input).value = "52%=3.0; 61.8%=3.9; 72%=5.2"
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.app.workers.wait_for_complete()
        await pilot.pause()
        assert pilot.app.screen is screen
        view = screen.query_one(TraverseView)
        shown = str(view.render())
        # 33 % spread at 20 m (IEEE Std 81's hemisphere: spread ∝ 1/D) → at least 134 m.
        entry = screen.pane.entry(Quantity.EARTH_ISOLATED)
        assert entry.input.value == "3.9 Ω"
        assert entry.outcome is not None and entry.outcome.verdict.startswith("INCOMPLETE")
        # The entry says the engine's sentence; the view draws the curve and its figures.
        assert "at least 134 m" in " ".join(str(w.render()) for w in entry.query(Static))
        assert "3.9 Ω at 61.8 %, C at 20 m" in shown
    with Store.open(demo) as store:
        saved = store.select(Reading, "inspection_id = ? AND quantity = ?",
                             [visit_id, Quantity.EARTH_ISOLATED.value])  # fmt: skip
    assert [r.value for r in saved] == [3.9]
    assert read_traverse(saved[0].traverse).current_probe_m == 20.0


async def test_the_calculators_open_from_the_walkdown_with_the_electrode(demo: Path) -> None:
    visit_id = _visit(demo)
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await _walk_to(pilot, visit_id, "E-04")
        await pilot.press("ctrl+o")
        await pilot.pause()
        calc = pilot.app.screen
        assert isinstance(calc, CalculatorScreen)
        assert calc.about.startswith("Filled in from E-04")
        assert calc.query_one("#rod--length", Input).value == "2 m"
        # C at least five times the rod's 2 m (common practice).
        assert calc.query_one("#traverse--current_probe", Input).value == "10 m"


async def test_a_traverse_on_a_part_without_earth_readings_is_refused(demo: Path) -> None:
    visit_id = _visit(demo)
    app = make_app(demo, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _walk_to(pilot, visit_id, "DC-01")
        await pilot.press("ctrl+r")
        await pilot.pause()
        assert pilot.app.screen is screen
