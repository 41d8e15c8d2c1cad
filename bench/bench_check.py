"""How long `inspectkit check` takes over a large database, against a bare SQL scan of it.

Builds its own database in a temporary folder (by default 1,000 sites over 15 years,
about 510,000 readings, 590,000 rows in all), then in one process times

- the floor: a bare SQL scan reading every row of every table the check reads, and
- the check: loading every site from the store as models and running the engine over
  it, exactly as `inspectkit check` does (table text made, not printed),

and prints their ratio and the process's peak memory. The database is built in a
child process so that building it does not count towards the peak.

    python bench/bench_check.py [--sites N] [--years N] [--repeat N] [--keep DIR] [--split]
"""

from __future__ import annotations

import argparse
import multiprocessing
import random
import resource
import shutil
import sys
import tempfile
import time
import uuid
from collections.abc import Iterator
from datetime import date, datetime, timedelta
from pathlib import Path
from typing import Any

from inspectkit.cli.check import _collector_paused, gather, render
from inspectkit.profiles import load_all_profiles
from inspectkit.store import Store
from inspectkit.store.queries import iter_site_records

TODAY = date(2026, 12, 1)
TABLES = ("site", "component", "instrument", "inspection", "reading", "finding", "photo")
#: Per site: down conductors, each with a test joint and an electrode; bonds.
JOINTS = 12
BONDS = 9
STAMP = "2026-01-01T00:00:00+00:00"


def _id(rng: random.Random) -> str:
    return str(uuid.UUID(int=rng.getrandbits(128), version=4))


def _stamped(row: dict[str, Any]) -> dict[str, Any]:
    return {**row, "created_at": STAMP, "updated_at": STAMP, "updated_by": "bench"}


def _site_rows(
    rng: random.Random, n: int, years: int, instruments: list[str]
) -> Iterator[tuple[str, dict[str, Any]]]:
    """(table, row) for one invented site: components, yearly visits, readings, findings."""
    site_id = _id(rng)
    yield (
        "site",
        _stamped(
            {
                "id": site_id,
                "name": f"Bench Site {n:05d}",
                "protection_level": rng.choice(["I", "II", "III", "IV"]),
                "profile": "iec-62305-3",
                "critical": int(rng.random() < 0.1),
                "explosive_risk": int(rng.random() < 0.05),
            }
        ),
    )

    parts: list[tuple[str, dict[str, Any]]] = []

    def component(kind: str, tag: str, parent: str | None = None) -> str:
        cid = _id(rng)
        parts.append(
            (
                "component",
                _stamped(
                    {
                        "id": cid,
                        "site_id": site_id,
                        "kind": kind,
                        "tag": tag,
                        "parent_id": parent,
                        "electrode_type": "rod" if kind == "earth_electrode" else None,
                    }
                ),
            )
        )
        return cid

    downs = [component("down_conductor", f"DC-{k:02d}") for k in range(1, JOINTS + 1)]
    joints = [component("test_joint", f"TJ-{k:02d}", d) for k, d in enumerate(downs, 1)]
    electrodes = [component("earth_electrode", f"E-{k:02d}", j) for k, j in enumerate(joints, 1)]
    counter = component("strike_counter", "SC-01", downs[0])
    bonds = [component("bonding", f"B-{k:02d}") for k in range(1, BONDS + 1)]
    yield from parts
    base = [rng.uniform(2, 9) for _ in electrodes]
    drift = [rng.choice([0.0, 0.0, 0.0, 0.3, 0.8]) for _ in electrodes]
    strikes = 0
    stop = years - rng.choice([0, 0, 0, 1, 3])  # some sites fall behind: overdue
    first = TODAY.year - years
    for year in range(stop):
        for kind, month in (("complete", 3), ("visual", 9)):
            day = date(first + year, month, rng.randint(1, 28))
            if day > TODAY:
                continue
            iid = _id(rng)
            yield (
                "inspection",
                _stamped(
                    {
                        "id": iid,
                        "site_id": site_id,
                        "kind": kind,
                        "date": day.isoformat(),
                        "state": "signed",
                        "finished": 1,
                        "signed_at": f"{day.isoformat()}T17:00:00+00:00",
                    }
                ),
            )
            at = datetime(day.year, day.month, day.day, 10).isoformat() + "+00:00"
            instrument = rng.choice(instruments)

            def reading(
                component_id: str,
                quantity: str,
                value: float,
                method: str,
                joint: str | None = None,
                iid: str = iid,
                at: str = at,
                instrument: str | None = instrument,
            ) -> tuple[str, dict[str, Any]]:
                return "reading", _stamped(
                    {
                        "id": _id(rng),
                        "inspection_id": iid,
                        "component_id": component_id,
                        "quantity": quantity,
                        "value": value,
                        "method": method,
                        "joint_state": joint,
                        "taken_at": at,
                        "instrument_id": None if quantity == "strike_count" else instrument,
                    }
                )

            strikes += rng.random() < 0.1
            yield reading(counter, "strike_count", float(strikes), "counter_read")
            if kind == "visual":
                continue
            for e, b, d in zip(electrodes, base, drift, strict=True):
                value = max(0.5, b + d * year + rng.gauss(0, 0.4))
                yield reading(e, "earth_isolated", round(value, 2), "fall_of_potential_3p", "open")
            for c in downs:
                yield reading(c, "continuity", round(rng.uniform(0.01, 0.25), 3), "low_ohm_4w")
            yield reading(
                joints[0],
                "earth_combined",
                round(rng.uniform(0.5, 4), 2),
                "fall_of_potential_3p",
                "closed",
            )
            for c in bonds:
                yield reading(c, "bonding", round(rng.uniform(0.01, 1.2), 3), "low_ohm_4w")
            if rng.random() < 0.2:
                yield (
                    "finding",
                    _stamped(
                        {
                            "id": _id(rng),
                            "inspection_id": iid,
                            "component_id": rng.choice(downs),
                            "grade": rng.choice(["defect", "needs_attention"]),
                            "text": "fixing loose",
                            "due_by": (day + timedelta(days=90)).isoformat(),
                        }
                    ),
                )


