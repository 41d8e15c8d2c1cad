"""The database schema as forward-only migrations; each step is frozen once released.

A migration never reads the current pydantic models: the tables it creates are the
tables of its own version, so a database made years ago migrates the same way.
"""

from __future__ import annotations

from collections.abc import Callable

import sqlite_utils

from inspectkit.model import utcnow
from inspectkit.store import audit

_STAMPS = """
    created_at TEXT NOT NULL,
    updated_at TEXT NOT NULL,
    updated_by TEXT NOT NULL DEFAULT ''
"""

_V1 = f"""
CREATE TABLE meta (
    key TEXT PRIMARY KEY,
    value TEXT NOT NULL
);
CREATE TABLE site (
    id TEXT PRIMARY KEY,
    name TEXT NOT NULL,
    client TEXT NOT NULL DEFAULT '',
    address TEXT NOT NULL DEFAULT '',
    town TEXT NOT NULL DEFAULT '',
    latitude REAL,
    longitude REAL,
    protection_level TEXT NOT NULL,
    profile TEXT NOT NULL,
    critical INTEGER NOT NULL DEFAULT 0,
    explosive_risk INTEGER NOT NULL DEFAULT 0,
    height_m REAL,
    notes TEXT NOT NULL DEFAULT '',
    altered_on TEXT,
    {_STAMPS}
);
CREATE TABLE component (
    id TEXT PRIMARY KEY,
    site_id TEXT NOT NULL REFERENCES site(id),
    kind TEXT NOT NULL,
    tag TEXT NOT NULL,
    location TEXT NOT NULL DEFAULT '',
    material TEXT NOT NULL DEFAULT '',
    installed_on TEXT,
    parent_id TEXT REFERENCES component(id),
    electrode_type TEXT,
    retired_on TEXT,
    {_STAMPS}
);
CREATE TABLE instrument (
    id TEXT PRIMARY KEY,
    description TEXT NOT NULL,
    serial TEXT NOT NULL,
    calibration_due TEXT,
    {_STAMPS}
);
CREATE TABLE inspector (
    id TEXT PRIMARY KEY,
    name TEXT NOT NULL,
    organisation TEXT NOT NULL DEFAULT '',
    qualification TEXT NOT NULL DEFAULT '',
    signing_key TEXT NOT NULL DEFAULT '',
    certificate_pem TEXT NOT NULL DEFAULT '',
    {_STAMPS}
);
CREATE TABLE inspection (
    id TEXT PRIMARY KEY,
    site_id TEXT NOT NULL REFERENCES site(id),
    kind TEXT NOT NULL,
    date TEXT NOT NULL,
    inspector_id TEXT REFERENCES inspector(id),
    weather TEXT NOT NULL DEFAULT '',
    soil TEXT,
    state TEXT NOT NULL DEFAULT 'draft',
    finished INTEGER NOT NULL DEFAULT 0,
    signed_at TEXT,
    report_sha256 TEXT,
    report_revision INTEGER NOT NULL DEFAULT 0,
    amends_id TEXT REFERENCES inspection(id),
    not_inspected TEXT NOT NULL DEFAULT '',
    notes TEXT NOT NULL DEFAULT '',
    {_STAMPS}
);
CREATE TABLE reading (
    id TEXT PRIMARY KEY,
    inspection_id TEXT NOT NULL REFERENCES inspection(id),
    component_id TEXT NOT NULL REFERENCES component(id),
    quantity TEXT NOT NULL,
    value REAL,
    over_range INTEGER NOT NULL DEFAULT 0,
    method TEXT NOT NULL,
    joint_state TEXT,
    instrument_id TEXT REFERENCES instrument(id),
    taken_at TEXT NOT NULL,
    soil TEXT,
    unreliable INTEGER NOT NULL DEFAULT 0,
    note TEXT NOT NULL DEFAULT '',
    {_STAMPS}
);
CREATE TABLE finding (
    id TEXT PRIMARY KEY,
    inspection_id TEXT NOT NULL REFERENCES inspection(id),
    component_id TEXT REFERENCES component(id),
    grade TEXT NOT NULL,
    category TEXT NOT NULL DEFAULT '',
    text TEXT NOT NULL DEFAULT '',
    remedial_action TEXT NOT NULL DEFAULT '',
    due_by TEXT,
    resolved_by TEXT REFERENCES inspection(id),
    {_STAMPS}
);
CREATE TABLE photo (
    id TEXT PRIMARY KEY,
    sha256 TEXT NOT NULL,
    original_name TEXT NOT NULL DEFAULT '',
    caption TEXT NOT NULL DEFAULT '',
    taken_at TEXT,
    inspection_id TEXT REFERENCES inspection(id),
    component_id TEXT REFERENCES component(id),
    orientation INTEGER NOT NULL DEFAULT 1,
    width INTEGER,
    height INTEGER,
    {_STAMPS}
);
CREATE TABLE audit (
    seq INTEGER PRIMARY KEY AUTOINCREMENT,
    id TEXT NOT NULL UNIQUE,
    at TEXT NOT NULL,
    who TEXT NOT NULL,
    table_name TEXT NOT NULL,
    row_id TEXT NOT NULL,
    action TEXT NOT NULL,
    before TEXT,
    after TEXT,
    prev_hash TEXT NOT NULL,
    hash TEXT NOT NULL
);
CREATE INDEX component_site ON component(site_id);
CREATE INDEX inspection_site ON inspection(site_id, date);
CREATE INDEX reading_inspection ON reading(inspection_id);
CREATE INDEX finding_inspection ON finding(inspection_id);
"""

