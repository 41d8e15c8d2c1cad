"""The plan screen: the round by day, dropping and pinning a site, drafts for the visits."""

from __future__ import annotations

import csv
from datetime import datetime, timedelta
from pathlib import Path

import pytest
from icalendar import Calendar
from test_plan_export import FIRST, fill_round_db
from textual.pilot import Pilot
from textual.widgets import DataTable, Input

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.model import Inspection
from inspectkit.plan.geo import Point
from inspectkit.plan.planner import save_depot
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.screens.plan import PlanScreen


@pytest.fixture
def round_db(db_path: Path) -> Path:
    with Store.open(db_path) as store:
        fill_round_db(store)
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
        save_depot(store, Point(52.0, -1.0))
    return db_path


def _sites(screen: PlanScreen) -> list[str]:
    table = screen.query_one("#round", DataTable)
    return [
        str(table.get_cell(row, "site"))
        for row in table.rows
        if not str(row.value).startswith("day:")
    ]


def _visits(screen: PlanScreen) -> list[str]:
    assert screen.plan is not None
    return [v.candidate.site.name for _, v in screen.plan.visits]


async def _open(pilot: Pilot[None]) -> PlanScreen:
    await pilot.press("f5")
    await pilot.pause()
    screen = pilot.app.screen
    assert isinstance(screen, PlanScreen)
    return screen


async def _press_on(screen: PlanScreen, pilot: Pilot[None], site: str, key: str) -> None:
    """Highlight the site's row, then press the key."""
    table = screen.query_one("#round", DataTable)
    row = next(i for i, r in enumerate(table.rows) if str(table.get_cell(r, "site")) == site)
    table.move_cursor(row=row)
    await pilot.pause()
    await pilot.press(key)
    await pilot.pause()


async def test_the_round_shows_day_by_day_with_the_unplaced_site(round_db: Path) -> None:
    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        assert sorted(_visits(screen)) == [f"Hall {i}" for i in range(5)]
        assert _sites(screen)[-1] == "Hall 5"  # no position: listed apart, at the end
        assert screen.query_one("#depot", Input).value == "52.000000,-1.000000"


async def test_drop_then_keep_a_site(round_db: Path) -> None:
    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        await _press_on(screen, pilot, "Hall 2", "d")
        assert "Hall 2" not in _visits(screen)
        assert screen.plan is not None and [c.site.name for c in screen.plan.dropped] == ["Hall 2"]
        await _press_on(screen, pilot, "Hall 2", "d")
        assert "Hall 2" in _visits(screen)


async def test_pinned_site_goes_on_the_first_day(round_db: Path) -> None:
    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        await _press_on(screen, pilot, "Hall 4", "p")
        assert screen.plan is not None
        first_day = screen.plan.days[0]
        assert first_day.day == FIRST
        assert "Hall 4" in [v.candidate.site.name for v in first_day.visits]


async def test_create_drafts_for_the_planned_visits(round_db: Path) -> None:
    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        await _open(pilot)
        await pilot.press("c")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        await pilot.press("y")
        await pilot.pause()
        drafts = app.store.select(Inspection, "state = 'draft'")
        assert len(drafts) == 5
        assert all(d.date >= FIRST for d in drafts)


