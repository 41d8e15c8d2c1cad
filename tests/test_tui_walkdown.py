"""Pilot tests of the walkdown screen: a whole walkdown on a small site, and its details."""

from __future__ import annotations

import asyncio
from collections.abc import AsyncIterator
from contextlib import asynccontextmanager
from datetime import date, datetime, timedelta
from pathlib import Path

import pytest
from textual.app import App
from textual.pilot import Pilot
from textual.widgets import Input, OptionList, RadioSet, Select, Static

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.engine.check import check_site
from inspectkit.model import (
    ComponentKind,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    Inspector,
    Instrument,
    Method,
    Photo,
    Quantity,
    Reading,
    Severity,
    SoilCondition,
)
from inspectkit.profiles import load_profile
from inspectkit.store import Store
from inspectkit.store.queries import load_site_records
from inspectkit.tui.app import make_app
from inspectkit.tui.commands import ActionsProvider
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.visit_details import VisitDetailsDialog
from inspectkit.tui.screens.site import SiteScreen
from inspectkit.tui.screens.walkdown import WalkdownScreen
from inspectkit.tui.widgets.reading_entry import ReadingEntry, entry_label
from inspectkit.tui.widgets.saving_field import SavingField
from inspectkit.tui.widgets.tag_prompt import TagPrompt
from inspectkit.walkdown.grades import grade_component
from inspectkit.walkdown.readings import record_reading
from inspectkit.walkdown.visit import set_details, start_inspection, walk_for
from tests.walkdown_factories import TODAY, build_walk_site, on_the_day, write_photo


class WalkHarness(App[None]):
    """The walkdown screen alone on a store, as the site screen would push it.

    It runs on a fixed day (`TODAY` unless told), as `make_app(..., today=...)` does:
    the walk bar judges calibration by it and readings typed are taken on it, so the
    visit walked must be on the same day.
    """

    def __init__(self, path: Path, inspection_id: str, today: date = TODAY) -> None:
        super().__init__()
        self.store = Store.open(path)
        visit = self.store.get(Inspection, inspection_id)
        assert visit is not None and visit.date == today, "walk a visit on the harness's day"
        self.today = today
        self.inspection_id = inspection_id

    def now(self) -> datetime:
        """Readings typed now are taken on the harness's day, as the app's are on its own."""
        return on_the_day(self.today)

    def on_mount(self) -> None:
        self.push_screen(WalkdownScreen(self.inspection_id))


@pytest.fixture
def walk_db(tmp_path: Path) -> tuple[Path, str]:
    """A database with the small invented site and an open complete inspection."""
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        visit = start_inspection(store, site.site.id, "complete", None, TODAY)
    return path, visit.id


@asynccontextmanager
async def walking(
    walk_db: tuple[Path, str],
) -> AsyncIterator[tuple[WalkHarness, Pilot[None], WalkdownScreen]]:
    """The harness running at 80×24 with the walkdown screen shown."""
    app = WalkHarness(*walk_db)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        yield app, pilot, screen_of(app)


def screen_of(app: App[None]) -> WalkdownScreen:
    screen = app.screen
    assert isinstance(screen, WalkdownScreen)
    return screen


async def type_into(pilot: Pilot[None], field: SavingField, text: str, keys: bool = False) -> None:
    """Put text in a field and leave it with Enter: keys one by one only when that is tested."""
    field.input.focus()
    if keys:
        field.input.value = ""
        await pilot.press(*text)
    else:
        field.input.value = text
    await pilot.press("enter")


async def grade(pilot: Pilot[None], screen: WalkdownScreen, which: Grade) -> None:
    """Choose a grade with the arrow keys and Enter, as an inspector would."""
    screen.query_one("#grade", RadioSet).focus()
    steps = {Grade.SOUND: 0, Grade.NEEDS_ATTENTION: 1, Grade.DEFECT: 2}[which]
    await pilot.press(*(["right"] * steps), "enter")


def status_of(field: SavingField) -> str:
    return str(field.query_one(".status", Static).render())


# ------------------------------------------------------------- the whole walk


