"""The record store: schema versions, transactions, the audit chain, photos, frozen records."""

from __future__ import annotations

import os
import sqlite3
from datetime import UTC, date, datetime
from pathlib import Path

import pytest
import sqlite_utils
from PIL import Image

from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    InspectionState,
    Instrument,
    Photo,
    Reading,
    Site,
)
from inspectkit.store import FrozenRecordError, NewerSchemaError, Store, StoreError, audit
from inspectkit.store.opening import apply_migrations
from inspectkit.store.photos import attach_photo, photo_path
from inspectkit.store.rows import to_row
from inspectkit.store.schema import SCHEMA_VERSION

TAKEN = datetime(2026, 5, 4, 10, 30, tzinfo=UTC)


def make_site(store: Store) -> tuple[Site, Component, Inspection]:
    site = store.save(Site(name="Harrowgate Mill", protection_level="II"))
    joint = store.save(Component(site_id=site.id, kind="test_joint", tag="TJ-01"))
    visit = store.save(Inspection(site_id=site.id, kind="complete", date=date(2026, 5, 4)))
    return site, joint, visit


def earth(visit: Inspection, joint: Component, value: float = 4.2) -> Reading:
    return Reading(
        inspection_id=visit.id,
        component_id=joint.id,
        quantity="earth_isolated",
        value=value,
        method="fall_of_potential_3p",
        joint_state="open",
        taken_at=TAKEN,
    )


def file_bytes(path: Path) -> bytes:
    return path.read_bytes()


def save_in_old_schema(db: sqlite_utils.Database, record: Site | Inspection | Instrument) -> None:
    """Write a record as an older inspectkit did: only the columns its schema had, audited."""
    table = db[record.table]
    columns = {c.name for c in table.columns}
    table.insert({k: v for k, v in to_row(record).items() if k in columns})
    stored = dict(table.get(record.id))
    change = (record.table, record.id, "insert", None, stored)
    at = record.updated_at.isoformat()
    db["audit"].insert_all(audit.make_entries(audit.last_hash(db), [change], at=at, who="old"))


def test_new_database_has_current_schema_wal_and_foreign_keys(db_path: Path) -> None:
    with Store.open(db_path) as store:
        assert store.schema_version() == SCHEMA_VERSION
        assert store.db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
        assert store.db.execute("PRAGMA foreign_keys").fetchone()[0] == 1
        assert store.db.execute("PRAGMA busy_timeout").fetchone()[0] >= 5000
        meta = dict(store.db.execute("SELECT key, value FROM meta").fetchall())
        assert meta["created_by_version"]


def test_database_of_schema_1_migrates_and_keeps_its_records(db_path: Path) -> None:
    db = sqlite_utils.Database(db_path)
    apply_migrations(db, upto=1)
    site = Site(name="Old Chapel", protection_level="III")
    save_in_old_schema(db, site)
    db.close()

    with Store.open(db_path) as store:
        assert store.schema_version() == SCHEMA_VERSION
        assert store.get(Site, site.id).name == "Old Chapel"
        assert "setting" in store.db.table_names()
        assert store.verify_audit() == []
    backup = db_path.with_name(f"{db_path.name}.before-schema-2.bak")
    assert backup.exists(), "a backup is taken before every migration"


def test_database_of_schema_2_gains_the_report_fields_and_keeps_its_records(
    db_path: Path,
) -> None:
    db = sqlite_utils.Database(db_path)
    apply_migrations(db, upto=2)
    site = Site(name="Old Chapel", protection_level="III")
    visit = Inspection(site_id=site.id, kind="visual", date=date(2026, 5, 4))
    save_in_old_schema(db, site)
    save_in_old_schema(db, visit)
    db.close()

    with Store.open(db_path) as store:
        assert store.schema_version() == SCHEMA_VERSION
        kept = store.get(Site, site.id)
        assert kept.name == "Old Chapel"
        assert (kept.installer, kept.built_year, kept.earthing_arrangement) == ("", None, None)
        assert store.get(Inspection, visit.id).accompanied_by == ""
        assert store.verify_audit() == [], "the new columns are logged, not taken for an edit"
        store.save(
            Site.model_validate({**kept.model_dump(), "use": "chapel", "earthing_arrangement": "a"})
        )
        assert store.get(Site, site.id).earthing_arrangement == "A"
        assert store.verify_audit() == []
    backup = db_path.with_name(f"{db_path.name}.before-schema-3.bak")
    assert backup.exists(), "a backup is taken before every migration"
    assert "installer" not in {c.name for c in sqlite_utils.Database(backup)["site"].columns}


def test_database_of_a_newer_version_is_refused(db_path: Path) -> None:
    with Store.open(db_path) as store:
        store.db.execute("UPDATE meta SET value = '99' WHERE key = 'schema_version'")
    with pytest.raises(NewerSchemaError, match="newer inspectkit"):
        Store.open(db_path)


