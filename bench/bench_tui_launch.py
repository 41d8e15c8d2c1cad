"""Time from launch to the first painted sites list, against a bare DataTable app.

Builds its own database of 2,000 invented sites (each with a few components and a
visit), then in one process, alternately and several times, starts

- the floor: a bare Textual app whose only widget is a DataTable filled from one
  SQL query with the same columns (as many as the list shows at that width) for
  the same 2,000 sites, and
- the real thing: `make_app(db)` as `inspectkit` starts it (store opened, sites
  screen composed, list painted, site states left to the background worker),

each headless at 160×48 (or --size), timing until its table holds every row and the screen
has been painted. Prints the ratio (target ≤ 1.5), the time until every site's
state was in (for information), and the process's peak memory (target ≤ 250 MB).

    python bench/bench_tui_launch.py [--sites N] [--runs N] [--size WxH]
"""

from __future__ import annotations

import argparse
import asyncio
import resource
import sqlite3
import statistics
import sys
import tempfile
import time
from datetime import UTC, date, datetime
from pathlib import Path

from textual.app import App, ComposeResult
from textual.widgets import DataTable

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.model import (
    Component,
    ComponentKind,
    Inspection,
    InspectionKind,
    JointState,
    Method,
    ProtectionLevel,
    Quantity,
    Reading,
    Site,
)
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.screens.sites import COLUMNS, WIDE, WIDE_COLUMNS

TODAY = date(2026, 6, 1)
SIZE = (160, 48)
LEVELS = list(ProtectionLevel)


def build(path: Path, sites: int) -> None:
    """Invented sites, each with a down conductor, a test joint, a visit and two readings."""
    records: list = []
    for n in range(sites):
        site = Site(
            name=f"Bench Site {n:04d}",
            client=f"Client {n % 97:02d}",
            town=f"Town {n % 41:02d}",
            protection_level=LEVELS[n % 4],
        )
        dc = Component(site_id=site.id, kind=ComponentKind.DOWN_CONDUCTOR, tag="DC-01")
        tj = Component(site_id=site.id, kind=ComponentKind.TEST_JOINT, tag="TJ-01")
        day = date(2020 + n % 6, 1 + n % 12, 1 + n % 28)
        visit = Inspection(
            site_id=site.id, kind=InspectionKind.COMPLETE, date=day, finished=True
        )
        at = datetime(day.year, day.month, day.day, 10, tzinfo=UTC)
        readings = [
            Reading(
                inspection_id=visit.id, component_id=tj.id, quantity=Quantity.EARTH_ISOLATED,
                value=2.0 + n % 15, method=Method.FALL_OF_POTENTIAL_3P,
                joint_state=JointState.OPEN, taken_at=at,
            ),
            Reading(
                inspection_id=visit.id, component_id=dc.id, quantity=Quantity.CONTINUITY,
                value=0.05, method=Method.LOW_OHM_4W, taken_at=at,
            ),
        ]
        records += [site, dc, tj, visit, *readings]
    with Store.open(path, user="bench") as store:
        store.save_all(records)
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")


class BareApp(App[None]):
    """The floor: one DataTable of the same sites and columns from one query, nothing else."""

    def __init__(self, path: Path) -> None:
        super().__init__()
        self.path = path

    def compose(self) -> ComposeResult:
        yield DataTable(id="sites")

    def on_mount(self) -> None:
        conn = sqlite3.connect(self.path)
        rows = conn.execute(
            "SELECT s.name, s.protection_level, s.client, s.town, MAX(i.date) FROM site s"
            " LEFT JOIN inspection i ON i.site_id = s.id GROUP BY s.id ORDER BY s.name"
        ).fetchall()
        conn.close()
        table = self.query_one(DataTable)
        # The same headings the sites list shows at this width, so both show as much.
        wide = self.size.width >= WIDE
        table.add_columns(*(label for label, _ in COLUMNS + (WIDE_COLUMNS if wide else ())))
        table.add_rows(
            [
                ("…", name, level, client, town, "…", *(("…", last or "never") if wide else ()))
                for name, level, client, town, last in rows
            ]
        )


async def launch(
    make: object, sites: int, size: tuple[int, int] = SIZE
) -> tuple[float, float | None]:
    """Seconds until the sites table is full and painted; and until states are in, if any."""
    start = time.perf_counter()
    app = make()  # type: ignore[operator]
    async with app.run_test(headless=True, size=size) as pilot:
        table = app.screen.query_one("#sites", DataTable)
        while table.row_count < sites:
            await asyncio.sleep(0.001)
        drawn = asyncio.get_running_loop().create_future()
        app.screen.call_after_refresh(drawn.set_result, None)
        await drawn
        painted = time.perf_counter() - start
        judged = None
        if hasattr(app.screen, "states_ready"):
            await app.workers.wait_for_complete()
            await pilot.pause()
            judged = time.perf_counter() - start
    return painted, judged


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=2000)
    parser.add_argument("--runs", type=int, default=3)
    parser.add_argument("--size", default="160x48", help="terminal size, e.g. 80x24")
    args = parser.parse_args()
    width, height = (int(n) for n in args.size.lower().split("x"))
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "bench.sqlite"
        started = time.perf_counter()
        build(path, args.sites)
        print(f"built {args.sites} sites in {time.perf_counter() - started:.1f} s")
        bare, real, judged = [], [], []
        for _ in range(args.runs):
            size = (width, height)
            bare.append(asyncio.run(launch(lambda: BareApp(path), args.sites, size))[0])
            painted, done = asyncio.run(
                launch(lambda: make_app(path, today=TODAY), args.sites, size)
            )
            real.append(painted)
            judged.append(done or 0.0)
    floor, ours = statistics.median(bare), statistics.median(real)
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"bare DataTable app:   {floor * 1000:7.0f} ms (median of {args.runs})")
    print(f"inspectkit sites list:{ours * 1000:7.0f} ms (median of {args.runs})")
    print(f"every state in:       {statistics.median(judged) * 1000:7.0f} ms (information)")
    print(f"ratio: {ours / floor:.2f} (target <= 1.5)")
    print(f"peak memory: {peak_mb:.0f} MB (target <= 250 MB)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