async def test_a_whole_walkdown_on_a_small_site(tmp_path: Path) -> None:
    """From the site screen to finished on the small site with one down conductor (9 stops):
    each reading saved and judged as typed, the electrode failing, a photo, a defect.

    Every kind of component on a demo site is walked in `test_walkdown_typing.py`.
    """
    db_path = tmp_path / "walk.sqlite"
    with Store.open(db_path) as store:
        site = build_walk_site(store, down_conductors=1).site
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
        hired = store.save(
            Instrument(
                description="Earth tester (hired)",
                serial="HIRE-0042",
                calibration_due=TODAY + timedelta(days=365),
            )
        )
        inspector_id = store.select(Inspector)[0].id
        store.set_setting("inspector_id", inspector_id)

    app = make_app(db_path, today=TODAY)
    photo = write_photo(tmp_path / "card" / "IMG_0100.jpg", app.now())
    async with app.run_test(size=(80, 24)) as pilot:
        # Open the site, press its walkdown key and choose a complete inspection.
        await app.workers.wait_for_complete()
        await app.push_screen(SiteScreen(site.id))
        await app.workers.wait_for_complete()
        await pilot.pause()
        await pilot.press("w")
        await pilot.pause()
        kinds = app.screen.query_one(OptionList)
        kinds.highlighted = next(
            i for i, o in enumerate(kinds.options) if o.id == InspectionKind.COMPLETE.value
        )
        await pilot.press("enter")
        await pilot.pause()
        screen = screen_of(app)
        visit = screen.inspection
        assert visit.kind is InspectionKind.COMPLETE and visit.inspector_id == inspector_id
        assert visit.date == TODAY
        screen.query_one("#instrument", Select).value = hired.id
        screen.query_one("#soil", Select).value = SoilCondition.NORMAL.value
        await pilot.pause()

        shown: dict[str, str] = {}
        for index, stop in enumerate(screen.stops):
            assert screen.stop.component.id == stop.component.id
            tag = stop.component.tag
            for entry in screen.pane.entries:
                if entry.quantity is Quantity.SOIL_RESISTIVITY:
                    continue
                if tag == "ER-01":
                    await type_into(pilot, entry, "25", keys=True)  # the failing electrode
                elif entry.quantity is Quantity.STRIKE_COUNT:
                    await type_into(pilot, entry, "9")
                elif entry.quantity in (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED):
                    await type_into(pilot, entry, "4.2")
                else:
                    await type_into(pilot, entry, "120 mΩ")
                shown[f"{tag} {entry.quantity.value}"] = status_of(entry)
            if tag == "DC-01":
                await grade(pilot, screen, Grade.DEFECT)
                text = screen.query_one("#finding-text", SavingField)
                await type_into(pilot, text, "guard at ground level broken")
                remedy = screen.query_one("#finding-remedial", SavingField)
                await type_into(pilot, remedy, "replace the guard")
                due = screen.query_one("#finding-due", SavingField)
                await type_into(pilot, due, (TODAY + timedelta(days=30)).isoformat())
            else:
                await grade(pilot, screen, Grade.SOUND)
            if tag == "TJ-01":
                await type_into(pilot, screen.query_one("#photo", SavingField), str(photo))
            if index < len(screen.stops) - 1:
                await pilot.press("pagedown")
                await pilot.pause()

        # Words beside the colours, the moment a reading is entered.
        assert "FAIL 25 Ω > 10 Ω" in shown["ER-01 earth_isolated"]
        assert "% on " in shown["ER-01 earth_isolated"]  # against the last visit's 4.0 Ω
        assert "PASS 4.2 Ω ≤ 10 Ω" in shown["TJ-01 earth_combined"]
        assert "PASS 120 mΩ" in shown["DC-01 continuity"]
        assert all("✓ saved" in s for s in shown.values())

        await pilot.press("ctrl+f")
        await pilot.pause()
        question = str(app.screen.query_one("#question", Static).render())
        assert "Still missing" not in question
        await pilot.press("y")
        await pilot.pause()
        # The electrodes were read with their joints open: were they all closed again?
        asked = str(app.screen.query_one("#prompt", Static).render())
        assert "Test joints opened for isolated readings: TJ-01" in asked
        await pilot.press("enter")  # the first answer: yes, all reconnected and re-tested
        await pilot.pause()
        assert not isinstance(app.screen, WalkdownScreen)
        assert app.store.get_setting("instrument_id") == hired.id

    with Store.open(db_path) as store:
        done = store.get(Inspection, visit.id)
        assert done is not None and done.finished and done.soil is SoilCondition.NORMAL
        assert done.joints_reconnected is True
        records = load_site_records(store, site.id)
        parts = {c.id: c for c in records.components}
        readings = [r for r in records.readings if r.inspection_id == visit.id]
        joints = [c for c in parts.values() if c.kind is ComponentKind.TEST_JOINT]
        electrodes = [c for c in parts.values() if c.kind is ComponentKind.EARTH_ELECTRODE]
        by_part = {(parts[r.component_id].tag, r.quantity): r for r in readings}
        assert joints and electrodes
        for joint in joints:
            assert (joint.tag, Quantity.EARTH_COMBINED) in by_part
        for electrode in electrodes:
            assert by_part[(electrode.tag, Quantity.EARTH_ISOLATED)].instrument_id == hired.id
        assert by_part[("ER-01", Quantity.EARTH_ISOLATED)].value == pytest.approx(25.0)
        assert by_part[("ER-01", Quantity.EARTH_ISOLATED)].soil is SoilCondition.NORMAL
        assert by_part[("DC-01", Quantity.CONTINUITY)].soil is None  # not an earth reading
        assert all(r.taken_at.date() == TODAY for r in readings)
        findings = [f for f in records.findings if f.inspection_id == visit.id]
        assert len(findings) == len([c for c in parts.values() if c.retired_on is None])
        defect = next(f for f in findings if parts[f.component_id or ""].tag == "DC-01")
        assert defect.grade is Grade.DEFECT and defect.remedial_action == "replace the guard"
        photos = [p for p in records.photos if p.inspection_id == visit.id]
        assert [parts[p.component_id or ""].tag for p in photos] == ["TJ-01"]
        assert store.verify_audit() == []

        check = check_site(records, load_profile(records.site.profile), TODAY)
        about = {(r.rule, r.component_tag, r.severity) for r in check.results}
        assert ("limit", "ER-01", Severity.FAIL) in about
        assert ("carried-defect", "DC-01", Severity.FAIL) in about  # graded a defect today
        assert not any(r.rule == "limit" and r.component_tag == "TJ-01" for r in check.results)
        assert not any(
            r.rule == "incomplete" and TODAY.isoformat() in r.message for r in check.results
        )


