"""The sites list: cautions on first start, states worst first, filter, sort, open."""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument

from __future__ import annotations

from pathlib import Path

import pytest
from textual.widgets import DataTable, Input
from tui_factories import ANCHOR, build_tui_db, column, settled, tui_db  # noqa: F401

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.model import Site
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.cautions import CautionsDialog
from inspectkit.tui.screens.site import SiteScreen
from inspectkit.tui.screens.sites import SitesScreen


async def test_cautions_shown_once_then_one_key_away(tmp_path: Path) -> None:
    path = build_tui_db(tmp_path / "fresh.sqlite")
    app = make_app(path, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert isinstance(app.screen, CautionsDialog)
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, SitesScreen)
    with Store.open(path) as store:
        assert store.get_setting(ACKNOWLEDGED_SETTING) == "yes"

    again = make_app(path, today=ANCHOR)
    async with again.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert isinstance(again.screen, SitesScreen)
        await pilot.press("f1")
        await pilot.pause()
        assert isinstance(again.screen, CautionsDialog)
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(again.screen, SitesScreen)


async def test_states_in_words_worst_first(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        assert column(table, "name") == ["Orchard Tower", "Mill Lane School", "Harbour Depot"]
        states = column(table, "state")
        # Orchard Tower's only visit was in 2019: level I is due every year (IEC 62305-3 Table E.2).
        assert states[0] == "overdue"
        # Mill Lane School's TJ-02 read 12.4 Ω against the profile's 10 Ω limit.
        assert states[1] == "fail"
        assert column(table, "due")[0] == "2020-03-04"


async def test_typing_filters_by_name_client_or_town(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        await pilot.press(*"porth")
        assert app.screen.query_one("#filter", Input).value == "porth"
        assert sorted(column(table, "name")) == ["Harbour Depot", "Orchard Tower"]
        await pilot.press("backspace", "backspace", "backspace", "backspace", "backspace")
        await pilot.press(*"council")
        assert column(table, "name") == ["Mill Lane School"]
        await pilot.press("escape")
        assert table.row_count == 3


async def test_sort_keys_cycle_and_reverse(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        await pilot.press("ctrl+o")
        assert app.screen.sort_by == "name"
        assert column(table, "name") == ["Harbour Depot", "Mill Lane School", "Orchard Tower"]
        await pilot.press("ctrl+r")
        assert column(table, "name") == ["Orchard Tower", "Mill Lane School", "Harbour Depot"]


async def test_enter_opens_the_highlighted_site(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("down", "enter")
        await pilot.pause()
        assert isinstance(app.screen, SiteScreen)
        assert app.store.get(Site, app.screen.site_id).name == "Mill Lane School"
        await pilot.press("escape")
        assert isinstance(app.screen, SitesScreen)


async def test_new_site_bad_input_is_explained_and_nothing_saved(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("ctrl+n")
        await pilot.pause()
        dialog = app.screen
        dialog.query_one("#field-name", Input).value = "Quarry Works"
        dialog.query_one("#field-height_m", Input).value = "tall"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is dialog
        error = str(dialog.query_one("#error-height_m").render())
        assert "metres" in error
        level_error = str(dialog.query_one("#error-protection_level").render())
        assert "choose a protection level" in level_error
        assert dialog.query_one("#field-name", Input).value == "Quarry Works"
        assert app.store.select(Site, "name = ?", ["Quarry Works"]) == []


def test_every_binding_has_an_id_and_a_tooltip() -> None:
    from inspectkit.tui.app import InspectApp
    from inspectkit.tui.dialogs.choice import ChoiceDialog
    from inspectkit.tui.dialogs.confirm import ConfirmDialog
    from inspectkit.tui.dialogs.record_form import RecordDialog
    from inspectkit.tui.screens.findings import FindingsScreen
    from inspectkit.tui.screens.settings import SettingsScreen

    owners = [
        InspectApp, SitesScreen, SiteScreen, FindingsScreen, SettingsScreen,
        CautionsDialog, ConfirmDialog, ChoiceDialog, RecordDialog,
    ]
    ids = []
    for owner in owners:
        for binding in owner.BINDINGS:
            assert binding.id and binding.tooltip, f"{owner.__name__}: {binding.key}"
            ids.append(binding.id)
    assert len(ids) == len(set(ids))


async def test_command_palette_offers_the_screen_and_app_actions(tui_db: Path) -> None:
    from inspectkit.tui.commands import ActionsProvider

    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        provider = ActionsProvider(app.screen)
        titles = {hit.text async for hit in provider.discover()}
        assert {"Open", "Sort", "Reverse", "New site", "Cautions", "Findings", "Settings"} <= titles
        hits = [hit async for hit in provider.search("findings")]
        assert hits
        hits[0].command()
        await pilot.pause()
        from inspectkit.tui.screens.findings import FindingsScreen

        assert isinstance(app.screen, FindingsScreen)


async def test_states_arrive_from_the_worker_after_the_list(tui_db: Path) -> None:
    seen: list[object] = []
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24), message_hook=seen.append) as pilot:
        await settled(pilot)
    # The hook sees a message at each node it bubbles through: count each once.
    batches = list({id(m): m for m in seen if isinstance(m, SitesScreen.StatesComputed)}.values())
    assert batches and batches[-1].done
    assert sum(len(b.states) for b in batches) == 3


async def test_clicking_a_heading_sorts_by_it(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        town_x = sum(c.get_render_width(table) for c in table.ordered_columns[:4]) + 1
        await pilot.click("#sites", offset=(town_x, 0))
        await pilot.pause()
        assert app.screen.sort_by == "town"
        assert column(table, "town") == ["Eastvale", "Porthaven", "Porthaven"]


async def test_wide_terminal_shows_more_columns(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        keys = [str(c.key.value) for c in app.screen.query_one("#sites", DataTable).ordered_columns]
        assert keys == ["state", "name", "level", "client", "town", "due"]
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(160, 48)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        assert [str(c.key.value) for c in table.ordered_columns][-2:] == ["kind", "last"]
        assert column(table, "last")[0] == "2019-03-04"
        # The whole row fits across, so nothing scrolls sideways.
        assert sum(c.get_render_width(table) for c in table.ordered_columns) <= 160


async def test_long_list_filters_once_typing_pauses(
    tui_db: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    from inspectkit.tui.screens import sites

    monkeypatch.setattr(sites, "LONG_LIST", 1)
    # A pause no loaded machine's gap between two pilot keys reaches: nothing is filtered
    # while typing goes on.
    monkeypatch.setattr(sites, "TYPING_PAUSE", 60.0)
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        await pilot.press(*"porth")
        assert table.row_count == 3
        # The next key waits the (now short) pause again, and then the list is filtered.
        monkeypatch.setattr(sites, "TYPING_PAUSE", 0.05)
        await pilot.press("backspace", "h")
        await pilot.pause(0.5)
        assert sorted(column(table, "name")) == ["Harbour Depot", "Orchard Tower"]


async def test_a_site_the_engine_fails_on_shows_error_and_the_rest_are_judged(
    tui_db: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    from inspectkit import site_states

    real = site_states.assess

    def failing_for_the_school(records, profile, today):  # type: ignore[no-untyped-def]
        if records.site.name == "Mill Lane School":
            raise ZeroDivisionError("division by zero in a trend [bug]")
        return real(records, profile, today)

    monkeypatch.setattr(site_states, "assess", failing_for_the_school)
    app = make_app(tui_db, today=ANCHOR)
    told: list[str] = []
    notify = app.notify
    monkeypatch.setattr(
        app, "notify", lambda message, **kw: (told.append(message), notify(message, **kw))[1]
    )
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        assert isinstance(app.screen, SitesScreen) and app.is_running
        table = app.screen.query_one("#sites", DataTable)
        states = dict(zip(column(table, "name"), column(table, "state"), strict=True))
        assert states["Mill Lane School"] == "error"
        assert states["Orchard Tower"] == "overdue"  # judged as without the failure
        assert states["Harbour Depot"] not in ("error", "…")
        assert column(table, "name")[0] == "Mill Lane School"  # not judged sorts first
        assert any("Mill Lane School could not be judged" in m and "division by zero" in m
                   for m in told)
        status = app.screen.query_one("#status")
        assert "ZeroDivisionError: division by zero in a trend [bug]" in str(status.render())
        await pilot.press("enter")  # the site screen says why too, and does not fail
        await pilot.pause()
        assert isinstance(app.screen, SiteScreen)
        summary = str(app.screen.query_one("#site-summary").render())
        assert "error: ZeroDivisionError" in summary
        await pilot.press("escape")
        await settled(pilot)
        await pilot.press("down")
        assert "sorted by state" in str(status.render())


async def test_an_unknown_profile_shows_why_on_the_highlighted_row(tui_db: Path) -> None:
    with Store.open(tui_db) as store:
        tower = store.select(Site, "name = ?", ["Orchard Tower"])[0]
        store.save(tower.model_copy(update={"profile": "no-such-rules"}))
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        assert column(table, "state")[0] == "no profile"
        status = str(app.screen.query_one("#status").render())
        assert "Orchard Tower: no profile" in status
        assert "no profile named 'no-such-rules'" in status