def build(path: Path, sites: int, years: int) -> dict[str, int]:
    """Write the bench database; rows go straight into the tables (setup, not measured)."""
    rng = random.Random(62305)
    counts = dict.fromkeys(TABLES, 0)
    with Store.open(path, user="bench") as store:
        instruments = []
        rows: dict[str, list[dict[str, Any]]] = {t: [] for t in TABLES}
        for k in range(20):
            iid = _id(rng)
            instruments.append(iid)
            lapsed = "2020-01-01" if k == 0 else "2099-01-01"
            rows["instrument"].append(
                _stamped(
                    {
                        "id": iid,
                        "description": "earth tester",
                        "serial": f"SN-{k}",
                        "calibration_due": lapsed,
                    }
                )
            )
        for n in range(sites):
            for table, row in _site_rows(rng, n, years, instruments):
                rows[table].append(row)
            if n % 50 == 49 or n == sites - 1:
                with store.db.atomic():
                    for table in TABLES:
                        if rows[table]:
                            store.db[table].insert_all(rows[table], batch_size=2000)
                            counts[table] += len(rows[table])
                            rows[table] = []
        store.db.analyze()
    return counts


def floor(path: Path) -> int:
    """A bare scan: every row of every table the check reads, fetched and dropped."""
    rows = 0
    with Store.open(path, create=False) as store:
        for table in TABLES:
            for _ in store.db.execute(f"SELECT * FROM [{table}]"):
                rows += 1
    return rows


def run_load(path: Path) -> int:
    """Only the loading part of the check: every site's records as models, then dropped."""
    sites = 0
    with Store.open(path, create=False) as store:
        with _collector_paused():  # as `gather` runs it
            for _ in iter_site_records(store):
                sites += 1
    return sites


def run_check(path: Path) -> tuple[int, int]:
    """The `inspectkit check` path: load every site as models, run the engine, make the text."""
    with Store.open(path, create=False) as store:
        checks = gather(store, TODAY, profiles=load_all_profiles())
        lines = list(render(checks))
    return len(checks), len(lines)


def _timed(fn: Any, *args: Any) -> tuple[float, float, Any]:
    """Wall-clock and CPU seconds of one call, and what it returned.

    The machine is shared, so CPU time (this process only) is printed beside the
    wall clock: it is what another process's load disturbs least.
    """
    wall, cpu = time.perf_counter(), time.process_time()
    out = fn(*args)
    return time.perf_counter() - wall, time.process_time() - cpu, out


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sites", type=int, default=1000)
    parser.add_argument("--years", type=int, default=15)
    parser.add_argument("--repeat", type=int, default=3, help="runs of each; the best counts")
    parser.add_argument("--keep", type=Path, help="build the database in this folder and keep it")
    parser.add_argument(
        "--split", action="store_true", help="also time loading alone, to split load from engine"
    )
    args = parser.parse_args(argv)
    folder = args.keep or Path(tempfile.mkdtemp(prefix="bench-check-"))
    folder.mkdir(parents=True, exist_ok=True)
    try:
        return _measure(folder / "bench.sqlite", args)
    finally:
        if args.keep is None:
            shutil.rmtree(folder, ignore_errors=True)


def _measure(path: Path, args: argparse.Namespace) -> int:
    if not path.exists():
        start = time.perf_counter()
        child = multiprocessing.get_context("spawn").Process(
            target=build, args=(path, args.sites, args.years)
        )
        child.start()
        child.join()
        if child.exitcode != 0:
            print("building the bench database failed", file=sys.stderr)
            return 1
        print(f"built {path} in {time.perf_counter() - start:.1f} s")
    rss_before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    floors, checks = [], []
    for _ in range(args.repeat):  # alternated, so a busy spell on the machine hits both
        floors.append(_timed(floor, path))
        checks.append(_timed(run_check, path))
    loads = [_timed(run_load, path) for _ in range(args.repeat if args.split else 0)]
    floor_s, floor_cpu, rows = min(floors)
    check_s, check_cpu, (sites, lines) = min(checks)
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"rows scanned: {rows:,} ({sites:,} sites; {lines:,} lines of output)")
    with Store.open(path, create=False) as store:
        print(f"readings: {store.db['reading'].count:,}")
    print(
        f"floor (bare SQL scan): {floor_s:.2f} s wall, {floor_cpu:.2f} s CPU"
        f" (best of {args.repeat} each)"
    )
    print(f"check (load + engine): {check_s:.2f} s wall, {check_cpu:.2f} s CPU")
    if loads:
        load_s, load_cpu, _ = min(loads)
        print(
            f"  of which loading (iter_site_records): {load_s:.2f} s wall, {load_cpu:.2f} s CPU;"
            f" engine and text: about {check_s - load_s:.2f} s"
        )
    print(
        f"ratio check/floor: {check_s / floor_s:.2f} wall, {check_cpu / floor_cpu:.2f} CPU"
        "  (target <= 3)"
    )
    print(
        f"peak memory (ru_maxrss): {peak_mb:.0f} MB (before check {rss_before / 1024:.0f} MB;"
        " target <= 300 MB)"
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