# --------------------------------------------------------------------- details


async def test_bad_input_says_what_is_expected_and_keeps_the_text(
    walk_db: tuple[Path, str],
) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        await screen.show_stop(
            next(i for i, s in enumerate(screen.stops) if s.component.tag == "ER-01")
        )
        entry = screen.pane.entry(Quantity.EARTH_ISOLATED)
        await type_into(pilot, entry, "3,9 k", keys=False)
        await type_into(pilot, entry, "four", keys=True)
        assert "✗ not saved" in status_of(entry)
        assert "earth resistance" in status_of(entry)
        assert entry.input.value == "four"
        assert app.store.select(Reading, "inspection_id = ?", [visit_id])[0].value == 3900.0
        entry.input.value = "3.9"
        entry.input.focus()
        await pilot.press("tab")  # leaving the field saves it
        await pilot.pause()
        assert "PASS 3.9 Ω ≤ 10 Ω" in status_of(entry)
        assert [r.value for r in app.store.select(Reading, "inspection_id = ?", [visit_id])] == [
            3.9
        ]


async def test_unsaved_text_waits_and_moving_on_saves_it(walk_db: tuple[Path, str]) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        await screen.show_stop(2)  # RC-01, continuity
        entry = screen.pane.entries[0]
        entry.input.focus()
        await pilot.press(*"0.1")
        assert "not saved yet" in status_of(entry)
        assert app.store.select(Reading, "inspection_id = ?", [visit_id]) == []
        await pilot.press("pagedown")
        await pilot.pause()
        assert screen.stop.component.tag == "DC-01"
        saved = app.store.select(Reading, "inspection_id = ?", [visit_id])
        assert [r.value for r in saved] == [pytest.approx(0.1)]


