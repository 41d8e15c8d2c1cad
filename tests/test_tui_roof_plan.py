"""The site screen's roof plan: geometry added through the form, drawn, verdict shown."""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument

from __future__ import annotations

from pathlib import Path

from textual.widgets import Checkbox, DataTable, Input, Select, Static, TabbedContent
from tui_factories import ANCHOR, settled, tui_db  # noqa: F401

from inspectkit.model import Component, Site
from inspectkit.model.geometry import GeometryItem
from inspectkit.store import Store
from inspectkit.store.geometry import site_geometry
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.geometry import GeometryDialog
from inspectkit.tui.screens.site import SiteScreen
from inspectkit.tui.widgets.roof_plan import RoofPlanPane, plan_text

NAME = "Mill Lane School"


def _ids(path: Path) -> tuple[str, Component]:
    with Store.open(path) as store:
        site = store.select(Site, "name = ?", [NAME])[0]
        rod = store.select(Component, "site_id = ? AND kind = 'air_terminal'", [site.id])[0]
        store.save_all(
            [
                GeometryItem(
                    site_id=site.id,
                    kind="roof",
                    tag="R1",
                    points=[(0, 0), (20, 0), (20, 10), (0, 10)],
                    z_m=8,
                ),
                GeometryItem(
                    site_id=site.id, kind="down_conductor", tag="DC-01", points=[(0, 0)], z_m=8
                ),
                GeometryItem(
                    site_id=site.id, kind="down_conductor", tag="DC-02", points=[(20, 10)], z_m=8
                ),
            ]
        )
        return site.id, rod


async def _form(pilot, values: dict[str, str]) -> GeometryDialog:  # type: ignore[no-untyped-def]
    dialog = pilot.app.screen
    assert isinstance(dialog, GeometryDialog)
    for name, value in values.items():
        widget = dialog.query_one(f"#field-{name}")
        if isinstance(widget, Checkbox):
            widget.value = value == "yes"
        elif isinstance(widget, Select):
            widget.value = value
        else:
            assert isinstance(widget, Input)
            widget.value = value
    return dialog


async def test_add_items_through_the_form_and_see_them_on_the_plan(tui_db: Path) -> None:
    site_id, rod = _ids(tui_db)
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(160, 48)) as pilot:
        await settled(pilot)
        screen = SiteScreen(site_id)
        await app.push_screen(screen)
        await pilot.pause()
        screen.query_one("#tabs", TabbedContent).active = "tab-plan"
        await pilot.pause()
        pane = screen.query_one(RoofPlanPane)
        pane.table.focus()
        await pilot.press("g")
        await pilot.pause()
        # The rod takes over the tag of the air terminal the site already has.
        dialog = await _form(
            pilot, {"kind": "air_terminal", "component_id": rod.id, "points": "5,5", "z_m": "10"}
        )
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is screen
        await pilot.press("g")
        await pilot.pause()
        dialog = await _form(
            pilot,
            {
                "tag": "ahu-1",
                "points": "14,4; 16,4; 16,6; 14,6",
                "z_m": "9.8",
                "what": "air handler",
                "conductive": "yes",
            },
        )
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.press("g")
        await pilot.pause()
        dialog = await _form(pilot, {"tag": "VENT-2", "points": "1,1;2,1", "z_m": "9"})
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.screen is dialog, "two corners are refused, the form stays"
        error = str(dialog.query_one("#error-points", Static).render())
        assert "at least 3" in error
        await pilot.press("escape")
        await pilot.pause()
        with Store.open(tui_db) as store:
            stored = {g.tag: g for g in site_geometry(store, site_id)}
        assert stored[rod.tag].component_id == rod.id
        assert "AHU-1" in stored and "VENT-2" not in stored
        table = pane.query_one("#geometry", DataTable)
        rows = [table.get_row_at(i) for i in range(table.row_count)]
        assert ["AHU-1", "FAIL", "rooftop item", "air handler"] in [
            [str(c) for c in row] for row in rows
        ]
        table.move_cursor(row=[str(r[0]) for r in rows].index("AHU-1"))
        await pilot.pause()
        said = str(pane.query_one("#plan-verdict", Static).render())
        assert "outside the protected volume" in said
        drawing = str(pane.query_one("#plan-drawing", Static).render())
        assert "X" in drawing and "A" in drawing and "D" in drawing and "N↑" in drawing
        pane.table.focus()
        await pilot.press("delete")
        await pilot.pause()
        await pilot.press("y")
        await pilot.pause()
        with Store.open(tui_db) as store:
            assert "AHU-1" not in {g.tag for g in site_geometry(store, site_id)}


def test_plan_text_marks_verdicts_with_letters_and_highlights_the_selected() -> None:
    site = Site(name="x", protection_level="III")
    items = [
        GeometryItem(
            site_id=site.id,
            kind="roof",
            tag="R1",
            points=[(0, 0), (10, 0), (10, 10), (0, 10)],
            z_m=5,
        ),
        GeometryItem(
            site_id=site.id,
            kind="rooftop_item",
            tag="AHU",
            points=[(4, 4), (6, 4), (6, 6), (4, 6)],
            z_m=7,
        ),
    ]
    from inspectkit.engine.conformity import assess

    text = plan_text(items, assess(site, items), 40, 14, selected="AHU")
    assert "X" in text.plain and "·" in text.plain
    assert any("reverse" in str(span.style) for span in text.spans)
    assert plan_text([], None, 40, 14).plain.startswith("No geometry recorded")
