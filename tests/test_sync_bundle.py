"""Bundles between databases: export, import, merge rules, conflicts, signed records kept."""

from __future__ import annotations

import json
import zipfile
from datetime import UTC, date, datetime
from pathlib import Path

import pytest
from sync_factories import (
    build_site,
    copy_db,
    edit,
    file_hash,
    jpeg,
    photo_files,
    record_rows,
    sign,
)
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import RECORD_TYPES, Finding, Grade, Inspection, Reading, Site, new_id
from inspectkit.store import Store
from inspectkit.store.health import check_health
from inspectkit.store.photos import attach_photo
from inspectkit.sync.bundle import FORMAT, VERSION, export_bundle
from inspectkit.sync.guard import BundleError
from inspectkit.sync.merge import import_bundle


@pytest.fixture
def office(tmp_path: Path) -> tuple[Store, object]:
    store = Store.open(tmp_path / "office.sqlite", user="office")
    records = build_site(store, tmp_path / "in")
    yield store, records
    store.close()


def _laptop(tmp_path: Path, office_store: Store, name: str = "laptop") -> Store:
    """A second database that received the office's site by bundle."""
    bundle = export_bundle(office_store, _site_id(office_store), tmp_path / f"to-{name}.zip").path
    laptop = Store.open(tmp_path / f"{name}.sqlite", user=name)
    import_bundle(laptop, bundle)
    return laptop


def _site_id(store: Store) -> str:
    return store.select(Site)[0].id


def _audit_count(store: Store) -> int:
    return store.db.execute("SELECT COUNT(*) FROM audit").fetchone()[0]


def test_bundle_layout_names_format_version_and_hashes(office, tmp_path):
    store, records = office
    summary = export_bundle(store, records.site.id, tmp_path / "b.zip")
    with zipfile.ZipFile(summary.path) as archive:
        names = set(archive.namelist())
        manifest = json.loads(archive.read("manifest.json"))
    assert {"manifest.json", "records.json"} <= names
    assert manifest["format"] == FORMAT and manifest["version"] == VERSION
    assert manifest["site_id"] == records.site.id
    assert manifest["counts"]["reading"] == 3 and manifest["counts"]["photos"] == 1
    assert set(manifest["members"]) == names - {"manifest.json"}


def test_a_fresh_database_receives_every_row_and_photo(office, tmp_path):
    store, _ = office
    laptop = _laptop(tmp_path, store)
    assert record_rows(laptop) == record_rows(store)
    assert photo_files(laptop) == photo_files(store) != set()
    assert laptop.verify_audit() == []


def test_importing_the_same_bundle_twice_changes_nothing(office, tmp_path):
    store, records = office
    bundle = export_bundle(store, records.site.id, tmp_path / "b.zip").path
    laptop = Store.open(tmp_path / "laptop.sqlite")
    first = import_bundle(laptop, bundle)
    rows, audits = record_rows(laptop), _audit_count(laptop)
    second = import_bundle(laptop, bundle)
    assert first.changed and not second.changed
    assert second.unchanged == sum(first.added.values())
    assert record_rows(laptop) == rows and _audit_count(laptop) == audits


def test_newer_copy_updates_an_older_one_without_conflict(office, tmp_path):
    store, records = office
    laptop = _laptop(tmp_path, store)
    site = laptop.get(Site, records.site.id)
    laptop.save(site.model_copy(update={"notes": "roof hatch key at reception"}))
    report = import_bundle(store, export_bundle(laptop, site.id, tmp_path / "back.zip").path)
    assert report.updated == {"site": 1} and report.conflicts == []
    assert store.get(Site, site.id).notes == "roof hatch key at reception"


