"""Where the keys go: dialogs open on their first field, Tab walks in reading order,
pick lists open on Enter only, boxes show their state, and Settings reach an open walkdown.
"""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument

from __future__ import annotations

from datetime import date
from pathlib import Path

from textual.widgets import Button, Input, Select
from tui_factories import ANCHOR, settled, tui_db  # noqa: F401
from typer.testing import CliRunner

from inspectkit.cli import app as cli
from inspectkit.model import Inspector, Instrument, Quantity
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.record_form import RecordDialog
from inspectkit.tui.screens.walkdown import WalkdownScreen
from inspectkit.walkdown.visit import start_inspection
from tests.test_tui_walkdown import status_of, walk_db, walking  # noqa: F401
from tests.walkdown_factories import TODAY, build_walk_site, write_photo


async def _dialog(pilot, key: str) -> RecordDialog:  # type: ignore[no-untyped-def, type-arg]
    await settled(pilot)
    await pilot.press("f4", key)
    await pilot.pause()
    dialog = pilot.app.screen
    assert isinstance(dialog, RecordDialog)
    return dialog


async def test_new_inspector_and_instrument_open_on_their_first_field(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        dialog = await _dialog(pilot, "i")
        assert app.focused is dialog.query_one("#field-name", Input)
        await pilot.press(*"Bo Lint")  # the first keys are the name's, none lost
        assert dialog.query_one("#field-name", Input).value == "Bo Lint"
        await pilot.press("escape")
        await pilot.pause()
        dialog = await _dialog(pilot, "m")
        assert app.focused is dialog.query_one("#field-description", Input)


async def test_tab_walks_a_dialog_in_reading_order(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        dialog = await _dialog(pilot, "m")
        seen = []
        for _ in range(6):
            seen.append(app.focused.id if app.focused else None)
            await pilot.press("tab")
        assert seen == ["field-description", "field-kind", "field-serial",
                        "field-calibration_due", "cancel", "save"]  # fmt: skip
        assert all(
            isinstance(dialog.query_one(f"#{i}"), (Input, Button, Select)) for i in seen
        )


async def test_a_pick_list_opens_on_enter_only(walk_db: tuple[Path, str]) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        picker = screen.query_one("#instrument", Select)
        picker.focus()
        await pilot.pause()
        await pilot.press("space", "a", "down", "up")
        assert not picker.expanded  # typing or Space never opens it
        await pilot.press("enter")
        assert picker.expanded


async def test_tab_in_the_walkdown_goes_value_method_doubt_then_on(
    walk_db: tuple[Path, str],
) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        tags = [s.component.tag for s in screen.stops]
        await screen.show_stop(tags.index("TJ-01"))
        entry = screen.pane.entry(Quantity.EARTH_COMBINED)
        order = [entry.input, entry.method_select, entry.doubt_box, screen.query_one("#grade")]
        assert app.focused is order[0]
        for widget in order[1:]:
            await pilot.press("tab")
            assert app.focused is widget


async def test_the_doubtful_box_shows_its_state(walk_db: tuple[Path, str]) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        await screen.show_stop(2)
        box = screen.pane.entries[0].doubt_box
        assert "X" not in str(box.render())
        box.focus()
        await pilot.press("space")
        assert box.value and "X" in str(box.render())
        await pilot.press("space")
        assert not box.value and "X" not in str(box.render())


async def test_an_instrument_added_in_settings_reaches_the_open_walkdown(tmp_path: Path) -> None:
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        visit = start_inspection(store, site.site.id, "complete", None, ANCHOR)
        store.set_setting("cautions_acknowledged", "yes")
    app = make_app(path, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await app.push_screen(WalkdownScreen(visit.id))
        await pilot.pause()
        walkdown = app.screen
        await pilot.press("f4", "m")
        await pilot.pause()
        await pilot.press(*"Clamp meter")
        dialog = app.screen
        dialog.query_one("#field-serial", Input).value = "CM-9"
        await pilot.press("ctrl+s")
        await pilot.pause()
        added = app.store.select(Instrument, "serial = 'CM-9'")[0]
        app.switch_mode("sites")
        await pilot.pause()
        assert app.screen is walkdown
        picker = walkdown.query_one("#instrument", Select)
        assert added.id in {value for _, value in picker._options}  # noqa: SLF001
        assert picker.value == added.id  # chosen in Settings, so in use here


def test_retired_inspectors_and_instruments_leave_the_pickers(tmp_path: Path) -> None:
    """On the real day: `retire` with no `--on` retires as of the clock's today."""
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        spare = store.save(Instrument(description="Typo tester", serial="X-1"))
    runner = CliRunner()
    done = runner.invoke(cli, ["retire", "instrument", "X-1", "--db", str(path)])
    assert done.exit_code == 0 and "retired instrument Typo tester X-1" in done.output
    done = runner.invoke(cli, ["retire", "inspector", site.inspector.name, "--on", "2026-05-01",
                               "--db", str(path)])  # fmt: skip
    assert done.exit_code == 0, done.output
    bad = runner.invoke(cli, ["retire", "instrument", "NOPE", "--db", str(path)])
    assert bad.exit_code == 2 and "--instrument" in bad.output
    with Store.open(path) as store:
        assert store.get(Instrument, spare.id).retired_on == date.today()  # kept, for history
        assert store.get(Inspector, site.inspector.id).retired_on == date(2026, 5, 1)
        assert store.verify_audit() == []


async def test_retiring_in_settings_hides_it_from_the_walkdown(walk_db: tuple[Path, str]) -> None:
    path, visit_id = walk_db
    with Store.open(path) as store:
        spare = store.save(Instrument(description="Typo tester", serial="X-1"))
        store.set_setting("cautions_acknowledged", "yes")
        store.set_setting("instrument_id", spare.id)
    app = make_app(path, today=TODAY)  # the day of walk_db's visit
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("f4")
        await pilot.pause()
        app.screen.query_one("#instrument", Select).focus()
        await pilot.press("r")
        await pilot.pause()
        await pilot.press("y")
        await pilot.pause()
        assert app.store.get(Instrument, spare.id).retired_on == TODAY
        settings = app.screen
        assert spare.id not in {v for _, v in settings.query_one("#instrument", Select)._options}  # noqa: SLF001
        app.switch_mode("sites")
        await app.push_screen(WalkdownScreen(visit_id))
        await pilot.pause()
        options = app.screen.query_one("#instrument", Select)._options  # noqa: SLF001
        assert spare.id not in {value for _, value in options}


async def test_the_photo_line_is_in_view_at_80x24(
    walk_db: tuple[Path, str], tmp_path: Path
) -> None:
    async with walking(walk_db) as (app, pilot, screen):
        tags = [s.component.tag for s in screen.stops]
        await screen.show_stop(tags.index("TJ-01"))
        photo = write_photo(tmp_path / "card" / "IMG_7.jpg", app.now())
        field = screen.pane.photo
        field.input.focus()
        field.input.value = str(photo)
        await pilot.press("enter")
        await pilot.pause()
        await pilot.pause()
        assert "saved photo IMG_7.jpg" in status_of(field)
        assert "(1 attached)" in field.label  # the label says so too, not "none yet"
        status = field.status.region
        assert screen.pane.region.contains_region(status), (status, screen.pane.region)
