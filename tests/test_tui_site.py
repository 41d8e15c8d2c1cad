"""A site: its system as a tree with pass/fail, trends, and editing components through dialogs."""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument

from __future__ import annotations

from pathlib import Path

import pytest
from textual.widgets import DataTable, Input, Select, Tree
from tui_factories import ANCHOR, settled, tui_db  # noqa: F401

from inspectkit.model import Component, ComponentKind, Inspection, Reading, Site
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.tui.dialogs.record_form import RecordDialog
from inspectkit.tui.screens.site import SiteScreen


def _site_id(path: Path, name: str) -> str:
    with Store.open(path) as store:
        return store.select(Site, "name = ?", [name])[0].id


async def _open(pilot, path: Path, name: str = "Mill Lane School") -> SiteScreen:  # type: ignore[no-untyped-def]
    await settled(pilot)
    screen = SiteScreen(_site_id(path, name))
    await pilot.app.push_screen(screen)
    await pilot.pause()
    return screen


def _leaf_labels(tree: Tree) -> dict[str, str]:
    labels = {}
    for branch in tree.root.children:
        for leaf in branch.children:
            text = str(leaf.label)
            labels[text.split()[0]] = text
    return labels


def _select(tree: Tree, tag: str) -> None:
    for branch in tree.root.children:
        for leaf in branch.children:
            if str(leaf.label).split()[0] == tag:
                tree.move_cursor(leaf)
                return
    raise AssertionError(f"no {tag} in the tree")


async def test_tree_groups_by_kind_with_latest_reading_and_verdict(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot, tui_db)
        tree = screen.query_one("#system", Tree)
        branches = [str(b.label) for b in tree.root.children]
        # Roof first, then down the building: the walking order.
        assert branches[:3] == ["air terminal (1)", "down conductor (1)", "test joint (3)"]
        labels = _leaf_labels(tree)
        checks = str(screen.query_one("#checks").render())
        assert checks.startswith("fail") and "TJ-02" in checks
        # 12.4 Ω against the 10 Ω limit of the iec-62305-3 profile.
        assert labels["TJ-02"] == "TJ-02  12.4 Ω fail"
        assert labels["TJ-01"] == "TJ-01  3.1 Ω pass"


async def test_trends_findings_visits_and_schedule(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(160, 48)) as pilot:
        screen = await _open(pilot, tui_db)
        trends = screen.query_one("#trends", DataTable)
        rows = {str(trends.get_row_at(i)[0]): trends.get_row_at(i) for i in range(trends.row_count)}
        assert set(rows) == {"TJ-01", "TJ-02", "TJ-03"}
        # Four readings, four blocks; the last one above the limit.
        assert len(str(rows["TJ-02"][1])) == 4
        assert float(rows["TJ-02"][2]) > 1.0
        findings = screen.query_one("#findings", DataTable)
        assert findings.row_count == 1
        assert "clamp corroded" in str(findings.get_row_at(0)[3])
        visits = screen.query_one("#visits", DataTable)
        assert [str(visits.get_row_at(i)[0]) for i in range(visits.row_count)][0] == "2026-04-07"
        assert screen.query_one("#schedule", DataTable).row_count >= 2


async def test_retire_asks_first_and_keeps_history(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot, tui_db)
        tree = screen.query_one("#system", Tree)
        _select(tree, "TJ-02")
        await pilot.press("x")
        await pilot.pause()
        assert isinstance(app.screen, ConfirmDialog)
        await pilot.press("n")
        await pilot.pause()
        tj2 = app.store.select(Component, "site_id = ? AND tag = 'TJ-02'", [screen.site_id])[0]
        assert tj2.retired_on is None
        _select(tree, "TJ-02")
        await pilot.press("x")
        await pilot.pause()
        await pilot.press("y")
        await pilot.pause()
        tj2 = app.store.get(Component, tj2.id)
        assert tj2 is not None and tj2.retired_on == ANCHOR
        assert len(app.store.select(Reading, "component_id = ?", [tj2.id])) == 4
        assert "retired" in _leaf_labels(tree)["TJ-02"]


async def test_add_component_refuses_blank_tag_then_saves(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot, tui_db)
        await pilot.press("a")
        await pilot.pause()
        dialog = app.screen
        assert isinstance(dialog, RecordDialog)
        dialog.query_one("#field-kind", Select).value = ComponentKind.SPD.value
        dialog.query_one("#field-location", Input).value = "main switchboard"
        dialog.query_one("#field-installed_on", Input).value = "last spring"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is dialog
        assert "tag painted on site" in str(dialog.query_one("#error-tag").render())
        assert "YYYY-MM-DD" in str(dialog.query_one("#error-installed_on").render())
        assert dialog.query_one("#field-location", Input).value == "main switchboard"
        before = len(app.store.select(Component, "site_id = ?", [screen.site_id]))
        dialog.query_one("#field-tag", Input).value = "spd-01"
        dialog.query_one("#field-installed_on", Input).value = "2025-03-01"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is screen
        saved = app.store.select(Component, "site_id = ? AND tag = 'SPD-01'", [screen.site_id])
        assert len(saved) == 1 and saved[0].location == "main switchboard"
        assert len(app.store.select(Component, "site_id = ?", [screen.site_id])) == before + 1
        assert "SPD-01" in _leaf_labels(screen.query_one("#system", Tree))