async def test_a_defect_needs_words_before_it_is_saved(walk_db: tuple[Path, str]) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        await grade(pilot, screen, Grade.DEFECT)
        assert "not saved" in str(screen.query_one("#grade-status", Static).render())
        assert app.store.select(Finding, "inspection_id = ?", [visit_id]) == []
        await type_into(pilot, screen.query_one("#finding-text", SavingField), "tip bent")
        findings = app.store.select(Finding, "inspection_id = ?", [visit_id])
        assert [(f.grade, f.text) for f in findings] == [(Grade.DEFECT, "tip bent")]
        assert "DEFECT" in str(screen.query_one("#grade-status", Static).render())


async def test_jump_to_a_tag(walk_db: tuple[Path, str]) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        await pilot.press("ctrl+g")
        await pilot.pause()
        assert isinstance(app.screen, TagPrompt)
        await pilot.press(*"xx", "enter")
        await pilot.pause()
        assert "no component tagged XX" in str(app.screen.query_one("#tag-error").render())
        app.screen.query_one("#tag").value = ""
        await pilot.press(*"tj-03", "enter")
        await pilot.pause()
        assert app.screen is screen
        assert screen.stop.component.tag == "TJ-03"


async def test_a_continued_draft_shows_what_was_saved(walk_db: tuple[Path, str]) -> None:
    path, visit_id = walk_db
    with Store.open(path) as store:
        rc = walk_for(store, visit_id)[2].component
        record_reading(store, visit_id, rc.id, "continuity", "0.15", taken_at=on_the_day())
        grade_component(store, visit_id, rc.id, "sound")
    async with walking(walk_db) as (app, pilot, screen):
        assert "done" in str(screen.stop_list.get_option_at_index(2).prompt)
        await screen.show_stop(2)
        entry = screen.pane.entries[0]
        assert entry.input.value == "150 mΩ"
        assert "✓ saved" in status_of(entry)


async def test_finish_lists_what_is_missing_first(walk_db: tuple[Path, str]) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, _):
        await pilot.press("ctrl+f")
        await pilot.pause()
        question = str(app.screen.query_one("#question", Static).render())
        assert "Still missing" in question and "isolated earth reading for ER-01" in question
        await pilot.press("n")
        await pilot.pause()
        assert isinstance(app.screen, WalkdownScreen)
        inspection = app.store.get(Inspection, visit_id)
        assert inspection is not None and not inspection.finished


async def test_a_folder_of_photos_is_matched_by_time(
    walk_db: tuple[Path, str], tmp_path: Path
) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        await screen.show_stop(2)
        await type_into(pilot, screen.pane.entries[0], "0.1")
        write_photo(tmp_path / "card" / "IMG_1.jpg", app.now())
        await type_into(pilot, screen.query_one("#photo", SavingField), str(tmp_path / "card"))
        await pilot.pause()
        photos = app.store.select(Photo, "inspection_id = ?", [visit_id])
        assert [p.component_id for p in photos] == [screen.stop.component.id]
        assert "1 attached" in status_of(screen.query_one("#photo", SavingField))


async def test_a_bad_due_date_is_marked_on_its_own_field(walk_db: tuple[Path, str]) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        await grade(pilot, screen, Grade.NEEDS_ATTENTION)
        due = screen.query_one("#finding-due", SavingField)
        due.input.value = "next week"
        text = screen.query_one("#finding-text", SavingField)
        await type_into(pilot, text, "fixing loose")
        assert "YYYY-MM-DD" in status_of(due)
        assert "field marked ✗" in status_of(text)
        assert app.store.select(Finding, "inspection_id = ?", [visit_id]) == []
        await type_into(pilot, due, "2026-07-31")
        assert "✓ saved" in status_of(text) and "✓ saved" in status_of(due)
        [finding] = app.store.select(Finding, "inspection_id = ?", [visit_id])
        assert (finding.text, finding.due_by) == ("fixing loose", date(2026, 7, 31))


# ------------------------------------------------------- method and doubt


