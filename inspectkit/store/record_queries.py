"""Named questions about one kind of record: a record by what a person typed, the lists
the pickers and commands show, the records of a site or a visit.

The commands, screens and jobs ask these by name so that SQL text stays in `store/`
(`tests/test_sql_in_store.py`).
"""

from __future__ import annotations

from typing import TypeVar

from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    Inspector,
    Instrument,
    Organisation,
    Reading,
    Record,
    Site,
    SoilSurvey,
)
from inspectkit.store.database import Store

R = TypeVar("R", bound=Record)


# ------------------------------------------------------------- by what a person typed


def records_with_id_prefix(store: Store, model: type[R], prefix: str) -> list[R]:
    """The records of one kind whose id starts with `prefix` (lists print ids shortened)."""
    return store.select(model, "id LIKE ? || '%'", [prefix])


def instruments_by_serial(store: Store, serial: str) -> list[Instrument]:
    """The instruments with this serial number, in any case."""
    return store.select(Instrument, "lower(serial) = lower(?)", [serial])


def instruments_by_id_or_serial(store: Store, text: str) -> list[Instrument]:
    """The instruments whose id or serial number is exactly `text`."""
    return store.select(Instrument, "id = ? OR serial = ?", [text, text])


def inspectors_named(store: Store, name: str) -> list[Inspector]:
    """The inspectors with this name, in any case."""
    return store.select(Inspector, "lower(name) = lower(?)", [name])


def inspectors_named_from(store: Store, start: str) -> list[Inspector]:
    """The inspectors whose name starts with `start`, in any case."""
    return store.select(Inspector, "lower(name) LIKE lower(?) || '%'", [start])


def organisations_named(store: Store, name: str) -> list[Organisation]:
    """The organisations with this name, in any case."""
    return store.select(Organisation, "lower(name) = lower(?)", [name])


# ------------------------------------------------------------------------- lists


def sites_by_name(store: Store) -> list[Site]:
    """Every site in name order, ignoring case."""
    return store.select(Site, order_by="name COLLATE NOCASE")


def inspectors_by_name(store: Store) -> list[Inspector]:
    """Every inspector in name order."""
    return store.select(Inspector, order_by="name")


def inspectors_with_certificate(store: Store) -> list[Inspector]:
    """The inspectors who have a signing certificate, in name order."""
    return store.select(Inspector, "certificate_pem != ''", order_by="name")


def organisations_by_name(store: Store, *, default_first: bool = False) -> list[Organisation]:
    """Every organisation in name order; with `default_first`, the default one leads."""
    return store.select(Organisation, order_by="is_default DESC, name" if default_first else "name")


def default_organisation(store: Store) -> Organisation | None:
    """The organisation a report uses when its inspector has none, if one was made."""
    found = store.select(Organisation, "is_default = 1", [])
    return found[0] if found else None


# ------------------------------------------------------------- of a site, of a visit


def site_components(store: Store, site_id: str) -> list[Component]:
    """Every component of a site, retired ones too."""
    return store.select(Component, "site_id = ?", [site_id])


def components_tagged(store: Store, site_id: str, tag: str) -> list[Component]:
    """A site's components with exactly this tag (tags are kept upper case)."""
    return store.select(Component, "site_id = ? AND tag = ?", [site_id, tag.upper()])


def site_surveys(store: Store, site_id: str) -> list[SoilSurvey]:
    """A site's Wenner surveys, oldest first."""
    return store.select(SoilSurvey, "site_id = ?", [site_id], order_by="date, created_at")


def site_soil_readings(store: Store, site_id: str) -> list[Reading]:
    """Every soil resistivity reading taken at a site, in any of its inspections."""
    return store.select(
        Reading,
        "quantity = 'soil_resistivity' AND inspection_id IN "
        "(SELECT id FROM inspection WHERE site_id = ?)",
        [site_id],
    )


def site_inspections(
    store: Store, site_id: str, *, oldest_first: bool = False
) -> list[Inspection]:
    """Every inspection of a site by date, then by when recorded: the latest first, or the
    earliest first where a history is read forwards."""
    order = "date, created_at" if oldest_first else "date DESC, created_at DESC"
    return store.select(Inspection, "site_id = ?", [site_id], order_by=order)


def inspection_records(store: Store, model: type[R], inspection_id: str) -> list[R]:
    """The readings, findings or photos of one inspection."""
    return store.select(model, "inspection_id = ?", [inspection_id])


def open_findings_of_component(store: Store, component_id: str) -> list[Finding]:
    """A component's findings that no later finding resolved, from any visit."""
    return store.select(Finding, "component_id = ? AND resolved_by IS NULL", [component_id])


def inspections_with_report(store: Store, sha256: str) -> list[Inspection]:
    """The inspections whose signed report file has this sha256."""
    return store.select(Inspection, "report_sha256 = ?", [sha256])


def audit_holds(store: Store, row_hash: str) -> bool:
    """Whether the audit log holds a row with this hash."""
    return store.db.execute("SELECT 1 FROM audit WHERE hash = ?", [row_hash]).fetchone() is not None