async def test_retag_keeps_the_same_record(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot, tui_db)
        _select(screen.query_one("#system", Tree), "TJ-03")
        old = app.store.select(Component, "site_id = ? AND tag = 'TJ-03'", [screen.site_id])[0]
        await pilot.press("t")
        await pilot.pause()
        app.screen.query_one("#field-tag", Input).value = "TJ-03A"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.store.get(Component, old.id).tag == "TJ-03A"


async def test_walkdown_starts_a_draft_and_continues_it(tui_db: Path) -> None:
    walkdown = pytest.importorskip("inspectkit.tui.screens.walkdown")
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot, tui_db, "Harbour Depot")
        await pilot.press("w")
        await pilot.pause()
        assert "Who is inspecting" in app.screen.prompt  # none chosen yet: asked first
        await pilot.press("enter")
        await pilot.pause()
        await pilot.press("enter")  # the kind of visit
        await pilot.pause()
        assert isinstance(app.screen, walkdown.WalkdownScreen)
        drafts = app.store.select(
            Inspection, "site_id = ? AND state = 'draft' AND finished = 0", [screen.site_id]
        )
        assert len(drafts) == 1 and drafts[0].date == ANCHOR
        assert app.screen.inspection_id == drafts[0].id
        app.pop_screen()
        await pilot.pause()
        await pilot.press("w")
        await pilot.pause()
        assert app.screen.inspection_id == drafts[0].id


async def test_edit_site_keeps_typing_until_valid(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot, tui_db)
        await pilot.press("e")
        await pilot.pause()
        dialog = app.screen
        dialog.query_one("#field-client", Input).value = "Eastvale Borough Council"
        dialog.query_one("#field-latitude", Input).value = "51.5"
        await pilot.press("ctrl+s")
        await pilot.pause()
        # The model's own rule: latitude and longitude go together.
        assert "give both or neither" in str(dialog.query_one("#form-error").render())
        assert app.store.get(Site, screen.site_id).client == "Eastvale Council"
        dialog.query_one("#field-longitude", Input).value = "-1.25"
        await pilot.press("ctrl+s")
        await pilot.pause()
        site = app.store.get(Site, screen.site_id)
        assert site.client == "Eastvale Borough Council"
        assert (site.latitude, site.longitude) == (51.5, -1.25)
        assert "Eastvale Borough Council" in str(screen.query_one("#site-title").render())


async def test_edit_site_report_details_scroll_into_view_at_80x24(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await _open(pilot, tui_db)
        await pilot.press("e")
        await pilot.pause()
        dialog = app.screen
        dialog.query_one("#field-use", Input).value = "secondary school"
        dialog.query_one("#field-built_year", Input).value = "1066"
        dialog.query_one("#field-design_standard", Input).value = "IEC 62305-3:2010"
        dialog.query_one("#field-earthing_arrangement", Select).value = "B"
        await pilot.press("ctrl+s")
        await pilot.pause()
        error = str(dialog.query_one("#error-built_year").render())
        assert "1066 is not a plausible year" in error and "1800 to" in error
        assert app.store.get(Site, screen.site_id).use == ""
        # The refused field is focused and scrolled into the 24 rows.
        field = dialog.query_one("#field-built_year", Input)
        assert app.focused is field and 0 <= field.region.y < 24
        field.value = "1962"
        await pilot.press("ctrl+s")
        await pilot.pause()
        site = app.store.get(Site, screen.site_id)
        assert (site.use, site.built_year, site.design_standard) == (
            "secondary school",
            1962,
            "IEC 62305-3:2010",
        )
        assert site.earthing_arrangement == "B" and site.installed_year is None


def test_sparkline_scales_from_zero_and_marks_readings_over_the_limit() -> None:
    from inspectkit.tui.widgets.sparkline import sparkline

    line = sparkline([2.0, 4.0, 8.0, 12.0], limit=10.0)
    # Eight steps from zero to the top reading: 2, 4, 8 and 12 Ω of 12 Ω round to steps 1, 2, 5, 7.
    assert line.plain == "▂▃▆█"
    styles = [span.style for span in line.spans]
    assert styles == ["green", "green", "green", "red"]
    assert sparkline([]).plain == ""
