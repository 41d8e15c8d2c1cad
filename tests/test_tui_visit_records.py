"""The walkdown and site screens: instruments by kind, not inspected, joints, inspector, discard."""

from __future__ import annotations

from pathlib import Path

import pytest
from textual.widgets import Input, Select, Static

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.model import (
    Component,
    Inspection,
    Inspector,
    Instrument,
    NotInspected,
    NotInspectedReason,
    Quantity,
    Reading,
)
from inspectkit.store import Store
from inspectkit.store.preferences import INSPECTOR_SETTING
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.choice import ChoiceDialog
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.text_prompt import TextPrompt
from inspectkit.tui.screens.site import SiteScreen
from inspectkit.tui.screens.walkdown import WalkdownScreen
from inspectkit.walkdown.completion import finish_inspection
from inspectkit.walkdown.readings import record_reading
from inspectkit.walkdown.visit import start_inspection
from tests.test_tui_walkdown import walking
from tests.walkdown_factories import TODAY, build_walk_site, on_the_day


@pytest.fixture
def walk_db(tmp_path: Path) -> tuple[Path, str]:
    """The small invented site with instruments of two kinds and an open complete visit."""
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        store.save_all(
            [
                Instrument(description="Earth tester", serial="ET-7001", kind="earth_tester"),
                Instrument(
                    description="Low-resistance ohmmeter", serial="LO-3002", kind="low_ohmmeter"
                ),
            ]
        )
        visit = start_inspection(store, site.site.id, "complete", None, TODAY)
    return path, visit.id


async def _answer(pilot, text: str) -> None:  # type: ignore[no-untyped-def]
    """Type an answer into the text prompt and press Enter."""
    pilot.app.screen.query_one("#answer", Input).value = text
    await pilot.press("enter")
    await pilot.pause()


async def _choose(pilot, key: str) -> None:  # type: ignore[no-untyped-def]
    """Pick the item with that id in the choice dialog shown, with the arrow keys."""
    dialog = pilot.app.screen
    assert isinstance(dialog, ChoiceDialog), dialog
    steps = [k for k, _ in dialog.items].index(key)
    await pilot.press(*(["down"] * steps), "enter")
    await pilot.pause()


def _stop_index(screen: WalkdownScreen, tag: str) -> int:
    return next(i for i, s in enumerate(screen.stops) if s.component.tag == tag)


async def test_each_reading_takes_the_chosen_instrument_of_its_kind(walk_db) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        store = app.store
        serials = {i.serial: i.id for i in store.select(Instrument)}
        picker = screen.query_one("#instrument", Select)
        labels = dict((value, label) for label, value in screen.bar._instrument_options())
        assert labels[serials["ET-7001"]].startswith("earth tester: ")
        picker.value = serials["ET-7001"]
        await pilot.pause()
        picker.value = serials["LO-3002"]
        await pilot.pause()
        await screen.show_stop(_stop_index(screen, "DC-01"))
        entry = screen.pane.entry(Quantity.CONTINUITY)
        entry.input.focus()
        entry.input.value = "0.09"
        await pilot.press("enter")
        await screen.show_stop(_stop_index(screen, "ER-01"))
        entry = screen.pane.entry(Quantity.EARTH_ISOLATED)
        entry.input.focus()
        entry.input.value = "4.2"
        await pilot.press("enter")
        await pilot.pause()
    with Store.open(walk_db[0]) as store:
        taken = {r.quantity: r.instrument_id for r in store.select(Reading, "inspection_id = ?",
                                                                   [visit_id])}  # fmt: skip
    assert taken == {
        Quantity.CONTINUITY: serials["LO-3002"],  # the ohmmeter, not the one picked last
        Quantity.EARTH_ISOLATED: serials["ET-7001"],
    }


async def test_a_component_is_marked_not_inspected_with_a_reason(walk_db) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        await screen.show_stop(_stop_index(screen, "AT-02"))
        await pilot.press("ctrl+n")
        await pilot.pause()
        await _choose(pilot, NotInspectedReason.UNSAFE.value)
        assert isinstance(app.screen, TextPrompt)
        await _answer(pilot, "ridge iced over")
        assert isinstance(app.screen, WalkdownScreen)
        [mark] = app.store.select(NotInspected, "inspection_id = ?", [visit_id])
        assert mark.reason is NotInspectedReason.UNSAFE and mark.text == "ridge iced over"
        prompt = str(screen.stop_list.get_option_at_index(screen.index).prompt)
        assert "SKIP" in prompt  # the word beside the colour
        # "other" needs words: Enter on nothing keeps the prompt open.
        await pilot.press("ctrl+n")
        await pilot.pause()
        await _choose(pilot, NotInspectedReason.OTHER.value)
        await _answer(pilot, "")
        assert isinstance(app.screen, TextPrompt)
        await pilot.press("escape")
        await pilot.pause()
        # Taken back: the component is to grade again.
        await pilot.press("ctrl+n")
        await pilot.pause()
        await _choose(pilot, "clear")
        assert app.store.select(NotInspected, "inspection_id = ?", [visit_id]) == []


