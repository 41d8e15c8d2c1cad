"""Benchmark: time per saved reading during a walkdown, against a bare sqlite3 insert.

The real path is `walkdown.readings.record_reading`, which the walkdown screen calls
when a field is left: parse the text, validate the record, save it with its audit row
in one transaction, then judge it with the engine's rules against the site's profile
and its last visit. The floor, in the same process, on the same disk and turn about
with the real path: one bare sqlite3 INSERT of the same row and one COMMIT per
reading, with the store's pragmas (WAL, foreign keys, busy timeout). Prints both,
the ratio (target ≤ 3) and peak memory. `--profile` prints where the real path
spends its time.

Run: /work/venv/bin/python bench/bench_entry.py [--joints 40] [--visits 8] [--profile]
"""

from __future__ import annotations

import argparse
import cProfile
import pstats
import resource
import sqlite3
import sys
import tempfile
import time
from datetime import UTC, date, datetime, timedelta
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from inspectkit.model import (  # noqa: E402
    ComponentKind,
    Inspection,
    InspectionKind,
    JointState,
    Method,
    Quantity,
    Reading,
)
from inspectkit.store import Store  # noqa: E402
from inspectkit.store.database import BUSY_TIMEOUT_MS  # noqa: E402
from inspectkit.store.rows import to_row  # noqa: E402
from inspectkit.walkdown.judging import site_context  # noqa: E402
from inspectkit.walkdown.readings import record_reading  # noqa: E402
from inspectkit.walkdown.visit import start_inspection, walk_for  # noqa: E402
from tests.walkdown_factories import build_walk_site  # noqa: E402


def build(path: Path, joints: int, visits: int) -> tuple[Store, str, list[tuple[str, Quantity]]]:
    """A site with `joints` down conductors, each with a joint and a rod, and `visits` past visits.

    Returns the store, an open draft and the (component, quantity) entries of its walk.
    """
    store = Store.open(path, user="bench")
    site = build_walk_site(store, down_conductors=joints)
    history = []
    for n in range(1, visits):
        day = site.earlier.date - timedelta(days=365 * n)
        visit = Inspection(site_id=site.site.id, kind=InspectionKind.COMPLETE, date=day,
                           finished=True)  # fmt: skip
        history.append(visit)
        for part in site.parts.values():
            if part.kind is ComponentKind.EARTH_ELECTRODE:
                history.append(
                    Reading(inspection_id=visit.id, component_id=part.id,
                            quantity=Quantity.EARTH_ISOLATED, value=3.0 + 0.1 * n,
                            method=Method.FALL_OF_POTENTIAL_3P, joint_state=JointState.OPEN,
                            taken_at=datetime.combine(day, datetime.min.time(), UTC))
                )  # fmt: skip
    store.save_all(history)
    draft = start_inspection(store, site.site.id, "complete", None, date.today())
    entries = [
        (stop.component.id, quantity)
        for stop in walk_for(store, draft.id)
        for quantity in stop.quantities
        if quantity is not Quantity.SOIL_RESISTIVITY
    ]
    return store, draft.id, entries


def open_floor(path: Path, columns: list[str]) -> sqlite3.Connection:
    """A bare connection with the store's pragmas and a plain table of the reading's columns."""
    conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_MS / 1000, isolation_level=None)
    conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
    conn.execute("PRAGMA foreign_keys = ON")
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute(f"CREATE TABLE reading ({', '.join(columns)})")
    return conn


def run(
    store: Store, draft_id: str, entries: list[tuple[str, Quantity]], floor_path: Path
) -> tuple[float, float]:
    """Seconds per reading: through record_reading as the screen calls it, and the floor.

    The two run turn about, reading by reading, so that both meet the same disk: an
    fsync that is slow for one is slow for the other.
    """
    draft = store.get(Inspection, draft_id)
    assert draft is not None
    context = site_context(store, draft.site_id)  # the screen reads it once per walk
    floor: sqlite3.Connection | None = None
    real_seconds = floor_seconds = 0.0
    for n, (component_id, quantity) in enumerate(entries):
        text = "5" if quantity is Quantity.STRIKE_COUNT else f"{1 + n % 7}.{n % 10}"
        start = time.perf_counter()
        outcome = record_reading(store, draft_id, component_id, quantity, text, context=context)
        real_seconds += time.perf_counter() - start
        row = to_row(outcome.reading)
        if floor is None:
            floor = open_floor(floor_path, list(row))
            insert = f"INSERT INTO reading ({', '.join(row)}) VALUES ({', '.join('?' * len(row))})"
        start = time.perf_counter()
        floor.execute("BEGIN")
        floor.execute(insert, list(row.values()))
        floor.execute("COMMIT")
        floor_seconds += time.perf_counter() - start
    assert floor is not None
    floor.close()
    return real_seconds / len(entries), floor_seconds / len(entries)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--joints", type=int, default=40, help="down conductors on the site")
    parser.add_argument("--visits", type=int, default=8, help="past visits with readings")
    parser.add_argument("--profile", action="store_true", help="print the real path's profile")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as scratch:
        root = Path(scratch)
        store, draft_id, entries = build(root / "walk.sqlite", args.joints, args.visits)
        profiler = cProfile.Profile() if args.profile else None
        if profiler:
            profiler.enable()
        per_reading, per_floor = run(store, draft_id, entries, root / "floor.sqlite")
        if profiler:
            profiler.disable()
        store.close()
    ratio = per_reading / per_floor
    print(f"readings saved through record_reading: {len(entries)}")
    print(f"record_reading: {per_reading * 1000:.2f} ms per reading")
    print(f"bare sqlite3 insert + commit: {per_floor * 1000:.2f} ms per reading")
    print(f"ratio: {ratio:.1f} (target <= 3)")
    print(f"peak RSS: {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MB")
    if profiler:
        pstats.Stats(profiler).sort_stats("cumulative").print_stats(25)


if __name__ == "__main__":
    main()
