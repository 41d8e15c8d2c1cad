"""Small factories for the sync, export and backup tests: an invented site with its records."""

from __future__ import annotations

import hashlib
import shutil
import sqlite3
from dataclasses import dataclass
from datetime import UTC, date, datetime
from pathlib import Path

from PIL import Image

from inspectkit.model import (
    Component,
    ComponentKind,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    Instrument,
    JointState,
    Method,
    Quantity,
    Reading,
    Site,
)
from inspectkit.report.keys import new_key
from inspectkit.report.publish import seal_signed
from inspectkit.store import Store
from inspectkit.store.photos import attach_photo
from inspectkit.store.seal import covered_now

RECORD_TABLES = (
    "site",
    "component",
    "instrument",
    "inspector",
    "inspection",
    "reading",
    "finding",
    "photo",
    "soil_survey",
)


@dataclass
class SiteSet:
    """The records made for one invented site."""

    site: Site
    joints: list[Component]
    instrument: Instrument
    inspection: Inspection
    readings: list[Reading]
    finding: Finding


def jpeg(path: Path, seed: int, size: tuple[int, int] = (48, 32)) -> Path:
    """A small, distinct JPEG file."""
    image = Image.new("RGB", size, ((seed * 37) % 256, (seed * 91) % 256, (seed * 13) % 256))
    image.save(path, "JPEG")
    return path


def build_site(store: Store, tmp: Path, *, joints: int = 3, name: str = "Harbour Mill") -> SiteSet:
    """A site with test joints, one draft complete inspection, readings, a finding, a photo."""
    site = store.save(
        Site(
            name=name,
            client="Westbrook Storage Co-op",
            town="Elmsford",
            latitude=51.5,
            longitude=-0.12,
            protection_level="III",
        )
    )
    components = [
        Component(site_id=site.id, kind=ComponentKind.TEST_JOINT, tag=f"TJ-{n:02d}")
        for n in range(1, joints + 1)
    ]
    instrument = Instrument(
        description="Earth tester", serial="ET-4471", calibration_due=date(2030, 1, 1)
    )
    inspection = Inspection(site_id=site.id, kind=InspectionKind.COMPLETE, date=date(2026, 6, 2))
    readings = [
        Reading(
            inspection_id=inspection.id,
            component_id=c.id,
            quantity=Quantity.EARTH_ISOLATED,
            value=8.0 + n,
            method=Method.FALL_OF_POTENTIAL_3P,
            joint_state=JointState.OPEN,
            instrument_id=instrument.id,
            taken_at=datetime(2026, 6, 2, 10, n, tzinfo=UTC),
        )
        for n, c in enumerate(components)
    ]
    finding = Finding(
        inspection_id=inspection.id,
        component_id=components[0].id,
        grade=Grade.NEEDS_ATTENTION,
        text="clamp loose at TJ-01",
    )
    store.save_all([*components, instrument, inspection, *readings, finding])
    tmp.mkdir(parents=True, exist_ok=True)
    attach_photo(
        store,
        jpeg(tmp / f"{name}-1.jpg", 1),
        inspection_id=inspection.id,
        component_id=components[0].id,
        caption="TJ-01 clamp",
    )
    return SiteSet(site, components, instrument, inspection, readings, finding)


#: The passphrase of the keys these tests sign with.
PASSPHRASE = b"harbour-mill-key"


def signing_key(store: Store) -> Path:
    """A key made on this machine (so trusted here) beside the database, made once."""
    path = store.path.with_name(f"{store.path.stem}-keys") / "inspector.p12"
    if not path.exists():
        new_key(path, PASSPHRASE, name="Ines Okafor")
    return path


def sign(store: Store, inspection: Inspection) -> Inspection:
    """The inspection, signed and sealed as the report step leaves it (without the PDF)."""
    sealed = seal_signed(
        inspection,
        covered_now(store, inspection.id),
        signing_key(store),
        PASSPHRASE,
        report_sha256=hashlib.sha256(inspection.id.encode()).hexdigest(),
        signed_at=datetime(2026, 6, 3, tzinfo=UTC),
    )
    return store.save(sealed)


def record_rows(store: Store) -> dict[str, list[tuple]]:
    """Every row of every record table, sorted, for comparing two databases."""
    return {
        table: sorted(store.db.execute(f"SELECT * FROM [{table}]").fetchall())
        for table in RECORD_TABLES
    }


def photo_files(store: Store) -> set[str]:
    if not store.photos_dir.exists():
        return set()
    return {p.name for p in store.photos_dir.rglob("*") if p.is_file()}


def file_hash(path: Path) -> str:
    """The database file's bytes as a hash, with the WAL checkpointed into it first."""
    conn = sqlite3.connect(path)
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.close()
    return hashlib.sha256(path.read_bytes()).hexdigest()


def copy_db(source: Path, target: Path) -> Path:
    """A copy of a closed database file and its photo folder."""
    shutil.copy(source, target)
    photos = source.with_name(f"{source.stem}-photos")
    if photos.exists():
        shutil.copytree(photos, target.with_name(f"{target.stem}-photos"))
    return target


def edit(store: Store, record, minute: int, **changes):  # noqa: ANN001, ANN201 - any record
    """Save a changed copy stamped at a chosen time today, so tests decide which edit is newer."""
    at = datetime.now(UTC).replace(hour=0, minute=minute, second=0, microsecond=0)
    return store.save(record.model_copy(update={**changes, "updated_at": at}), touch=False)