async def test_finishing_asks_about_the_joints_and_keeps_why_not(walk_db) -> None:
    _, visit_id = walk_db
    with Store.open(walk_db[0]) as store:
        [er] = store.select(Component, "tag = ?", ["ER-02"])
        record_reading(store, visit_id, er.id, "earth_isolated", "4.4", taken_at=on_the_day())
    async with walking(walk_db) as (app, pilot, screen):
        await pilot.press("ctrl+f")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        await pilot.press("y")
        await pilot.pause()
        asked = str(app.screen.query_one("#prompt", Static).render())
        assert "Test joints opened for isolated readings: TJ-02" in asked
        assert "No reading across TJ-02 since it was opened" in asked
        await _choose(pilot, "no")
        await _answer(pilot, "TJ-02 bolt seized; left for the fitter")
        assert not isinstance(app.screen, WalkdownScreen)
        done = app.store.get(Inspection, visit_id)
        assert done.finished and done.joints_reconnected is False
        assert done.reconnection_note == "TJ-02 bolt seized; left for the fitter"


# ------------------------------------------------------------------ the site screen


@pytest.fixture
def site_db(tmp_path: Path) -> tuple[Path, str]:
    path = tmp_path / "site.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
    return path, site.site.id


async def _site(app, site_id: str):  # type: ignore[no-untyped-def]
    await app.push_screen(SiteScreen(site_id))


async def test_a_walkdown_started_with_no_inspector_asks_for_one(site_db) -> None:
    path, site_id = site_db
    app = make_app(path, today=TODAY)
    async with app.run_test(size=(80, 24)) as pilot:
        await _site(app, site_id)
        await pilot.pause()
        await pilot.press("w")
        await pilot.pause()
        dialog = app.screen
        assert isinstance(dialog, ChoiceDialog) and "Who is inspecting" in dialog.prompt
        inspector = app.store.select(Inspector)[0]
        await _choose(pilot, inspector.id)
        assert isinstance(app.screen, ChoiceDialog)  # then which inspection it is
        await _choose(pilot, "visual")
        assert isinstance(app.screen, WalkdownScreen)
        visit = app.store.select(Inspection, "date = ?", [TODAY.isoformat()])[0]
        assert visit.inspector_id == inspector.id
        assert app.store.get_setting(INSPECTOR_SETTING) == inspector.id


async def test_the_site_screen_sets_the_draft_s_inspector_and_discards_it(site_db) -> None:
    path, site_id = site_db
    with Store.open(path) as store:
        visit = start_inspection(store, site_id, "visual", None, TODAY)
        other = store.save(Inspector(name="Bram Okoro"))
    app = make_app(path, today=TODAY)
    async with app.run_test(size=(80, 24)) as pilot:
        await _site(app, site_id)
        await pilot.pause()
        await pilot.press("i")
        await pilot.pause()
        await _choose(pilot, other.id)
        assert app.store.get(Inspection, visit.id).inspector_id == other.id
        await pilot.press("D")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        await pilot.press("n")
        await pilot.pause()
        assert app.store.get(Inspection, visit.id) is not None
        await pilot.press("D")
        await pilot.pause()
        await pilot.press("y")
        await pilot.pause()
        assert app.store.get(Inspection, visit.id) is None


async def test_starting_again_on_the_same_day_offers_to_continue(site_db) -> None:
    path, site_id = site_db
    with Store.open(path) as store:
        inspector = store.select(Inspector)[0]
        visit = start_inspection(store, site_id, "visual", inspector.id, TODAY)
        finish_inspection(store, visit.id)
        store.set_setting(INSPECTOR_SETTING, inspector.id)
    app = make_app(path, today=TODAY)
    async with app.run_test(size=(80, 24)) as pilot:
        await _site(app, site_id)
        await pilot.pause()
        await pilot.press("w")
        await pilot.pause()
        await _choose(pilot, "visual")
        assert isinstance(app.screen, ConfirmDialog)
        assert "Continue" in str(app.screen.query_one("#question", Static).render())
        await pilot.press("y")
        await pilot.pause()
        assert isinstance(app.screen, WalkdownScreen)
        assert app.screen.inspection_id == visit.id
        assert not app.store.get(Inspection, visit.id).finished
