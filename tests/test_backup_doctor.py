"""Backups (while another process writes, and before a migration) and the doctor's checks."""

from __future__ import annotations

import json
import shutil
import sqlite3
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pytest
import sqlite_utils
from sync_factories import build_site, file_hash, jpeg, photo_files
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Site
from inspectkit.store import Store
from inspectkit.store.health import check_health
from inspectkit.store.opening import apply_migrations
from inspectkit.store.photos import attach_photo, photo_path
from inspectkit.store.schema import SCHEMA_VERSION
from inspectkit.wording import counted

_WRITER = textwrap.dedent(
    """
    import sys
    from datetime import UTC, datetime
    from pathlib import Path
    from inspectkit.model import Method, Quantity, Reading
    from inspectkit.store import Store

    db, inspection, component, stop = sys.argv[1:5]
    with Store.open(db, user="writer") as store:
        n = 0
        while not Path(stop).exists() and n < 20000:
            store.save_all([
                Reading(inspection_id=inspection, component_id=component,
                        quantity=Quantity.CONTINUITY, value=0.01 * (n % 50 + 1),
                        method=Method.LOW_OHM_4W,
                        taken_at=datetime(2026, 6, 2, 10, tzinfo=UTC))
                for _ in range(5)
            ])
            n += 1
            if n == 1:
                Path(stop + ".started").touch()
    """
)


@pytest.mark.slow
def test_a_backup_taken_while_another_process_writes_restores_consistent(tmp_path):
    db = tmp_path / "busy.sqlite"
    with Store.open(db) as store:
        records = build_site(store, tmp_path / "in")
    stop = tmp_path / "stop"
    writer = subprocess.Popen(
        [
            sys.executable,
            "-c",
            _WRITER,
            str(db),
            records.inspection.id,
            records.joints[0].id,
            str(stop),
        ]  # fmt: skip
    )
    try:
        deadline = time.monotonic() + 60
        while not Path(f"{stop}.started").exists():
            assert writer.poll() is None, "the writer process stopped early"
            assert time.monotonic() < deadline
            time.sleep(0.05)
        backups = []
        with Store.open(db) as store:
            for n in range(3):
                backups.append(store.backup(tmp_path / f"copy-{n}.sqlite"))
                time.sleep(0.2)
    finally:
        stop.touch()
        writer.wait(timeout=60)
    assert writer.returncode == 0
    counts = []
    for path in backups:
        with Store.open(path, create=False) as copy:
            assert copy.db.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
            assert copy.verify_audit() == []
            counts.append(copy.db.execute("SELECT COUNT(*) FROM reading").fetchone()[0])
    # Each copy is a whole number of the writer's five-reading transactions.
    assert all((count - 3) % 5 == 0 for count in counts), counts
    assert counts[-1] > 3


def test_opening_an_older_schema_backs_it_up_first(tmp_path):
    db = tmp_path / "old.sqlite"
    old = sqlite_utils.Database(db)
    apply_migrations(old, upto=1)
    old.execute(
        "INSERT INTO site (id, name, protection_level, profile, created_at, updated_at) "
        "VALUES ('9c1f5e2a-3b4d-4c6e-8f70-1a2b3c4d5e6f', 'Old Depot', 'II', 'iec-62305-3', "
        "'2020-01-01T00:00:00Z', '2020-01-01T00:00:00Z')"
    )
    old.conn.commit()
    old.close()
    with Store.open(db) as store:
        assert store.schema_version() == SCHEMA_VERSION
    saved = tmp_path / "old.sqlite.before-schema-2.bak"
    assert saved.exists()
    with sqlite3.connect(saved) as conn:
        assert conn.execute("SELECT value FROM meta WHERE key='schema_version'").fetchone() == (
            "1",
        )
        assert conn.execute("SELECT name FROM site").fetchall() == [("Old Depot",)]
    conn.close()


def test_backup_command_writes_a_timestamped_checked_copy(tmp_path):
    db = tmp_path / "inspect.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path / "in")
    result = CliRunner().invoke(app, ["backup", "--db", str(db)])
    assert result.exit_code == 0, result.output
    made = list(tmp_path.glob("inspect.sqlite.*.bak"))
    assert len(made) == 1 and "checked: ok" in result.output
    with Store.open(made[0], create=False) as copy:
        assert [s.name for s in copy.select(Site)] == ["Harbour Mill"]
    again = CliRunner().invoke(app, ["backup", "--db", str(db), "-o", str(made[0])])
    assert again.exit_code == 2 and "exists already" in again.output


def test_doctor_finds_each_problem_and_says_how_to_fix_it(tmp_path):
    db = tmp_path / "inspect.sqlite"
    runner = CliRunner()
    with Store.open(db) as store:
        records = build_site(store, tmp_path / "in")
        assert check_health(store) == []
        kept = attach_photo(store, jpeg(tmp_path / "in" / "2.jpg", 2),
                            inspection_id=records.inspection.id)  # fmt: skip
    result = runner.invoke(app, ["doctor", "--db", str(db)])
    assert result.exit_code == 0 and "No problems found" in result.output

    with Store.open(db) as store:
        missing = photo_path(store, kept.sha256)
        damaged = next(p for p in photo_path(store, kept.sha256).parent.parent.rglob("*")
                       if p.is_file() and p != missing)  # fmt: skip
        missing.unlink()
        damaged.write_bytes(b"scribbled over")
        stray = store.photos_dir / "ab" / "stray.jpg"
        stray.parent.mkdir(exist_ok=True)
        stray.write_bytes(b"x")
    # A record changed behind inspectkit's back.
    raw = sqlite3.connect(db)
    raw.execute("UPDATE site SET notes = 'edited by hand'")
    raw.commit()
    raw.close()

    result = runner.invoke(app, ["doctor", "--db", str(db), "--json"])
    assert result.exit_code == 1
    found = {(p["check"], p["subject"]) for p in json.loads(result.output)}
    assert ("photo missing", f"photo {kept.id}") in found
    assert any(check == "photo damaged" for check, _ in found)
    assert ("file not referenced", str(stray)) in found
    assert ("audit", f"site {records.site.id}") in found
    text = runner.invoke(app, ["doctor", "--db", str(db)]).output
    assert text.count("  fix: ") == len(found)
    assert "inspectkit import BUNDLE" in text


