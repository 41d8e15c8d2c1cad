"""Pictures of the plan screen on the demo round, at the smallest supported terminal and a wide one.

The demo is built around a fixed anchor and planned from that day with its saved
depot, so the pictures change only when the screen or the planner does. Update them
with `pytest tests/test_plan_snapshots.py --snapshot-update` and review the SVGs.
"""

from __future__ import annotations

from datetime import date
from pathlib import Path

import pytest

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.store import Store
from inspectkit.tui.app import make_app

generate = pytest.importorskip("inspectkit.demo.generate")

ANCHOR = date(2027, 1, 1)
SIZES = [pytest.param((80, 24), id="80x24"), pytest.param((160, 48), id="160x48")]


@pytest.fixture
def demo_db(tmp_path: Path) -> Path:
    path = generate.build_demo(tmp_path / "demo.sqlite", anchor=date(2026, 12, 2))
    with Store.open(path) as store:
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
    return path


async def _open_plan(pilot) -> None:  # type: ignore[no-untyped-def]
    await pilot.press("f5")
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()


@pytest.mark.parametrize("size", SIZES)
def test_plan_screen(snap_compare, demo_db: Path, size: tuple[int, int]) -> None:  # type: ignore[no-untyped-def]
    app = make_app(demo_db, today=ANCHOR)
    assert snap_compare(app, run_before=_open_plan, terminal_size=size)