def test_a_file_that_is_not_a_database(tmp_path: Path) -> None:
    path = tmp_path / "notes.sqlite"
    path.write_text("shopping list\n" * 200)
    with pytest.raises(StoreError, match="not an inspectkit database"):
        Store.open(path)


def test_every_write_leaves_an_audit_row(store: Store) -> None:
    site, joint, visit = make_site(store)
    reading = store.save(earth(visit, joint))
    store.save(reading.model_copy(update={"value": 4.4}))
    rows = list(store.db.query("SELECT table_name, row_id, action, who FROM audit ORDER BY seq"))
    assert [(r["table_name"], r["action"]) for r in rows] == [
        ("site", "insert"),
        ("component", "insert"),
        ("inspection", "insert"),
        ("reading", "insert"),
        ("reading", "update"),
    ]
    assert {r["who"] for r in rows} == {"test"}
    assert store.verify_audit() == []


def test_saving_an_unchanged_record_writes_nothing(store: Store) -> None:
    site, _, _ = make_site(store)
    count = store.db["audit"].count
    store.save(store.get(Site, site.id), touch=False)
    assert store.db["audit"].count == count


def test_a_reading_edited_with_plain_sql_is_found_and_named(db_path: Path) -> None:
    with Store.open(db_path) as store:
        _, joint, visit = make_site(store)
        reading = store.save(earth(visit, joint))
    conn = sqlite3.connect(db_path)
    conn.execute("UPDATE reading SET value = 2.1 WHERE id = ?", [reading.id])
    conn.commit()
    conn.close()
    with Store.open(db_path) as store:
        problems = store.verify_audit()
    assert len(problems) == 1
    assert problems[0].table == "reading" and problems[0].row_id == reading.id
    assert "value: 4.2 → 2.1" in problems[0].message


def test_an_audit_row_edited_with_plain_sql_is_found(db_path: Path) -> None:
    with Store.open(db_path) as store:
        make_site(store)
    conn = sqlite3.connect(db_path)
    conn.execute("UPDATE audit SET who = 'someone else' WHERE seq = 2")
    conn.commit()
    conn.close()
    with Store.open(db_path) as store:
        problems = store.verify_audit()
    assert [p.row_id for p in problems] == ["2"]
    assert "altered" in problems[0].message


def test_a_removed_audit_row_breaks_the_chain(db_path: Path) -> None:
    with Store.open(db_path) as store:
        make_site(store)
    conn = sqlite3.connect(db_path)
    conn.execute("DELETE FROM audit WHERE seq = 2")
    conn.commit()
    conn.close()
    with Store.open(db_path) as store:
        messages = [p.message for p in store.verify_audit()]
    assert any("chain is broken" in m for m in messages)
    assert any("has no audit entry" in m for m in messages)


def test_a_record_added_or_deleted_behind_the_tools_back(db_path: Path) -> None:
    with Store.open(db_path) as store:
        site, joint, _ = make_site(store)
    conn = sqlite3.connect(db_path)
    conn.execute("DELETE FROM component WHERE id = ?", [joint.id])
    conn.commit()
    conn.close()
    with Store.open(db_path) as store:
        messages = [p.message for p in store.verify_audit()]
    assert messages == [f"component {joint.id} is missing; it was deleted outside inspectkit"]


def test_a_failed_write_leaves_the_database_as_it_was(db_path: Path) -> None:
    with Store.open(db_path) as store:
        _, joint, visit = make_site(store)
    before = file_bytes(db_path)
    with Store.open(db_path) as store:
        good = earth(visit, joint)
        orphan = earth(visit, joint).model_copy(update={"component_id": "no-such-component"})
        with pytest.raises(sqlite3.IntegrityError):
            store.save_all([good, orphan])
        assert store.get(Reading, good.id) is None
        assert store.db["audit"].count == 3
        store.db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    assert file_bytes(db_path) == before


def test_transaction_groups_saves_and_rolls_back_together(store: Store) -> None:
    _, joint, visit = make_site(store)
    with pytest.raises(RuntimeError):
        with store.transaction():
            store.save(earth(visit, joint))
            with store.transaction():
                store.save(earth(visit, joint, 5.0))
            raise RuntimeError("battery pulled")
    assert store.select(Reading) == []
    assert store.verify_audit() == []


def test_same_photo_is_stored_once(tmp_path: Path, db_path: Path) -> None:
    picture = tmp_path / "tj01.jpg"
    image = Image.new("RGB", (64, 48), "olive")
    exif = Image.Exif()
    exif[0x0112] = 6
    exif.get_ifd(0x8769)[0x9003] = "2026:05:04 10:31:00"
    image.save(picture, exif=exif)
    with Store.open(db_path) as store:
        _, joint, visit = make_site(store)
        first = attach_photo(store, picture, inspection_id=visit.id, component_id=joint.id)
        second = attach_photo(store, picture, inspection_id=visit.id, caption="again")
        assert first.sha256 == second.sha256 and first.id != second.id
        assert first.orientation == 6
        assert first.taken_at == datetime(2026, 5, 4, 10, 31, tzinfo=UTC)
        assert photo_path(store, first.sha256).read_bytes() == picture.read_bytes()
        files = [p for p in store.photos_dir.rglob("*") if p.is_file()]
        assert len(files) == 1
        assert len(store.select(Photo)) == 2