_V2 = """
CREATE TABLE setting (
    key TEXT PRIMARY KEY,
    value TEXT NOT NULL,
    updated_at TEXT NOT NULL
);
CREATE INDEX reading_component ON reading(component_id, quantity, taken_at, value);
CREATE INDEX audit_row ON audit(table_name, row_id, seq);
CREATE INDEX photo_sha ON photo(sha256);
"""

#: Columns for what an inspection report records (IEC 62305-3 Annex E), by table.
_V3_COLUMNS = {
    "site": (
        "installer TEXT NOT NULL DEFAULT ''",
        "installed_year INTEGER",
        "built_year INTEGER",
        "use TEXT NOT NULL DEFAULT ''",
        "construction TEXT NOT NULL DEFAULT ''",
        "roofing TEXT NOT NULL DEFAULT ''",
        "design_standard TEXT NOT NULL DEFAULT ''",
        "air_termination TEXT NOT NULL DEFAULT ''",
        "earthing_arrangement TEXT",
    ),
    "inspection": (
        "accompanied_by TEXT NOT NULL DEFAULT ''",
        "changes_since_last TEXT NOT NULL DEFAULT ''",
    ),
}


def _v1(db: sqlite_utils.Database) -> None:
    """The first schema: every record table, the audit chain, meta."""
    db.executescript(_V1)


def _v2(db: sqlite_utils.Database) -> None:
    """Settings kept in the database; indexes for per-electrode history and audit checks."""
    db.executescript(_V2)


def _v3(db: sqlite_utils.Database) -> None:
    """The report's general and structure details on sites; who came along and what changed.

    Every existing row gains the new columns with their defaults, so each gets an
    audit row saying so; otherwise the audit check would take the new columns for
    an edit made behind the tool's back.
    """
    _add_columns(db, _V3_COLUMNS)


def _add_columns(db: sqlite_utils.Database, new: dict[str, tuple[str, ...]]) -> None:
    """Add columns to record tables, with an audit row for every row that gains them.

    The audit rows carry their keyed check once the audit table has the column
    for it (from step `_trust` on).
    """
    at = utcnow().isoformat()
    for table, columns in new.items():
        before = _rows(db, table)
        for column in columns:
            db.execute(f"ALTER TABLE [{table}] ADD COLUMN {column}")
        after = _rows(db, table)
        changes = [(table, row_id, "migrate", row, after[row_id]) for row_id, row in before.items()]
        entries = audit.make_entries(audit.last_hash(db), changes, at=at, who="migration")
        audit.insert_entries(db, entries)


_GEOMETRY = f"""
CREATE TABLE geometry_item (
    id TEXT PRIMARY KEY,
    site_id TEXT NOT NULL REFERENCES site(id),
    kind TEXT NOT NULL,
    tag TEXT NOT NULL,
    component_id TEXT REFERENCES component(id),
    points TEXT NOT NULL,
    z_m REAL NOT NULL,
    what TEXT NOT NULL DEFAULT '',
    conductive INTEGER NOT NULL DEFAULT 0,
    bonded INTEGER NOT NULL DEFAULT 0,
    separated_by TEXT NOT NULL DEFAULT 'air',
    clearance_m REAL,
    note TEXT NOT NULL DEFAULT '',
    {_STAMPS}
);
CREATE INDEX geometry_item_site ON geometry_item(site_id, kind, tag);
"""


def _geometry(db: sqlite_utils.Database) -> None:
    """Site geometry in local metres (roofs, LPS conductors, rooftop items), one row each."""
    db.executescript(_GEOMETRY)


def _rows(db: sqlite_utils.Database, table: str) -> dict[str, dict[str, object]]:
    """A table's rows by id, as SQLite returns them (the form the audit log hashes)."""
    cursor = db.execute(f"SELECT * FROM [{table}]")
    names = [d[0] for d in cursor.description]
    rows = (dict(zip(names, values, strict=True)) for values in cursor)
    return {row["id"]: row for row in rows}