async def entry_at(screen: WalkdownScreen, tag: str, quantity: Quantity) -> ReadingEntry:
    """Go to the component with that tag and give its entry for the quantity."""
    await screen.show_stop(next(i for i, s in enumerate(screen.stops) if s.component.tag == tag))
    return screen.pane.entry(quantity)


async def rod_reading_saved(pilot: Pilot[None], screen: WalkdownScreen, text: str) -> ReadingEntry:
    """ER-01's isolated earth resistance, typed and saved."""
    entry = await entry_at(screen, "ER-01", Quantity.EARTH_ISOLATED)
    await type_into(pilot, entry, text)
    return entry


def saved_reading(app: WalkHarness, visit_id: str, quantity: Quantity) -> Reading:
    [reading] = app.store.select(
        Reading, "inspection_id = ? AND quantity = ?", [visit_id, quantity.value]
    )
    return reading


async def test_choosing_the_method_saves_it_at_once(walk_db: tuple[Path, str]) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        entry = await rod_reading_saved(pilot, screen, "4.2")
        reading = saved_reading(app, visit_id, Quantity.EARTH_ISOLATED)
        assert reading.method is Method.FALL_OF_POTENTIAL_3P  # the usual one unless chosen
        select = entry.method_select
        assert select is not None
        # An isolated electrode is measured 3- or 4-pole; a clamp-on meter needs a parallel
        # network, so it is not offered here (common practice; IEEE Std 81 fall-of-potential).
        assert entry.methods == [Method.FALL_OF_POTENTIAL_3P, Method.FOUR_POLE]
        select.focus()
        await pilot.press("enter", "down", "enter")
        await pilot.pause()
        reading = saved_reading(app, visit_id, Quantity.EARTH_ISOLATED)
        assert reading.method is Method.FOUR_POLE and reading.value == pytest.approx(4.2)
        assert "PASS 4.2 Ω ≤ 10 Ω" in status_of(entry) and "✓ saved" in status_of(entry)


@pytest.mark.parametrize("walk_on", [False, True], ids=["staying", "walking on and back"])
async def test_a_method_and_doubt_picked_before_the_value_are_saved_with_it(
    walk_db: tuple[Path, str], walk_on: bool
) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        entry = await entry_at(screen, "TJ-01", Quantity.EARTH_COMBINED)
        select = entry.method_select
        assert select is not None
        select.value = Method.CLAMP_ON.value  # the combined system allows a clamp-on meter
        entry.doubt_box.value = True
        await pilot.pause()
        if walk_on:
            stop = screen.index
            await screen.show_stop(stop + 1)
            await screen.show_stop(stop)
            entry = await entry_at(screen, "TJ-01", Quantity.EARTH_COMBINED)
            assert entry.method_select.value == Method.CLAMP_ON.value and entry.doubt_box.value
        assert "saved with the value" in status_of(entry)
        assert app.store.select(Reading, "inspection_id = ?", [visit_id]) == []
        await type_into(pilot, entry, "3.9")
        reading = saved_reading(app, visit_id, Quantity.EARTH_COMBINED)
        assert (reading.method, reading.unreliable) == (Method.CLAMP_ON, True)


async def test_a_reading_on_the_wrong_joint_is_withdrawn_after_asking(
    walk_db: tuple[Path, str],
) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        entry = await rod_reading_saved(pilot, screen, "4.2")
        entry.input.focus()
        entry.input.value = ""
        await pilot.press("enter")  # emptying a saved value does not remove it
        assert "ctrl+t to withdraw" in status_of(entry)
        assert len(app.store.select(Reading, "inspection_id = ?", [visit_id])) == 1
        await pilot.press("ctrl+t")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        assert "Withdraw 4.2 Ω" in str(app.screen.query_one("#question", Static).render())
        await pilot.press("n")  # asked, and left as it is
        await pilot.pause()
        assert len(app.store.select(Reading, "inspection_id = ?", [visit_id])) == 1
        entry.input.focus()
        await pilot.press("ctrl+t")
        await pilot.pause()
        await pilot.press("y")
        await pilot.pause()
        assert app.store.select(Reading, "inspection_id = ?", [visit_id]) == []
        assert entry.outcome is None and entry.input.value == ""
        assert "withdrawn" in status_of(entry)
        await type_into(pilot, entry, "4.3")  # the right value, typed afresh
        assert saved_reading(app, visit_id, Quantity.EARTH_ISOLATED).value == pytest.approx(4.3)


