"""SVG snapshots of the walkdown screen at the smallest and a roomy terminal size."""

from __future__ import annotations

from collections.abc import Awaitable, Callable
from datetime import UTC, date, datetime
from pathlib import Path

import pytest
from textual.pilot import Pilot
from textual.widgets import Input

from inspectkit.store import Store
from inspectkit.walkdown.grades import grade_component
from inspectkit.walkdown.readings import record_reading
from inspectkit.walkdown.visit import start_inspection, walk_for
from tests.test_tui_walkdown import WalkHarness
from tests.walkdown_factories import build_walk_site

#: Fixed dates, so that nothing in the picture follows the clock.
VISIT_DAY = date(2026, 6, 1)
TAKEN = datetime(2026, 6, 1, 10, 30, tzinfo=UTC)


@pytest.fixture
def walk_app(tmp_path: Path) -> WalkHarness:
    """A draft part-way through: a failing electrode, a passing joint, a defect noted."""
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        visit = start_inspection(store, site.site.id, "complete", None, VISIT_DAY)
        parts = site.parts
        record_reading(store, visit.id, parts["DC-01"].id, "continuity", "0.11", taken_at=TAKEN)
        grade_component(store, visit.id, parts["DC-01"].id, "sound")
        record_reading(store, visit.id, parts["TJ-01"].id, "earth_combined", "3.9", taken_at=TAKEN)
        grade_component(
            store, visit.id, parts["TJ-01"].id, "needs_attention", "clamp bolt corroded"
        )
        record_reading(store, visit.id, parts["ER-01"].id, "earth_isolated", "14", taken_at=TAKEN)
        assert walk_for(store, visit.id)[5].component.tag == "ER-01"
    return WalkHarness(path, visit.id, today=VISIT_DAY)


def _at_stop(index: int) -> Callable[[Pilot[None]], Awaitable[None]]:
    """Show one stop of the walk, with the cursors still so that the picture is stable."""

    async def run_before(pilot: Pilot[None]) -> None:
        screen = pilot.app.screen
        await screen.show_stop(index)  # type: ignore[attr-defined]
        for field in screen.query(Input):
            field.cursor_blink = False
        await pilot.pause()

    return run_before


@pytest.mark.parametrize("size", [(80, 24), (160, 48)], ids=["80x24", "160x48"])
@pytest.mark.parametrize(
    "index", [5, 4], ids=["at-a-failing-electrode", "at-a-joint-needing-attention"]
)
def test_walkdown(snap_compare, walk_app: WalkHarness, index: int, size) -> None:
    assert snap_compare(walk_app, run_before=_at_stop(index), terminal_size=size)