def test_two_databases_edit_offline_exchange_both_ways_and_end_identical(office, tmp_path):
    store, records = office
    laptop = _laptop(tmp_path, store)
    site_id = records.site.id
    # Offline on both sides: the same site edited twice, the laptop's edit later.
    edit(store, store.get(Site, site_id), 1, notes="office: gate code 4471")
    store.save(
        Finding(inspection_id=records.inspection.id, grade=Grade.DEFECT, text="bond missing")
    )
    edit(laptop, laptop.get(Site, site_id), 2, notes="laptop: gate code 4417")
    reading = laptop.get(Reading, records.readings[1].id)
    laptop.save(reading.model_copy(update={"note": "probe moved to 62 %"}))

    to_laptop = import_bundle(laptop, export_bundle(store, site_id, tmp_path / "o.zip").path)
    to_office = import_bundle(store, export_bundle(laptop, site_id, tmp_path / "l.zip").path)

    conflicts = to_laptop.conflicts + to_office.conflicts
    assert [(c.table, c.record_id, c.kept) for c in conflicts] == [("site", site_id, "ours")]
    assert record_rows(store) == record_rows(laptop)
    assert photo_files(store) == photo_files(laptop)
    assert store.get(Site, site_id).notes == "laptop: gate code 4417"
    assert store.get(Reading, reading.id).note == "probe moved to 62 %"
    # Both versions are kept in the laptop's audit log, as a conflict row.
    logged = laptop.db.execute(
        "SELECT before, after FROM audit WHERE action = 'conflict' AND row_id = ?", [site_id]
    ).fetchall()
    assert len(logged) == 1
    assert json.loads(logged[0][0])["notes"] == "office: gate code 4471"
    assert json.loads(logged[0][1])["notes"] == "laptop: gate code 4417"
    assert store.verify_audit() == [] and laptop.verify_audit() == []
    # A further round changes nothing and reports nothing.
    again = import_bundle(laptop, export_bundle(store, site_id, tmp_path / "o2.zip").path)
    assert not again.changed and again.conflicts == []


@pytest.mark.parametrize(
    ("prefer", "kept", "notes"), [("ours", "ours", "A"), ("theirs", "theirs", "B")]
)
def test_prefer_decides_a_conflict(office, tmp_path, prefer, kept, notes):
    store, records = office
    laptop = _laptop(tmp_path, store)
    site_id = records.site.id
    edit(laptop, laptop.get(Site, site_id), 1, notes="B")
    edit(store, store.get(Site, site_id), 2, notes="A")  # ours is newer
    report = import_bundle(
        store, export_bundle(laptop, site_id, tmp_path / "l.zip").path, prefer=prefer
    )
    assert [c.kept for c in report.conflicts] == [kept]
    assert store.get(Site, site_id).notes == notes
    assert store.verify_audit() == []


def test_a_signed_inspection_survives_an_import_that_tries_to_change_it(office, tmp_path):
    store, records = office
    store.close()
    other = Store.open(copy_db(tmp_path / "office.sqlite", tmp_path / "other.sqlite"))
    store = Store.open(tmp_path / "office.sqlite")
    signed = sign(store, store.get(Inspection, records.inspection.id))
    # The other database still holds the draft and changes it and its readings.
    draft = other.get(Inspection, signed.id)
    other.save(draft.model_copy(update={"notes": "rewritten after signing"}))
    reading = other.get(Reading, records.readings[0].id)
    other.save(reading.model_copy(update={"value": 99.0}))
    added = other.save(records.readings[0].model_copy(update={"id": new_id(), "value": 5.0}))
    rows_before = record_rows(store)

    report = import_bundle(store, export_bundle(other, records.site.id, tmp_path / "x.zip").path)

    assert record_rows(store) == rows_before
    assert store.get(Inspection, signed.id).state.value == "signed"
    assert store.get(Reading, reading.id).value == reading.value
    assert len(report.kept_signed) == 2
    assert all("signed inspection" in message for message in report.kept_signed)
    assert [(c.table, c.kept) for c in report.conflicts] == [("inspection", "ours")]
    assert store.verify_audit() == []
    # The other way, the signed copy and what it recorded replace the edited draft.
    back = import_bundle(other, export_bundle(store, records.site.id, tmp_path / "s.zip").path)
    assert ("reading", "theirs") in [(c.table, c.kept) for c in back.conflicts]
    assert other.get(Inspection, signed.id).state.value == "signed"
    ours_rows, other_rows = record_rows(store), record_rows(other)
    for table, rows in ours_rows.items():
        assert set(rows) <= set(other_rows[table]), table
    # Only the reading added to the draft stays over there: bundles carry no deletions.
    extra = set(other_rows["reading"]) - set(ours_rows["reading"])
    assert [row[0] for row in extra] == [added.id]
    assert other.verify_audit() == []
    store.close()
    other.close()


