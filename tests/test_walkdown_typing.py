# ruff: noqa: F811 - the walk_db fixture is imported, then named as an argument
"""Every key typed in the walkdown lands on the component it was typed for, at any speed.

The keys for a whole demo site (every value, each followed by Enter, the grade, then
Page Down) are queued at once, with no pause between a move and the keys after it,
as a fast typist on a slow laptop would send them. Then the database must hold
exactly what was typed for each component, and nothing on any other.
"""

from __future__ import annotations

import asyncio
import time
from collections.abc import Iterator
from datetime import date
from pathlib import Path

import pytest
from textual import events

from inspectkit.demo.generate import build_demo
from inspectkit.engine.walking import Stop
from inspectkit.model import Finding, Grade, Quantity, Reading
from inspectkit.store import Store
from inspectkit.store.queries import find_site
from inspectkit.tui.screens.walkdown import WalkdownScreen
from inspectkit.tui.widgets.stop_pane import StopPane
from inspectkit.units import parse
from inspectkit.walkdown.judging import judge_reading, site_context
from inspectkit.walkdown.visit import start_inspection, walk_for
from tests.test_tui_walkdown import WalkHarness, screen_of, walk_db, walking  # noqa: F401

ANCHOR = date(2026, 6, 1)
#: A mid-sized demo site with every kind of component (the largest is timed in bench/).
SITE = "Aldermere Water Treatment Works"


def typed_value(n: int, quantity: Quantity) -> str:
    """A different value for every entry, in the forms inspectors type; some fail."""
    if quantity is Quantity.STRIKE_COUNT:
        return str(20 + n)
    if quantity is Quantity.SOIL_RESISTIVITY:
        return f"{40 + n} Ω·m"
    if quantity in (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED):
        # Every third one fails the 10 Ω of the demo profiles; commas as some meters show.
        return f"{12 + n}.50" if n % 3 == 0 else f"{n % 9 + 1},{n % 10}"
    return f"{60 + n} mΩ" if n % 2 else f"0.{10 + n % 80}"


def keys_for(stops: list[Stop]) -> Iterator[tuple[str, Stop, Quantity | None, str]]:
    """The keys of the whole walk, each with the stop and entry it is typed for."""
    n = 0
    for index, stop in enumerate(stops):
        for quantity in stop.quantities:
            text = typed_value(n, quantity)
            n += 1
            for char in text:
                yield char, stop, quantity, text
            yield "enter", stop, quantity, text
        yield "enter", stop, None, "sound"  # the grade: the first button, sound
        if index < len(stops) - 1:
            yield "pagedown", stop, None, ""


def key_event(key: str) -> events.Key:
    if len(key) == 1:
        name = {".": "full_stop", ",": "comma", " ": "space"}.get(key, key)
        return events.Key(name if not key.isalnum() else key, key)
    return events.Key(key, "\r" if key == "enter" else None)


@pytest.fixture
def demo_walk(tmp_path: Path) -> tuple[Path, str, str]:
    path = build_demo(tmp_path / "demo.sqlite", anchor=ANCHOR)
    with Store.open(path) as store:
        site = find_site(store, SITE)
        assert site is not None
        visit = start_inspection(store, site.id, "complete", None, ANCHOR)
    return path, visit.id, site.id


def slow_show(monkeypatch: pytest.MonkeyPatch) -> None:
    """The pane update made slow, as on a loaded 2-core laptop: 30 ms of blocked loop."""
    show = StopPane.show

    def slowed(self: StopPane, view: object) -> None:
        time.sleep(0.03)
        show(self, view)  # type: ignore[arg-type]

    monkeypatch.setattr(StopPane, "show", slowed)


def slow_settle(monkeypatch: pytest.MonkeyPatch) -> None:
    """A move that yields to the loop for 30 ms before it changes the pane."""
    settle = WalkdownScreen._settle

    async def slowed(self: WalkdownScreen) -> None:
        await asyncio.sleep(0.03)
        await settle(self)

    monkeypatch.setattr(WalkdownScreen, "_settle", slowed)


@pytest.mark.parametrize("slowed", [None, slow_show, slow_settle],
                         ids=["as-is", "slow-pane-update", "slow-move"])  # fmt: skip
async def test_keys_typed_straight_after_each_move_land_on_their_component(
    demo_walk: tuple[Path, str, str], monkeypatch: pytest.MonkeyPatch, slowed: object
) -> None:
    path, visit_id, site_id = demo_walk
    if callable(slowed):
        slowed(monkeypatch)
    app = WalkHarness(path, visit_id, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        screen = screen_of(app)
        stops = screen.stops
        script = list(keys_for(stops))
        for key, *_ in script:  # all at once: nothing waits for the screen
            app.post_message(key_event(key))
        expected = {(s.component.id, q): t for _, s, q, t in script if q is not None}
        for _ in range(600):
            await pilot.pause(0.1)
            stored = app.store.select(Reading, "inspection_id = ?", [visit_id])
            graded = app.store.select(Finding, "inspection_id = ?", [visit_id])
            if len(stored) >= len(expected) and len(graded) >= len(stops):
                break
        assert screen.stop.component.id == stops[-1].component.id

    with Store.open(path) as store:
        readings = store.select(Reading, "inspection_id = ?", [visit_id])
        got = {(r.component_id, r.quantity): r for r in readings}
        assert set(got) == set(expected), "a value is missing or landed on another component"
        for (component_id, quantity), text in expected.items():
            reading = got[(component_id, quantity)]
            assert reading.value == pytest.approx(parse(text, quantity).value), text
        findings = store.select(Finding, "inspection_id = ?", [visit_id])
        assert sorted(f.component_id or "" for f in findings) == sorted(
            s.component.id for s in stops
        )
        assert {f.grade for f in findings} == {Grade.SOUND}
        # The verdicts the screen showed are those of what is stored: the failing
        # values typed fail, judged afresh from the database.
        inspection = next(v for v in site_context(store, site_id).visits if v.id == visit_id)
        context = site_context(store, site_id)
        failing = [t for (_, q), t in expected.items()
                   if q is Quantity.EARTH_ISOLATED and t.endswith(".50")]  # fmt: skip
        assert failing, "the walk must type failing values"
        for reading in readings:
            verdict = judge_reading(store, inspection, reading, context).verdict
            if expected[(reading.component_id, reading.quantity)] in failing:
                assert verdict.startswith("FAIL"), verdict
        assert walk_for(store, visit_id) == stops


async def test_keys_typed_straight_after_a_jump_to_a_tag_land_there(
    walk_db: tuple[Path, str],
) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        await screen.show_stop(2)  # RC-01, its continuity field in focus
        for key in ["ctrl+g", *"tj-03", "enter", *"4.2", "enter"]:
            app.post_message(key_event(key))  # at once: nothing waits for the prompt
        for _ in range(50):
            await pilot.pause(0.1)
            if app.store.select(Reading, "inspection_id = ?", [visit_id]):
                break
        [reading] = app.store.select(Reading, "inspection_id = ?", [visit_id])
        assert screen.stop.component.tag == "TJ-03"
        assert reading.component_id == screen.stop.component.id
        assert reading.value == pytest.approx(4.2)