async def test_continuity_offers_two_and_four_wire(walk_db: tuple[Path, str]) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        entry = await entry_at(screen, "DC-01", Quantity.CONTINUITY)
        select = entry.method_select
        assert select is not None
        assert entry.methods == [Method.LOW_OHM_2W, Method.LOW_OHM_4W]
        assert select.value == Method.LOW_OHM_4W.value  # 4-wire unless chosen (common practice)
        await type_into(pilot, entry, "0.12")
        select.value = Method.LOW_OHM_2W.value
        await pilot.pause()
        assert saved_reading(app, visit_id, Quantity.CONTINUITY).method is Method.LOW_OHM_2W
        counter = screen.stops[-1]
        await screen.show_stop(len(screen.stops) - 1)
        assert counter.component.tag == "SC-01"
        assert screen.pane.entries[0].method_select is None  # a counter is just read


async def test_marking_a_reading_doubtful_saves_it_and_the_verdict_says_so(
    walk_db: tuple[Path, str],
) -> None:
    _, visit_id = walk_db
    async with walking(walk_db) as (app, pilot, screen):
        entry = await rod_reading_saved(pilot, screen, "4.2")
        assert "PASS 4.2 Ω ≤ 10 Ω" in status_of(entry)
        entry.doubt_box.focus()
        await pilot.press("space")
        await pilot.pause()
        assert saved_reading(app, visit_id, Quantity.EARTH_ISOLATED).unreliable
        assert "WATCH 4.2 Ω ≤ 10 Ω, doubtful" in status_of(entry)
        assert "marked doubtful" in status_of(entry)
        assert "WATCH" in str(screen.stop_list.get_option_at_index(screen.index).prompt)
        await pilot.press("space")
        await pilot.pause()
        assert not saved_reading(app, visit_id, Quantity.EARTH_ISOLATED).unreliable
        assert "PASS 4.2 Ω ≤ 10 Ω" in status_of(entry) and "doubtful" not in status_of(entry)


async def test_enter_on_a_value_goes_on_past_its_method_and_doubt(
    walk_db: tuple[Path, str],
) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        entry = await entry_at(screen, "ER-01", Quantity.EARTH_ISOLATED)
        await type_into(pilot, entry, "4.2", keys=True)
        await pilot.pause()
        assert app.focused is screen.pane.entry(Quantity.SOIL_RESISTIVITY).input


async def test_a_continued_draft_shows_the_method_and_doubt_saved(
    walk_db: tuple[Path, str],
) -> None:
    path, visit_id = walk_db
    with Store.open(path) as store:
        er = next(s.component for s in walk_for(store, visit_id) if s.component.tag == "ER-01")
        record_reading(
            store, visit_id, er.id, "earth_isolated", "4.4", Method.FOUR_POLE,
            unreliable=True, taken_at=on_the_day(),
        )  # fmt: skip
    async with walking(walk_db) as (app, pilot, screen):
        entry = await entry_at(screen, "ER-01", Quantity.EARTH_ISOLATED)
        assert entry.method_select is not None
        assert entry.method_select.value == Method.FOUR_POLE.value
        assert entry.doubt_box.value is True
        assert "doubtful" in status_of(entry)


# ------------------------------------------------------------- the visit's details


def saved_visit(app: WalkHarness, visit_id: str) -> Inspection:
    visit = app.store.get(Inspection, visit_id)
    assert visit is not None
    return visit