def test_dry_run_reports_and_writes_nothing(office, tmp_path):
    store, records = office
    bundle = export_bundle(store, records.site.id, tmp_path / "b.zip").path
    Store.open(tmp_path / "laptop.sqlite").close()
    before = file_hash(tmp_path / "laptop.sqlite")
    with Store.open(tmp_path / "laptop.sqlite") as laptop:
        report = import_bundle(laptop, bundle, dry_run=True)
        assert report.dry_run and report.added["reading"] == 3 and report.photos_added == 1
        assert laptop.select(Site) == [] and photo_files(laptop) == set()
    assert file_hash(tmp_path / "laptop.sqlite") == before


def test_since_exports_only_what_changed_and_refuses_records_without_their_parents(
    office, tmp_path
):
    store, records = office
    past = datetime(2026, 6, 2, 12, tzinfo=UTC)
    everything = [r for model in RECORD_TYPES for r in store.select(model)]
    store.save_all([r.model_copy(update={"updated_at": past}) for r in everything], touch=False)
    laptop = _laptop(tmp_path, store)
    store.save(records.readings[0].model_copy(update={"id": new_id(), "value": 7.5}))
    summary = export_bundle(store, records.site.id, tmp_path / "s.zip", since=date.today())
    assert {t: n for t, n in summary.counts.items() if n} == {"site": 1, "reading": 1}
    assert import_bundle(laptop, summary.path).added == {"reading": 1}
    fresh = Store.open(tmp_path / "fresh.sqlite")
    with pytest.raises(BundleError, match="refers to inspection .* nor in this database"):
        import_bundle(fresh, summary.path)