async def test_without_a_depot_the_screen_asks_for_one(db_path: Path) -> None:
    with Store.open(db_path) as store:
        fill_round_db(store)
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
    app = make_app(db_path, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        assert screen.plan is None
        depot = screen.query_one("#depot", Input)
        depot.value = "52.0,-1.0"
        depot.focus()
        await pilot.press("enter")
        await pilot.pause()
        assert screen.plan is not None and len(screen.plan.visits) == 5
        assert app.store.get_setting("plan.depot") == "52.000000,-1.000000"


async def test_w_widens_the_window(round_db: Path) -> None:
    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        await pilot.press("w")
        await pilot.pause()
        assert screen.plan is not None and screen.plan.window.days == 60


async def test_without_a_depot_typing_goes_to_the_depot_field(db_path: Path) -> None:
    with Store.open(db_path) as store:
        fill_round_db(store)
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
    app = make_app(db_path, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        assert screen.plan is None
        await pilot.press(*"52,-1", "enter")
        await pilot.pause()
        assert screen.query_one("#depot", Input).value == "52,-1"
        assert screen.plan is not None and _visits(screen)


async def test_move_a_visit_to_the_next_day_and_export_it(round_db: Path) -> None:
    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(100, 30)) as pilot:
        screen = await _open(pilot)
        assert screen.plan is not None
        day, visit = screen.plan.visits[0]
        name = visit.candidate.site.name
        await _press_on(screen, pilot, name, "]")
        assert screen.plan is not None
        moved = {v.candidate.site.name: (d, v) for d, v in screen.plan.visits}
        new_day, new_visit = moved[name]
        # 2 March 2026 is a Monday: the next day it can be made is Tuesday 3 March.
        assert new_day.day == day.day + timedelta(days=1)
        assert new_day.moved
        # The day it joined is timed again: each visit after the drive from the stop before.
        clock = datetime.combine(
            new_day.day, screen.plan.settings.day_start, new_visit.start.tzinfo
        )
        for v in new_day.visits:
            assert abs((v.arrive - clock).total_seconds() / 60 - v.drive_minutes) <= 1
            clock = v.leave
        table = screen.query_one("#round", DataTable)
        assert str(table.get_cell(visit.candidate.site.id, "arrive")) == f"{new_visit.start:%H:%M}"
        await pilot.press("x")
        await pilot.pause()
    stem = round_db.parent / f"round-{FIRST.isoformat()}"
    with stem.with_suffix(".csv").open(encoding="utf-8") as f:
        rows = {r["site"]: r for r in csv.DictReader(f)}
    assert rows[name]["date"] == new_day.day.isoformat()
    assert rows[name]["start"] == f"{new_visit.start:%H:%M}"
    events = Calendar.from_ical(stem.with_suffix(".ics").read_bytes()).walk("VEVENT")
    (event,) = [e for e in events if str(e["SUMMARY"]).startswith(name + ":")]
    assert event.decoded("DTSTART") == new_visit.start


async def test_earlier_day_stops_at_the_window(round_db: Path) -> None:
    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        assert screen.plan is not None
        first_day = screen.plan.days[0]
        name = first_day.visits[0].candidate.site.name
        await _press_on(screen, pilot, name, "[")
        assert screen.moved == {}
        assert first_day.day == FIRST


async def test_h_chooses_the_holiday_calendar_and_replans(round_db: Path) -> None:
    from inspectkit.plan.settings import load_plan_settings, user_settings_path
    from inspectkit.tui.dialogs.choice import ChoiceDialog

    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        await pilot.press("h")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)
        app.screen.dismiss("DE")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)  # now the regions of Germany
        assert "BY" in [key for key, _ in app.screen.items]
        app.screen.dismiss("BY")
        await pilot.pause()
        assert app.screen is screen
        assert screen.plan is not None
        assert (screen.plan.settings.holiday_country, screen.plan.settings.holiday_region) == (
            "DE",
            "BY",
        )
    loaded = load_plan_settings()
    assert (loaded.holiday_country, loaded.holiday_region) == ("DE", "BY")
    assert user_settings_path().is_file()


async def test_the_highlighted_visit_says_why_it_is_in_the_round(round_db: Path) -> None:
    from textual.widgets import Static

    app = make_app(round_db, today=FIRST)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot)
        assert screen.plan is not None
        _, visit = screen.plan.visits[-1]
        table = screen.query_one("#round", DataTable)
        table.move_cursor(row=table.get_row_index(visit.candidate.site.id))
        await pilot.pause()
        why = str(screen.query_one("#why", Static).render())
        assert why.startswith("why: ")
        assert visit.candidate.reasons[0].text[:30] in why.replace("\n", " ")
