"""In the walkdown, a rooftop item added or edited is judged for protection at once."""

from __future__ import annotations

from pathlib import Path

from textual.notifications import Notify
from textual.widgets import Checkbox, Input

from inspectkit.model.geometry import GeometryItem
from inspectkit.store import Store
from inspectkit.store.geometry import save_geometry_item, site_geometry
from inspectkit.tui.dialogs.geometry import GeometryDialog
from inspectkit.tui.screens.walkdown import WalkdownScreen
from inspectkit.walkdown.visit import start_inspection
from tests.test_tui_walkdown import WalkHarness
from tests.walkdown_factories import TODAY, build_walk_site


def _walk(tmp_path: Path) -> tuple[Path, str, str]:
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        roof = GeometryItem(
            site_id=site.site.id,
            kind="roof",
            tag="R1",
            points=[(0, 0), (30, 0), (30, 12), (0, 12)],
            z_m=9,
        )
        save_geometry_item(store, roof)
        visit = start_inspection(store, site.site.id, "complete", None, TODAY)
    return path, visit.id, site.site.id


async def test_a_rooftop_item_added_in_the_walkdown_is_judged_at_once(tmp_path: Path) -> None:
    path, visit_id, site_id = _walk(tmp_path)
    seen: list[object] = []
    app = WalkHarness(path, visit_id)
    async with app.run_test(size=(80, 24), message_hook=seen.append) as pilot:
        await pilot.pause()
        await pilot.press("ctrl+b")
        await pilot.pause()
        dialog = app.screen
        assert isinstance(dialog, GeometryDialog)
        values = {
            "tag": "AHU-7",
            "points": "10,4; 12,4; 12,6; 10,6",
            "z_m": "11",
            "what": "air handler",
        }
        for name, value in values.items():
            dialog.query_one(f"#field-{name}", Input).value = value
        dialog.query_one("#field-conductive", Checkbox).value = True
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, WalkdownScreen)
    said = [m.notification.message for m in seen if isinstance(m, Notify)]
    assert any("AHU-7 saved" in s and "outside the protected volume" in s for s in said), said
    with Store.open(path) as store:
        assert "AHU-7" in {g.tag for g in site_geometry(store, site_id)}
