"""Benchmark: export and import a site with 20 years of readings and 200 photos.

Compared in the same process against the floor: copying the same photo files with
shutil and inserting the same rows into a fresh database with bare sqlite3. Both
run once untimed first (warm caches), then interleaved, each in a fresh folder;
the best of the runs counts. Prints both times (wall, and CPU split into user and
system), the ratio (target ≤ 2), the time to import the same bundle again, and
peak memory.

For reference it also times the same move bare through one zip file (rows as
JSON, photos stored, nothing checked): going through a file copies every photo
twice, and that share of the ratio is the format's, not the checks'.

Creating the photo files and folders is most of the floor's time; it is system
time, and on a shared disk it varies from run to run by a factor of two, which
moves the ratio. Each run starts after `os.sync()`, so that none pays for writing
back what an earlier one left in the cache. User time is the Python work alone.

Run: python bench/bench_sync.py [--photos 200] [--years 20] [--runs 7] [--phone-photos]
     [--profile]
"""

from __future__ import annotations

import argparse
import io
import json
import os
import random
import resource
import shutil
import sqlite3
import tempfile
import time
import tracemalloc
import zipfile
from datetime import UTC, date, datetime, timedelta
from pathlib import Path

import sqlite_utils
from PIL import Image

from inspectkit.model import (
    Component,
    ComponentKind,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    JointState,
    Method,
    Photo,
    Quantity,
    Reading,
    Site,
)
from inspectkit.report.keys import new_key
from inspectkit.report.publish import seal_signed
from inspectkit.store import Store
from inspectkit.store.opening import apply_migrations
from inspectkit.store.photos import file_sha256, photo_path, put_file
from inspectkit.store.schema import SCHEMA_VERSION
from inspectkit.store.seal import covered_now
from inspectkit.sync.bundle import export_bundle
from inspectkit.sync.merge import import_bundle

#: What each test joint gets at each visit: quantity, method, joint state, value range
#: (a joint carries earth readings only: a bundle with continuity on one is refused).
MEASURED = (
    (Quantity.EARTH_ISOLATED, Method.FALL_OF_POTENTIAL_3P, JointState.OPEN, 4.0, 40.0),
    (Quantity.EARTH_COMBINED, Method.FALL_OF_POTENTIAL_3P, JointState.CLOSED, 1.0, 9.0),
)
PASSPHRASE = b"bench passphrase"
TABLES = ("site", "component", "instrument", "inspector", "inspection", "reading", "finding",
          "photo")  # fmt: skip