async def test_visit_details_are_typed_and_saved(walk_db: tuple[Path, str]) -> None:
    path, visit_id = walk_db
    with Store.open(path) as store:
        set_details(store, visit_id, notes="gate code 4411")
    async with walking(walk_db) as (app, pilot, screen):
        entry = await entry_at(screen, "ER-01", Quantity.EARTH_ISOLATED)
        entry.input.focus()  # the key works from inside a reading field, which has ctrl+d too
        await pilot.pause()
        assert app.focused is entry.input
        await pilot.press("ctrl+d")
        await pilot.pause()
        dialog = app.screen
        assert isinstance(dialog, VisitDetailsDialog)
        assert dialog.query_one("#field-notes", Input).value == "gate code 4411"  # prefilled
        weather = dialog.query_one("#field-weather", Input)
        weather.focus()
        await pilot.press(*"dry")
        dialog.query_one("#field-not_inspected", Input).value = "north roof: no safe access"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is screen
        visit = saved_visit(app, visit_id)
        assert visit.weather == "dry"
        assert visit.not_inspected == "north roof: no safe access"
        assert visit.notes == "gate code 4411" and visit.accompanied_by == ""


async def test_a_bad_detail_is_marked_on_its_field_and_the_rest_kept(
    walk_db: tuple[Path, str],
) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        await pilot.press("ctrl+d")
        await pilot.pause()
        dialog = app.screen
        assert isinstance(dialog, VisitDetailsDialog)
        dialog.query_one("#field-weather", Input).value = "wet"
        dialog.query_one("#field-accompanied_by", Input).value = "x" * 201
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is dialog  # not closed
        error = dialog.query_one("#error-accompanied_by", Static)
        assert error.has_class("shown") and "at most 200 characters" in str(error.render())
        assert not dialog.query_one("#error-weather", Static).has_class("shown")
        assert dialog.query_one("#field-weather", Input).value == "wet"  # kept as typed
        assert app.focused is dialog.query_one("#field-accompanied_by", Input)
        assert saved_visit(app, visit_id := screen.inspection_id).weather == ""  # nothing saved
        await pilot.press("escape")
        await pilot.pause()
        assert app.screen is screen
        assert saved_visit(app, visit_id).weather == ""


async def test_the_command_palette_opens_the_visit_details(walk_db: tuple[Path, str]) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        provider = ActionsProvider(screen)
        [hit] = [hit async for hit in provider.search("visit details")]
        assert "what could not be inspected" in str(hit.help)
        hit.command()
        await pilot.pause()
        assert isinstance(app.screen, VisitDetailsDialog)


# ------------------------------------------------------- what frames a move


def frame_shown(screen: WalkdownScreen) -> list[str]:
    """What in the frame of the fields disagrees with the component they show."""
    stop, pane = screen.stop, screen.pane
    wrong = []
    if not str(pane.query_one("#heading", Static).render()).startswith(stop.component.tag):
        wrong.append("heading")
    if screen.stop_list.highlighted != screen.index:
        wrong.append("list highlight")
    if not str(screen.query_one("#where", Static).render()).startswith(f" {screen.index + 1} of"):
        wrong.append("position")
    for entry in pane.entries:
        if entry.label != entry_label(entry.quantity):
            wrong.append(f"label of {entry.quantity.label}")
    return wrong


async def test_no_repaint_shows_fields_under_another_components_frame(
    walk_db: tuple[Path, str],
) -> None:
    """The heading, labels, list and position follow a move just after the keys sent with
    it, with repaints held until then: every painted screen agrees with itself."""
    async with walking(walk_db) as (app, pilot, screen):
        painted: list[list[str]] = []
        refresh = screen._compositor_refresh

        def checked_refresh() -> None:
            painted.append(frame_shown(screen))
            refresh()

        screen._compositor_refresh = checked_refresh  # type: ignore[method-assign]
        frame = screen._frame

        async def late_frame() -> None:
            await asyncio.sleep(0.05)  # the repaint timer (1/60 s) fires first, as under load
            frame()

        screen._frame = late_frame  # type: ignore[method-assign]
        for _ in range(len(screen.stops) - 1):
            await pilot.press("pagedown", "7", "backspace")
        await pilot.pause()
        assert painted, "the walk was never painted"
        assert all(not wrong for wrong in painted), [w for w in painted if w]
        assert frame_shown(screen) == []
        assert screen.index == len(screen.stops) - 1


async def test_leaving_at_once_after_a_move_does_not_hold_repaints(
    walk_db: tuple[Path, str],
) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        await pilot.press("pagedown", "escape")
        await pilot.pause()
        assert app.screen is not screen
        assert app._batch_count == 0  # repaints are not left held by the move