def _damage_an_index(db: Path) -> None:
    with Store.open(db) as store:
        page_size = store.db.execute("PRAGMA page_size").fetchone()[0]
        root = store.db.execute(
            "SELECT rootpage FROM sqlite_master WHERE name = 'component_site'"
        ).fetchone()[0]
    data = bytearray(db.read_bytes())
    data[(root - 1) * page_size : root * page_size] = bytes(page_size)
    db.write_bytes(bytes(data))


def test_integrity_check_reports_a_damaged_index_page(tmp_path):
    db = tmp_path / "broken.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path / "in", joints=40)
    _damage_an_index(db)
    with Store.open(db) as store:
        problems = check_health(store, hash_photos=False)
    assert any(p.check == "integrity" and "inspectkit restore" in p.fix for p in problems)


def test_a_damaged_database_is_restored_from_its_backup(tmp_path):
    db = tmp_path / "office.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path / "in", joints=40)
    backup = tmp_path / "monday.bak"
    assert CliRunner().invoke(app, ["backup", "--db", str(db), "-o", str(backup)]).exit_code == 0
    _damage_an_index(db)
    result = CliRunner().invoke(app, ["restore", "--db", str(db), str(backup)])
    assert result.exit_code == 0, result.output
    assert "fails its check" in result.output  # what was replaced is kept anyway
    with Store.open(db) as store:
        assert check_health(store) == []
    assert list(tmp_path.glob("office.sqlite.before-restore-*.bak"))


def test_a_backup_carries_its_photos_and_opens_with_them(tmp_path):
    db = tmp_path / "inspect.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path / "in")
        names = photo_files(store)
    target = tmp_path / "safe" / "monday.bak"
    result = CliRunner().invoke(app, ["backup", "--db", str(db), "-o", str(target)])
    assert result.exit_code == 0, result.output
    assert f"{counted(len(names), 'photo file')} copied" in result.output
    with Store.open(target, create=False) as copy:
        assert copy.photos_dir == tmp_path / "safe" / "monday-photos"
        assert check_health(copy) == []  # every photo present, and each matches its hash
        assert photo_files(copy) == names


def test_a_backup_says_which_photos_it_could_not_carry(tmp_path):
    db = tmp_path / "inspect.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path / "in")
        (lost,) = store.db.execute("SELECT sha256 FROM photo").fetchone()
        photo_path(store, lost).unlink()
    target = tmp_path / "b.bak"
    result = CliRunner().invoke(app, ["backup", "--db", str(db), "-o", str(target)])
    assert result.exit_code == 1 and lost in result.output and "doctor" in result.output
    assert target.exists(), "the database itself is still backed up"


def test_a_backup_without_photos_says_to_copy_them(tmp_path):
    db = tmp_path / "inspect.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path / "in")
    target = tmp_path / "b.bak"
    result = CliRunner().invoke(app, ["backup", "--db", str(db), "-o", str(target), "--no-photos"])
    assert result.exit_code == 0 and "copy the folder" in result.output
    assert not (tmp_path / "b-photos").exists()


def test_a_restore_puts_the_backup_and_its_photos_back_and_keeps_what_it_replaced(tmp_path):
    db = tmp_path / "office.sqlite"
    with Store.open(db) as store:
        records = build_site(store, tmp_path / "in")
        names = photo_files(store)
    backup = tmp_path / "safe" / "monday.bak"
    assert CliRunner().invoke(app, ["backup", "--db", str(db), "-o", str(backup)]).exit_code == 0
    # Later work, then the photo folder lost.
    with Store.open(db) as store:
        store.save(store.get(Site, records.site.id).model_copy(update={"notes": "later"}))
        shutil.rmtree(store.photos_dir)
    result = CliRunner().invoke(app, ["restore", "--db", str(db), str(backup)])
    assert result.exit_code == 0, result.output
    assert f"{counted(len(names), 'photo file')} brought back" in result.output
    with Store.open(db) as store:
        assert store.get(Site, records.site.id).notes == ""
        assert photo_files(store) == names and check_health(store) == []
    (kept,) = tmp_path.glob("office.sqlite.before-restore-*.bak")
    with Store.open(kept, create=False) as replaced:
        assert replaced.get(Site, records.site.id).notes == "later"


def test_a_damaged_backup_is_refused_and_nothing_is_replaced(tmp_path):
    db = tmp_path / "office.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path / "in")
    before = file_hash(db)
    broken = tmp_path / "broken.bak"
    broken.write_bytes(b"SQLite format 3\x00" + b"\x00" * 200)
    result = CliRunner().invoke(app, ["restore", "--db", str(db), str(broken)])
    assert result.exit_code == 2 and "broken.bak" in result.output
    assert file_hash(db) == before
    assert not list(tmp_path.glob("*.before-restore-*.bak"))
