"""Settings: inspector and instrument kept in the database, profile per site, data folder."""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument

from __future__ import annotations

from pathlib import Path

from textual.widgets import DataTable, Input, OptionList, Select, Static
from tui_factories import ANCHOR, settled, tui_db  # noqa: F401

from inspectkit.model import Inspector, Instrument, InstrumentKind, Site
from inspectkit.store import Store
from inspectkit.store.preferences import INSPECTOR_SETTING, INSTRUMENT_SETTING
from inspectkit.tui.app import make_app
from inspectkit.tui.screens.settings import SettingsScreen


async def _settings(pilot) -> SettingsScreen:  # type: ignore[no-untyped-def]
    await settled(pilot)
    await pilot.press("f4")
    await pilot.pause()
    assert isinstance(pilot.app.screen, SettingsScreen)
    return pilot.app.screen


async def test_pick_inspector_and_instrument(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _settings(pilot)
        inspector = app.store.select(Inspector)[0]
        instrument = app.store.select(Instrument)[0]
        screen.query_one("#inspector", Select).value = inspector.id
        screen.query_one("#instrument", Select).value = instrument.id
        await pilot.pause()
        folder = str(screen.query_one("#data-folder", Static).render())
        assert str(tui_db.parent) in folder and tui_db.name in folder
    with Store.open(tui_db) as store:
        assert store.get_setting(INSPECTOR_SETTING) == inspector.id
        assert store.get_setting(INSTRUMENT_SETTING) == instrument.id
    again = make_app(tui_db, today=ANCHOR)
    async with again.run_test(size=(80, 24)):
        assert again.settings.inspector == inspector


async def test_add_instrument_validates_then_becomes_default(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await _settings(pilot)
        await pilot.press("m")
        await pilot.pause()
        dialog = app.screen
        dialog.query_one("#field-description", Input).value = "Low-ohm meter LM-2"
        dialog.query_one("#field-calibration_due", Input).value = "2027-13-01"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is dialog
        assert "serial" in str(dialog.query_one("#error-serial").render())
        assert "YYYY-MM-DD" in str(dialog.query_one("#error-calibration_due").render())
        assert len(app.store.select(Instrument)) == 1
        dialog.query_one("#field-serial", Input).value = "LM2-77"
        dialog.query_one("#field-calibration_due", Input).value = "2027-03-01"
        await pilot.press("ctrl+s")
        await pilot.pause()
        added = app.store.select(Instrument, "serial = 'LM2-77'")
        assert len(added) == 1
        assert app.settings.instrument_id == added[0].id
        assert added[0].kind is None  # no kind given: not judged


async def test_a_new_instrument_is_given_its_kind(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await _settings(pilot)
        await pilot.press("m")
        await pilot.pause()
        dialog = app.screen
        dialog.query_one("#field-description", Input).value = "Low-ohm meter LM-3"
        dialog.query_one("#field-serial", Input).value = "LM3-01"
        dialog.query_one("#field-kind", Select).value = InstrumentKind.LOW_OHMMETER.value
        await pilot.press("ctrl+s")
        await pilot.pause()
        [added] = app.store.select(Instrument, "serial = 'LM3-01'")
        assert added.kind is InstrumentKind.LOW_OHMMETER


async def test_profile_per_site(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _settings(pilot)
        table = screen.query_one("#profiles", DataTable)
        table.focus()
        await pilot.press("p")
        await pilot.pause()
        options = app.screen.query_one(OptionList)
        names = [options.get_option_at_index(i).id for i in range(options.option_count)]
        assert "nfpa-780" in names
        options.highlighted = names.index("nfpa-780")
        await pilot.press("enter")
        await pilot.pause()
        first = str(table.get_row_at(0)[0])
        assert app.store.select(Site, "name = ?", [first])[0].profile == "nfpa-780"


async def test_keymap_setting_moves_a_key(tui_db: Path) -> None:
    from inspectkit.store.preferences import KEYMAP_SETTING
    from inspectkit.tui.screens.findings import FindingsScreen

    with Store.open(tui_db) as store:
        store.set_setting(KEYMAP_SETTING, '{"app.findings": "f9"}')
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("f9")
        await pilot.pause()
        assert isinstance(app.screen, FindingsScreen)