def test_cli_export_and_import(office, tmp_path):
    store, records = office
    runner = CliRunner()
    out = tmp_path / "cli.zip"
    args = ["export", "--db", str(store.path), "--site", "Harbour", "-o", str(out)]
    result = runner.invoke(app, [*args, "--since", "2026-01-01"])
    assert result.exit_code == 0, result.output
    assert "reading 3" in result.output and "1 photo file." in result.output
    target = tmp_path / "new-laptop.sqlite"  # not there yet: the import makes it
    result = runner.invoke(app, ["import", str(out), "--db", str(target), "--dry-run"])
    assert result.exit_code == 0, result.output
    assert "would be added" in result.output
    result = runner.invoke(app, ["import", str(out), "--db", str(target), "--json"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.output)["added"]["reading"] == 3
    # A conflict is reported, and exits 1 so that a script notices.
    with Store.open(target) as laptop:
        edit(laptop, laptop.get(Site, records.site.id), 1, notes="laptop")
    edit(store, store.get(Site, records.site.id), 2, notes="office")
    back = tmp_path / "back.zip"
    runner.invoke(app, ["export", "--db", str(target), "--site", records.site.id, "-o", str(back)])
    result = runner.invoke(
        app, ["import", str(back), "--db", str(store.path), "--prefer", "theirs"]
    )
    assert result.exit_code == 1, result.output
    assert "conflict: site Harbour Mill" in result.output and "kept theirs" in result.output
    assert store.get(Site, records.site.id).notes == "laptop"


def test_a_photo_refused_with_its_signed_inspection_leaves_no_file_behind(office, tmp_path):
    store, records = office
    store.close()
    other = Store.open(copy_db(tmp_path / "office.sqlite", tmp_path / "other.sqlite"))
    store = Store.open(tmp_path / "office.sqlite")
    sign(store, store.get(Inspection, records.inspection.id))
    late = attach_photo(other, jpeg(tmp_path / "late.jpg", 7), inspection_id=records.inspection.id)
    files_before = photo_files(store)
    tree_before = set(store.photos_dir.rglob("*"))

    report = import_bundle(store, export_bundle(other, records.site.id, tmp_path / "x.zip").path)

    assert any(late.id in message for message in report.kept_signed)
    assert photo_files(store) == files_before and report.photos_added == 0
    assert set(store.photos_dir.rglob("*")) == tree_before, "an empty folder was left behind"
    assert check_health(store) == []


def test_cli_refuses_a_broken_bundle_with_exit_2(office, tmp_path):
    store, _ = office
    broken = tmp_path / "broken.zip"
    broken.write_bytes(b"not a zip at all")
    result = CliRunner().invoke(app, ["import", str(broken), "--db", str(store.path)])
    assert result.exit_code == 2
    assert "refused, nothing was changed" in result.output


def test_an_import_signing_one_inspection_and_refused_on_another_keeps_both_rules(office, tmp_path):
    """One refused record sends the merge record by record; the signing bundle still wins."""
    store, records = office
    second = Inspection(site_id=records.site.id, kind="visual", date=date(2026, 7, 1))
    late = Reading(**{**records.readings[2].model_dump(), "id": new_id(),
                      "inspection_id": second.id})  # fmt: skip
    store.save_all([second, late])
    store.close()
    laptop = Store.open(copy_db(tmp_path / "office.sqlite", tmp_path / "laptop.sqlite"))
    store = Store.open(tmp_path / "office.sqlite")
    # Office: signs the first inspection and edits the second's reading.
    sign(store, store.get(Inspection, records.inspection.id))
    edit(store, store.get(Reading, late.id), 5, note="re-read after rain")
    # Laptop: signs the second inspection and edits a reading of the first.
    sign(laptop, laptop.get(Inspection, second.id))
    edit(laptop, laptop.get(Reading, records.readings[0].id), 4, note="leads swapped")

    report = import_bundle(laptop, export_bundle(store, records.site.id, tmp_path / "o.zip").path)

    assert len(report.kept_signed) == 1 and late.id in report.kept_signed[0]
    assert laptop.get(Reading, late.id).note == ""
    assert laptop.get(Reading, records.readings[0].id).note == ""  # the signed copy's
    assert laptop.get(Inspection, records.inspection.id).state.value == "signed"
    assert laptop.verify_audit() == []
    laptop.close()
    store.close()


def test_every_demo_site_travels_to_a_fresh_database_and_back_unchanged(tmp_path):
    from inspectkit.demo.generate import build_demo

    source = Store.open(build_demo(tmp_path / "demo.sqlite", date(2026, 11, 1)))
    target = Store.open(tmp_path / "fresh.sqlite")
    for site in source.select(Site):
        report = import_bundle(target, export_bundle(source, site.id, tmp_path / "to.zip").path)
        assert not report.conflicts and not report.kept_signed, report.lines()
    assert record_rows(target) == record_rows(source)
    assert photo_files(target) == photo_files(source)
    assert target.verify_audit() == []
    for site in target.select(Site):
        report = import_bundle(source, export_bundle(target, site.id, tmp_path / "back.zip").path)
        assert not report.changed, report.lines()
    source.close()
    target.close()


def test_a_correction_saved_while_an_import_plans_is_never_overwritten(
    office, tmp_path, monkeypatch
):
    """The walkdown saves a correction at the worst moment: after the merge read our rows.

    The plan is made inside the import's write transaction, so the correction
    waits for the lock and lands after the import, instead of being overwritten
    by the other laptop's older value.
    """
    import sqlite3

    from inspectkit.sync import merge

    store, records = office
    laptop = _laptop(tmp_path, store)
    reading = records.readings[0]
    laptop.save(laptop.get(Reading, reading.id).model_copy(update={"note": "laptop's value"}))
    bundle = export_bundle(laptop, records.site.id, tmp_path / "back.zip").path
    walkdown = Store.open(tmp_path / "office.sqlite", user="walkdown")
    walkdown.db.execute("PRAGMA busy_timeout = 0")
    correction = store.get(Reading, reading.id).model_copy(update={"value": 12.5})
    waiting = []
    real_plan = merge._plan

    def plan_then_correct(*args, **kwargs):  # noqa: ANN002, ANN003, ANN202 - wraps _plan
        made = real_plan(*args, **kwargs)
        try:
            walkdown.save(correction)  # the forced interleaving: between plan and write
        except sqlite3.OperationalError as exc:
            assert "locked" in str(exc)
            waiting.append(correction)
        return made

    monkeypatch.setattr(merge, "_plan", plan_then_correct)
    import_bundle(store, bundle)
    for late in waiting:
        walkdown.save(late)  # the walkdown tries again once the lock is free
    assert waiting, "the correction got in between the plan and the write"
    assert store.get(Reading, reading.id).value == 12.5
    assert store.verify_audit() == []
    walkdown.close()
    laptop.close()
