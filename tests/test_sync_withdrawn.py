"""A reading withdrawn on one laptop travels as a deletion, and never comes back by itself."""

from __future__ import annotations

from pathlib import Path

import pytest
from sync_factories import build_site, edit, photo_files, record_rows, sign

from inspectkit.model import Inspection, Photo, Quantity, Reading
from inspectkit.store import Store
from inspectkit.sync.bundle import export_bundle
from inspectkit.sync.merge import import_bundle
from inspectkit.walkdown.readings import withdraw_reading


@pytest.fixture
def pair(tmp_path: Path):
    """The office database and a laptop that received its site by bundle."""
    office = Store.open(tmp_path / "office.sqlite", user="office")
    records = build_site(office, tmp_path / "in")
    laptop = Store.open(tmp_path / "laptop.sqlite", user="laptop")
    import_bundle(laptop, export_bundle(office, records.site.id, tmp_path / "first.zip").path)
    yield office, laptop, records
    office.close()
    laptop.close()


def _send(source: Store, target: Store, site_id: str, path: Path):
    return import_bundle(target, export_bundle(source, site_id, path).path)


def _withdraw(store: Store, records, n: int = 0) -> Reading:
    reading = records.readings[n]
    return withdraw_reading(
        store, records.inspection.id, reading.component_id, Quantity.EARTH_ISOLATED
    )


def test_a_withdrawal_travels_and_both_databases_end_identical(pair, tmp_path):
    office, laptop, records = pair
    gone = _withdraw(laptop, records)

    to_office = _send(laptop, office, records.site.id, tmp_path / "l.zip")
    to_laptop = _send(office, laptop, records.site.id, tmp_path / "o.zip")

    assert to_office.removed == {"reading": 1} and not to_office.conflicts
    assert office.get(Reading, gone.id) is None
    assert not to_laptop.changed and laptop.get(Reading, gone.id) is None
    assert record_rows(office) == record_rows(laptop)
    assert office.verify_audit() == [] and laptop.verify_audit() == []
    deleted = office.db.execute(
        "SELECT COUNT(*) FROM audit WHERE action = 'delete' AND row_id = ?", [gone.id]
    ).fetchone()[0]
    assert deleted == 1, "the office's audit log keeps the reading it removed"


def test_a_withdrawn_reading_does_not_come_back_with_an_older_bundle(pair, tmp_path):
    office, laptop, records = pair
    gone = _withdraw(laptop, records)
    # The office still holds the reading as it was: its bundle must not bring it back.
    report = _send(office, laptop, records.site.id, tmp_path / "o.zip")
    assert laptop.get(Reading, gone.id) is None
    assert report.kept_deleted == 1 and not report.changed
    assert "  1 record stays withdrawn here" in report.lines()


def test_an_edit_on_one_side_beats_a_withdrawal_on_the_other(pair, tmp_path):
    """Nothing edited is lost: the edited reading is kept, and comes back where it was withdrawn."""
    office, laptop, records = pair
    edited = edit(office, office.get(Reading, records.readings[0].id), 5, note="re-read, dry")
    _withdraw(laptop, records)

    to_office = _send(laptop, office, records.site.id, tmp_path / "l.zip")
    to_laptop = _send(office, laptop, records.site.id, tmp_path / "o.zip")

    assert office.get(Reading, edited.id).note == "re-read, dry"
    assert not to_office.removed and len(to_office.kept_edited) == 1
    assert laptop.get(Reading, edited.id).note == "re-read, dry"
    assert to_laptop.added == {"reading": 1} and len(to_laptop.kept_edited) == 1
    assert record_rows(office) == record_rows(laptop)
    assert laptop.verify_audit() == []


def test_a_signed_inspections_reading_is_not_removed_by_a_withdrawal(pair, tmp_path):
    office, laptop, records = pair
    gone = _withdraw(laptop, records)
    sign(office, office.get(Inspection, records.inspection.id))
    report = _send(laptop, office, records.site.id, tmp_path / "l.zip")
    assert office.get(Reading, gone.id) is not None
    assert not report.removed and any(gone.id in m for m in report.kept_signed)
    assert office.verify_audit() == []


def test_a_reading_withdrawn_here_comes_back_when_its_inspection_was_signed_there(
    pair, tmp_path
):
    """The signed copy is final: both sides hold what the signed report recorded."""
    office, laptop, records = pair
    gone = _withdraw(laptop, records)
    sign(office, office.get(Inspection, records.inspection.id))
    report = _send(office, laptop, records.site.id, tmp_path / "o.zip")
    assert laptop.get(Reading, gone.id) is not None
    assert report.kept_deleted == 0 and len(report.kept_edited) == 1
    assert record_rows(office) == record_rows(laptop)


def test_a_dry_run_reports_the_removal_and_removes_nothing(pair, tmp_path):
    office, laptop, records = pair
    gone = _withdraw(laptop, records)
    bundle = export_bundle(laptop, records.site.id, tmp_path / "l.zip").path
    report = import_bundle(office, bundle, dry_run=True)
    assert report.removed == {"reading": 1}
    assert any("would be removed" in line for line in report.lines())
    assert office.get(Reading, gone.id) is not None


def test_a_photo_withdrawn_there_takes_its_file_out_here(pair, tmp_path):
    office, laptop, records = pair
    (photo,) = laptop.select(Photo)
    laptop.delete(Photo, photo.id)  # the store's own withdrawal, as a command would make it
    report = _send(laptop, office, records.site.id, tmp_path / "l.zip")
    assert report.removed == {"photo": 1}
    assert photo.sha256 not in photo_files(office)