def build(
    root: Path, years: int, photos: int, joints: int, *, phone: bool = False
) -> tuple[Store, str]:
    """An invented site: quarterly visits for `years`, each joint measured twice per visit.

    Photos are 90-290 KB, as a report-sized picture is; with `phone`, 1.7-2.3 MB, as
    a phone camera writes them.
    """
    rng = random.Random(7)
    store = Store.open(root / "source.sqlite", user="bench")
    site = store.save(Site(name="Lowmoor Grain Terminal", protection_level="II",
                           latitude=52.1, longitude=-1.3))  # fmt: skip
    tjs = [Component(site_id=site.id, kind=ComponentKind.TEST_JOINT, tag=f"TJ-{n:02d}")
           for n in range(1, joints + 1)]  # fmt: skip
    store.save_all(tjs)
    start = date(2026 - years, 1, 15)
    inspections = []
    for visit in range(years * 4):
        day = start + timedelta(days=91 * visit)
        inspection = Inspection(site_id=site.id, kind=InspectionKind.COMPLETE, date=day)
        readings = []
        for n, tj in enumerate(tjs):
            at = datetime(day.year, day.month, day.day, 9, tzinfo=UTC) + timedelta(minutes=3 * n)
            readings += [
                Reading(inspection_id=inspection.id, component_id=tj.id, quantity=quantity,
                        value=round(rng.uniform(low, high), 3), method=method,
                        joint_state=joint, taken_at=at)
                for quantity, method, joint, low, high in MEASURED
            ]  # fmt: skip
        findings = [
            Finding(
                inspection_id=inspection.id,
                component_id=rng.choice(tjs).id,
                grade=Grade.NEEDS_ATTENTION,
                text="clamp corroded",
            )
        ]
        store.save_all([inspection, *readings, *findings])  # fmt: skip
        inspections.append(inspection)
    pictures = root / "pictures"
    pictures.mkdir()
    records = []
    bases = []
    if phone:
        # Four 1.7-2.3 MB pictures; bytes after the JPEG end marker make each file its own.
        for width in (1800, 1900, 2000, 2100):
            buffer = io.BytesIO()
            noise = Image.effect_noise((width, width * 3 // 4), 60).convert("RGB")
            noise.save(buffer, "JPEG", quality=90)
            bases.append(buffer.getvalue())
    for n in range(photos):
        path = pictures / f"IMG_{n:04d}.jpg"
        if phone:
            path.write_bytes(bases[n % len(bases)] + rng.randbytes(16))
        else:
            width = rng.randint(430, 700)
            noise = Image.effect_noise((width, width * 3 // 4), rng.uniform(40, 90))
            noise.convert("RGB").save(path, "JPEG", quality=90)
        sha = put_file(store, path)
        inspection = inspections[n % len(inspections)]
        records.append(Photo(sha256=sha, original_name=path.name, inspection_id=inspection.id,
                             component_id=tjs[n % joints].id))  # fmt: skip
    store.save_all(records)
    # The last years' visits are signed and sealed, as the office would hold them.
    key = root / "keys" / "bench.p12"
    new_key(key, PASSPHRASE, name="Bench Inspector")
    signed = [
        seal_signed(i, covered_now(store, i.id), key, PASSPHRASE, report_sha256="0" * 64,
                    signed_at=datetime(i.date.year, i.date.month, i.date.day, 17, tzinfo=UTC))
        for i in inspections[-8:]
    ]  # fmt: skip
    store.save_all(signed)
    return store, site.id


def ours(source: Store, site_id: str, work: Path) -> dict[str, float]:
    """Export then import; the seconds each took."""
    started = time.perf_counter()
    bundle = export_bundle(source, site_id, work / "site.zip").path
    exported = time.perf_counter()
    with Store.open(work / "target.sqlite", user="bench") as target:
        import_bundle(target, bundle)
    return {"export": exported - started, "import": time.perf_counter() - exported}


def floor(source: Store, work: Path) -> None:
    """The same files and rows moved with nothing else: no checks, no audit, no merge."""
    folder = work / "floor-photos"
    for (sha,) in source.db.execute("SELECT DISTINCT sha256 FROM photo"):
        target = folder / sha[:2] / sha
        target.parent.mkdir(parents=True, exist_ok=True)
        shutil.copy(photo_path(source, sha), target)
    conn = sqlite3.connect(work / "floor.sqlite")
    conn.execute("PRAGMA journal_mode = WAL")
    apply_migrations(sqlite_utils.Database(conn), upto=SCHEMA_VERSION)
    with conn:
        for table in TABLES:
            cursor = source.db.execute(f"SELECT * FROM [{table}]")
            names = [d[0] for d in cursor.description]
            marks = ",".join("?" * len(names))
            conn.executemany(f"INSERT INTO [{table}] ({','.join(names)}) VALUES ({marks})", cursor)
    conn.close()


def floor_via_zip(source: Store, work: Path) -> None:
    """The same move through one zip file, bare: rows as JSON, photos stored, nothing checked.

    Not the issue's floor: a reference for how much of the ratio going through a
    file costs by itself, before any check, merge or audit row.
    """
    bundle = work / "bare.zip"
    shas = [sha for (sha,) in source.db.execute("SELECT DISTINCT sha256 FROM photo")]
    tables = {}
    for table in TABLES:
        cursor = source.db.execute(f"SELECT * FROM [{table}]")
        names = [d[0] for d in cursor.description]
        tables[table] = [dict(zip(names, values, strict=True)) for values in cursor]
    with zipfile.ZipFile(bundle, "w") as archive:
        archive.writestr("rows.json", json.dumps(tables), zipfile.ZIP_DEFLATED, compresslevel=1)
        for sha in shas:
            member = archive.open(f"photos/{sha}", "w")
            with photo_path(source, sha).open("rb") as src, member as out:
                shutil.copyfileobj(src, out, 1 << 20)
    folder = work / "bare-photos"
    with zipfile.ZipFile(bundle) as archive:
        rows = json.loads(archive.read("rows.json"))
        for sha in shas:
            target = folder / sha[:2] / sha
            target.parent.mkdir(parents=True, exist_ok=True)
            with archive.open(f"photos/{sha}") as member, target.open("wb") as out:
                shutil.copyfileobj(member, out, 1 << 20)
    conn = sqlite3.connect(work / "bare.sqlite")
    conn.execute("PRAGMA journal_mode = WAL")
    apply_migrations(sqlite_utils.Database(conn), upto=SCHEMA_VERSION)
    with conn:
        for table, table_rows in rows.items():
            if table_rows:
                names = list(table_rows[0])
                marks = ",".join("?" * len(names))
                conn.executemany(
                    f"INSERT INTO [{table}] ({','.join(names)}) VALUES ({marks})",
                    [tuple(row.values()) for row in table_rows],
                )
    conn.close()


def timed(fn, root: Path) -> tuple[tuple[float, float, float], dict[str, float]]:  # noqa: ANN001
    """Wall, user and system seconds of one run of fn(fresh folder), and its phases."""
    work = Path(tempfile.mkdtemp(dir=root, prefix="run-"))
    # Every run starts with nothing left to write back from the one before it.
    os.sync()
    before, started = resource.getrusage(resource.RUSAGE_SELF), time.perf_counter()
    parts = fn(work) or {}
    wall, after = time.perf_counter() - started, resource.getrusage(resource.RUSAGE_SELF)
    shutil.rmtree(work)
    return (wall, after.ru_utime - before.ru_utime, after.ru_stime - before.ru_stime), parts


def traced_peak(fn, root: Path) -> int:  # noqa: ANN001
    """Peak bytes of Python memory one run of fn(fresh folder) holds at once."""
    work = Path(tempfile.mkdtemp(dir=root, prefix="mem-"))
    tracemalloc.start()
    fn(work)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    shutil.rmtree(work)
    return peak


def again(source: Store, site_id: str, root: Path, runs: int) -> float:
    """Seconds of the fastest import of a bundle the database already took: nothing changes."""
    work = Path(tempfile.mkdtemp(dir=root, prefix="again-"))
    bundle = export_bundle(source, site_id, work / "site.zip").path
    best = float("inf")
    with Store.open(work / "target.sqlite", user="bench") as target:
        import_bundle(target, bundle)
        for _ in range(runs):
            started = time.perf_counter()
            import_bundle(target, bundle)
            best = min(best, time.perf_counter() - started)
    shutil.rmtree(work)
    return best


def check_copy(source: Store, site_id: str, root: Path) -> tuple[bool, bool, bool]:
    """Whether an export+import gave the same rows, intact photo files and a sound audit log."""
    work = Path(tempfile.mkdtemp(dir=root, prefix="check-"))
    ours(source, site_id, work)
    with Store.open(work / "target.sqlite") as target:
        same = all(
            sorted(target.db.execute(f"SELECT * FROM [{t}]").fetchall())
            == sorted(source.db.execute(f"SELECT * FROM [{t}]").fetchall())
            for t in TABLES
        )
        files_ok = all(file_sha256(p) == p.name for p in target.photos_dir.rglob("*")
                       if p.is_file())  # fmt: skip
        same_files = {p.name for p in target.photos_dir.rglob("*") if p.is_file()} == {
            p.name for p in source.photos_dir.rglob("*") if p.is_file()
        }
        audited = not target.verify_audit()
    shutil.rmtree(work)
    return same, files_ok and same_files, audited


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--years", type=int, default=20)
    parser.add_argument("--photos", type=int, default=200)
    parser.add_argument("--joints", type=int, default=30)
    parser.add_argument("--runs", type=int, default=7)
    parser.add_argument("--phone-photos", action="store_true", help="1.7-2.3 MB photos")
    parser.add_argument("--profile", action="store_true", help="print the real path's profile")
    args = parser.parse_args()
    with tempfile.TemporaryDirectory(prefix="bench-sync-") as tmp:
        root = Path(tmp)
        # The trust list and audit key it makes are the benchmark's, not the user's.
        os.environ["XDG_CONFIG_HOME"] = str(root / "config")
        source, site_id = build(root, args.years, args.photos, args.joints, phone=args.phone_photos)
        counts = {t: source.db.execute(f"SELECT COUNT(*) FROM [{t}]").fetchone()[0]
                  for t in TABLES}  # fmt: skip
        sizes = [p.stat().st_size for p in source.photos_dir.rglob("*") if p.is_file()]
        kb = f"{min(sizes) // 1024}-{max(sizes) // 1024} KB, {sum(sizes) / 1e6:.1f} MB"
        print(f"data: {counts['reading']} readings, {counts['inspection']} inspections, "
              f"{counts['finding']} findings, {len(sizes)} photos ({kb})")  # fmt: skip
        run_floor = lambda w: floor(source, w)  # noqa: E731
        run_zip = lambda w: floor_via_zip(source, w)  # noqa: E731
        run_ours = lambda w: ours(source, site_id, w)  # noqa: E731
        # One run of each first, untimed, so both start with warm caches; then
        # interleaved, so that a busy machine slows both alike; the best run of each.
        same, files_ok, audited = check_copy(source, site_id, root)
        timed(run_floor, root)
        timed(run_zip, root)
        best = {name: (float("inf"),) * 3 for name in ("floor", "zip", "ours")}
        phases: dict[str, float] = {}
        for _ in range(args.runs):
            for name, fn in (("floor", run_floor), ("zip", run_zip), ("ours", run_ours)):
                seconds, parts = timed(fn, root)
                best[name] = tuple(map(min, best[name], seconds))
                for phase, seconds in parts.items():
                    phases[phase] = min(seconds, phases.get(phase, seconds))
        peaks = {"floor": traced_peak(run_floor, root), "ours": traced_peak(run_ours, root)}
        again_s = again(source, site_id, root, 3)
        if args.profile:
            import cProfile
            import pstats

            profiler = cProfile.Profile()
            profiler.runcall(timed, run_ours, root)
            pstats.Stats(profiler).sort_stats("cumulative").print_stats(30)
        source.close()
    (floor_s, floor_user, floor_sys), (ours_s, ours_user, ours_sys) = best["floor"], best["ours"]
    print(f"floor (shutil.copy + bare INSERT): {floor_s * 1000:8.1f} ms "
          f"(user {floor_user * 1000:.0f} ms, system {floor_sys * 1000:.0f} ms)")  # fmt: skip
    print(
        f"export + import (checked, merged, audited): {ours_s * 1000:8.1f} ms "
        f"(user {ours_user * 1000:.0f} ms, system {ours_sys * 1000:.0f} ms; "
        f"export {phases['export'] * 1000:.1f} ms, import {phases['import'] * 1000:.1f} ms)"
    )
    print(f"ratio: {ours_s / floor_s:.2f} (target <= 2)")
    zip_s = best["zip"][0]
    print(
        f"for reference, the same move bare through one zip file: {zip_s * 1000:.1f} ms "
        f"({zip_s / floor_s:.2f} of the floor; export + import is {ours_s / zip_s:.2f} of it)"
    )
    print(f"the same bundle imported again (nothing to change): {again_s * 1000:.1f} ms")
    print(
        f"peak traced Python memory: export+import {peaks['ours'] / 1e6:.1f} MB, "
        f"floor {peaks['floor'] / 1e6:.1f} MB; "
        f"process peak RSS: {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MB"
    )
    print(f"target identical to source: rows {same}, photo files {files_ok}; audit sound {audited}")


if __name__ == "__main__":
    main()
