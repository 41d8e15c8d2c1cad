"""Findings across sites: age and due-by, resolving one with the visit that fixed it."""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument

from __future__ import annotations

from datetime import date
from pathlib import Path

from textual.widgets import DataTable, OptionList
from tui_factories import ANCHOR, column, settled, tui_db  # noqa: F401

from inspectkit.model import Finding, Inspection, InspectionKind, Site
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.choice import ChoiceDialog
from inspectkit.tui.screens.findings import FindingsScreen


async def test_open_findings_show_age_and_due(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("f3")
        await pilot.pause()
        assert isinstance(app.screen, FindingsScreen)
        table = app.screen.query_one("#findings", DataTable)
        assert column(table, "site") == ["Mill Lane School"]
        # Found on 2026-04-07, looked at on 2026-06-01: 55 days.
        assert column(table, "age") == ["55 d"]
        assert column(table, "due") == ["2026-07-06"]


async def test_resolving_needs_a_later_visit(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("f3", "r")
        await pilot.pause()
        assert isinstance(app.screen, FindingsScreen)
        assert app.store.select(Finding, "resolved_by IS NOT NULL") == []


async def test_resolve_with_the_repair_visit(tui_db: Path) -> None:
    with Store.open(tui_db) as store:
        school = store.select(Site, "name = 'Mill Lane School'")[0]
        repair = store.save(
            Inspection(
                site_id=school.id, kind=InspectionKind.VISUAL, date=date(2026, 5, 20),
                finished=True,
            )
        )
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("f3", "r")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)
        options = app.screen.query_one(OptionList)
        assert options.option_count == 1
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, FindingsScreen)
        finding = app.store.select(Finding)[0]
        assert finding.resolved_by == repair.id
        assert app.screen.query_one("#findings", DataTable).row_count == 0


async def test_enter_opens_the_findings_site(tui_db: Path) -> None:
    from inspectkit.tui.screens.site import SiteScreen

    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot)
        await pilot.press("f3")
        await pilot.pause()
        assert "clamp corroded" in str(app.screen.query_one("#detail").render())
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, SiteScreen)
        assert app.store.get(Site, app.screen.site_id).name == "Mill Lane School"
