"""Pictures of the sites list and a site, at the smallest supported terminal and a wide one.

The demo database is built around a fixed anchor and judged on that day, so the
pictures change only when the screens do. Update them with
`pytest tests/test_tui_snapshots.py --snapshot-update` and review the SVGs.
"""

from __future__ import annotations

from datetime import date
from pathlib import Path

import pytest

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.model import Site
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.screens.site import SiteScreen

generate = pytest.importorskip("inspectkit.demo.generate")

ANCHOR = date(2026, 6, 1)
SIZES = [pytest.param((80, 24), id="80x24"), pytest.param((160, 48), id="160x48")]
#: A demo site with a failing reading, a rising electrode and open findings.
SITE = "Aldermere Water Treatment Works"


@pytest.fixture
def demo_db(tmp_path: Path) -> Path:
    path = generate.build_demo(tmp_path / "demo.sqlite", anchor=ANCHOR)
    with Store.open(path) as store:
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
    return path


async def _settle(pilot) -> None:  # type: ignore[no-untyped-def]
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()


@pytest.mark.parametrize("size", SIZES)
def test_sites_list(snap_compare, demo_db: Path, size: tuple[int, int]) -> None:  # type: ignore[no-untyped-def]
    assert snap_compare(make_app(demo_db, today=ANCHOR), run_before=_settle, terminal_size=size)


@pytest.mark.parametrize("size", SIZES)
def test_site(snap_compare, demo_db: Path, size: tuple[int, int]) -> None:  # type: ignore[no-untyped-def]
    with Store.open(demo_db) as store:
        site_id = store.select(Site, "name = ?", [SITE])[0].id

    async def open_site(pilot) -> None:  # type: ignore[no-untyped-def]
        await _settle(pilot)
        await pilot.app.push_screen(SiteScreen(site_id))
        await pilot.pause()

    assert snap_compare(make_app(demo_db, today=ANCHOR), run_before=open_site, terminal_size=size)