_ENTRY_DRAFTS = """
CREATE TABLE entry_draft (
    inspection_id TEXT NOT NULL REFERENCES inspection(id),
    component_id TEXT NOT NULL REFERENCES component(id),
    field TEXT NOT NULL,
    text TEXT NOT NULL,
    updated_at TEXT NOT NULL,
    PRIMARY KEY (inspection_id, component_id, field)
);
CREATE TABLE walkdown_place (
    inspection_id TEXT PRIMARY KEY REFERENCES inspection(id),
    component_id TEXT NOT NULL REFERENCES component(id),
    updated_at TEXT NOT NULL
);
"""


def _entry_drafts(db: sqlite_utils.Database) -> None:
    """Text typed in a walkdown and not saved yet, and the component the inspector is on.

    Neither is a record: no audit rows, never in a bundle or a report; they only let a
    walkdown killed mid-way offer back what was typed, where it was typed.
    """
    db.executescript(_ENTRY_DRAFTS)


def _retired_people_and_instruments(db: sqlite_utils.Database) -> None:
    """Inspectors and instruments can be retired: kept for the history, left out of pickers."""
    _add_columns(db, {"inspector": ("retired_on TEXT",), "instrument": ("retired_on TEXT",)})


def _trust(db: sqlite_utils.Database) -> None:
    """A seal on each signed inspection; a keyed check on each audit row written from now on.

    The seal is what lets another database take an inspection as signed (see
    `store.seal`); the key check is what a rewrite of the audit log without the
    user's secret cannot forge (see `store.audit_key`). Rows written before have none.
    """
    _add_columns(db, {"inspection": ("seal TEXT NOT NULL DEFAULT ''",)})
    db.execute("ALTER TABLE audit ADD COLUMN mac TEXT")


def _repeat_findings(db: sqlite_utils.Database) -> None:
    """A finding can name the earlier open finding of the same fault it repeats."""
    _add_columns(db, {"finding": ("same_as_id TEXT",)})


def _organisations(db: sqlite_utils.Database) -> None:
    """Inspecting organisations as records; an inspector belongs to one."""
    db.executescript(
        f"""
        CREATE TABLE organisation (
            id TEXT PRIMARY KEY,
            name TEXT NOT NULL,
            address TEXT NOT NULL DEFAULT '',
            phone TEXT NOT NULL DEFAULT '',
            email TEXT NOT NULL DEFAULT '',
            logo TEXT NOT NULL DEFAULT '',
            "primary" TEXT NOT NULL DEFAULT '#1F4E79',
            accent TEXT NOT NULL DEFAULT '#C98A1B',
            is_default INTEGER NOT NULL DEFAULT 0,
            {_STAMPS}
        );
        """
    )
    # No foreign key: organisations stay on their laptop, inspectors travel in bundles.
    _add_columns(db, {"inspector": ("organisation_id TEXT",)})

#: An instrument's kind, the joints' reconnection on finishing, components not inspected.
_VISIT_RECORDS_COLUMNS = {
    "instrument": ("kind TEXT",),
    "inspection": (
        "joints_reconnected INTEGER",
        "reconnection_note TEXT NOT NULL DEFAULT ''",
    ),
}

_VISIT_RECORDS_TABLES = (
    f"""CREATE TABLE not_inspected (
    id TEXT PRIMARY KEY,
    inspection_id TEXT NOT NULL REFERENCES inspection(id),
    component_id TEXT NOT NULL REFERENCES component(id),
    reason TEXT NOT NULL,
    text TEXT NOT NULL DEFAULT '',
    {_STAMPS}
)""",
    "CREATE INDEX not_inspected_inspection ON not_inspected(inspection_id)",
)


def _visit_records(db: sqlite_utils.Database) -> None:
    """Which kind each instrument is, whether the test joints were reconnected on
    finishing, and the components a visit could not inspect, with why.

    Existing instruments get no kind (they are not judged until one is given).
    """
    _add_columns(db, _VISIT_RECORDS_COLUMNS)
    for statement in _VISIT_RECORDS_TABLES:  # not executescript: it would commit halfway
        db.execute(statement)


def _site_access(db: sqlite_utils.Database) -> None:
    """When each site can be visited (its access rule), for planning rounds."""
    _add_columns(db, {"site": ("access TEXT NOT NULL DEFAULT ''",)})


#: Step N (1-based) brings a database from version N-1 to N.
MIGRATIONS: tuple[Callable[[sqlite_utils.Database], None], ...] = (
    _v1,
    _v2,
    _v3,
    _entry_drafts,
    _retired_people_and_instruments,
    _trust,
    _repeat_findings,
    _organisations,
    _site_access,
    _visit_records,
    _geometry,
)
SCHEMA_VERSION = len(MIGRATIONS)