@pytest.mark.skipif(not Path("/proc/self/fd").is_dir(), reason="names open files through /proc")
def test_a_photo_is_on_the_disk_before_its_record_is_committed(
    tmp_path: Path, db_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """The file and the folder it was renamed into are synced before the record is saved."""
    events: list[str] = []
    real_fsync = os.fsync
    monkeypatch.setattr(
        os, "fsync", lambda fd: (events.append(os.readlink(f"/proc/self/fd/{fd}")), real_fsync(fd))
    )
    picture = tmp_path / "er01.jpg"
    Image.new("RGB", (32, 24), "teal").save(picture)
    with Store.open(db_path) as store:
        _, joint, visit = make_site(store)
        real_save = store.save
        monkeypatch.setattr(store, "save", lambda r: (events.append("commit"), real_save(r))[1])
        photo = attach_photo(store, picture, inspection_id=visit.id, component_id=joint.id)
        stored = photo_path(store, photo.sha256)
    commit = events.index("commit")
    synced = [Path(name) for name in events[:commit]]
    assert any(p.parent == stored.parent and p.name.startswith(".incoming-") for p in synced)
    assert stored.parent in synced


def test_a_file_that_is_not_a_photo_is_refused(tmp_path: Path, db_path: Path) -> None:
    text = tmp_path / "note.jpg"
    text.write_text("not an image")
    with Store.open(db_path) as store, pytest.raises(StoreError, match="not a photo"):
        attach_photo(store, text)


def signed(store: Store) -> tuple[Inspection, Component, Reading, Finding]:
    _, joint, visit = make_site(store)
    reading = store.save(earth(visit, joint))
    finding = store.save(
        Finding(inspection_id=visit.id, component_id=joint.id, grade="defect", text="clamp loose")
    )
    visit = store.save(
        visit.model_copy(
            update={"state": InspectionState.SIGNED, "signed_at": TAKEN, "report_sha256": "ab" * 32}
        )
    )
    return visit, joint, reading, finding


def test_a_signed_inspection_is_frozen(store: Store) -> None:
    visit, joint, reading, finding = signed(store)
    with pytest.raises(FrozenRecordError, match="amendment"):
        store.save(visit.model_copy(update={"weather": "rain"}))
    with pytest.raises(FrozenRecordError):
        store.save(reading.model_copy(update={"value": 3.0}))
    with pytest.raises(FrozenRecordError):
        store.save(earth(visit, joint, 9.0))
    with pytest.raises(FrozenRecordError):
        store.delete(Reading, reading.id)
    with pytest.raises(FrozenRecordError):
        store.delete(Inspection, visit.id)
    assert store.get(Reading, reading.id).value == 4.2


def test_a_later_inspection_may_resolve_a_signed_finding(store: Store) -> None:
    visit, _, _, finding = signed(store)
    later = store.save(Inspection(site_id=visit.site_id, kind="visual", date=date(2026, 5, 20)))
    store.save(finding.model_copy(update={"resolved_by": later.id}))
    assert store.get(Finding, finding.id).resolved_by == later.id
    with pytest.raises(FrozenRecordError):
        store.save(finding.model_copy(update={"text": "nothing wrong"}))


def test_settings_are_kept_and_audited(store: Store) -> None:
    assert store.get_setting("cautions_acknowledged") is None
    store.set_setting("cautions_acknowledged", "2026-06-01")
    store.set_setting("cautions_acknowledged", "2026-06-02")
    assert store.get_setting("cautions_acknowledged") == "2026-06-02"
    assert store.db["audit"].count == 2


def test_rows_given_with_records_must_match_them_one_to_one(store: Store) -> None:
    site = Site(name="Harrowgate Mill", protection_level="II")
    with pytest.raises(ValueError, match="one per record"):
        store.save_all([site], rows=[])
    with pytest.raises(ValueError, match="touch=False"):
        store.save_all([site], rows=[{}])
    assert store.select(Site) == []


def test_a_database_from_before_drafts_and_retiring_migrates(db_path: Path) -> None:
    from inspectkit.store.schema import MIGRATIONS, _entry_drafts

    db = sqlite_utils.Database(db_path)
    apply_migrations(db, upto=MIGRATIONS.index(_entry_drafts))
    tester = Instrument(description="Earth tester", serial="ET-1")
    save_in_old_schema(db, tester)
    db.close()

    with Store.open(db_path) as store:
        assert store.schema_version() == SCHEMA_VERSION
        assert store.get(Instrument, tester.id).retired_on is None
        assert {"entry_draft", "walkdown_place"} <= set(store.db.table_names())
        assert store.verify_audit() == [], "the new column is logged, not taken for an edit"
