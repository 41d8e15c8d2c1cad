"""Read-only questions the screens and commands ask often, answered in SQL."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from dataclasses import dataclass
from datetime import UTC, date, datetime
from enum import Enum
from itertools import groupby
from operator import attrgetter, itemgetter
from types import GetSetDescriptorType, MemberDescriptorType
from typing import Any, get_args

from pydantic import BaseModel

from inspectkit.model import (
    Component,
    Finding,
    Inspection,
    Instrument,
    NotInspected,
    Photo,
    Reading,
    Record,
    Site,
    SiteRecords,
    SoilSurvey,
)
from inspectkit.model.geometry import GeometryItem
from inspectkit.store.database import Store
from inspectkit.store.errors import StoreError
from inspectkit.store.geometry import site_geometry
from inspectkit.store.rows import from_row


@dataclass(frozen=True)
class SiteSummary:
    """A site with the date and kind of its last visit, for lists."""

    site: Site
    last_visit: date | None
    last_kind: str | None
    component_count: int


def site_summaries(store: Store) -> list[SiteSummary]:
    """Every site with its last inspection, in name order."""
    last = {
        site_id: (date.fromisoformat(day), kind)
        for site_id, day, kind in store.db.execute(
            "SELECT site_id, date, kind FROM ("
            " SELECT site_id, date, kind, ROW_NUMBER() OVER ("
            "  PARTITION BY site_id ORDER BY date DESC, created_at DESC) AS n FROM inspection"
            ") WHERE n = 1"
        )
    }
    counts = dict(
        store.db.execute(
            "SELECT site_id, COUNT(*) FROM component WHERE retired_on IS NULL GROUP BY site_id"
        ).fetchall()
    )
    summaries = []
    for row in store.db["site"].rows_where(order_by="name COLLATE NOCASE"):
        site = from_row(Site, row)
        day, kind = last.get(site.id, (None, None))
        summaries.append(SiteSummary(site, day, kind, counts.get(site.id, 0)))
    return summaries


def find_site(store: Store, name_or_id: str) -> Site | None:
    """A site by id, exact name, or the one name that starts with the text (any case)."""
    site = store.get(Site, name_or_id)
    if site is not None:
        return site
    exact = store.select(Site, "lower(name) = lower(?)", [name_or_id])
    if len(exact) == 1:
        return exact[0]
    prefix = store.select(Site, "lower(name) LIKE lower(?) || '%'", [name_or_id])
    return prefix[0] if len(prefix) == 1 else None


def load_site_records(store: Store, site_id: str) -> SiteRecords:
    """All of one site's records, for the engine and the report.

    Raises:
        StoreError: no site has that id.
    """
    site = store.get(Site, site_id)
    if site is None:
        raise StoreError(f"no site with id {site_id}")
    inspections = store.select(Inspection, "site_id = ?", [site_id], order_by="date, created_at")
    in_site = "inspection_id IN (SELECT id FROM inspection WHERE site_id = ?)"
    readings = store.select(Reading, in_site, [site_id], order_by="taken_at")
    instrument_ids = sorted({r.instrument_id for r in readings if r.instrument_id})
    instruments = (
        {
            i.id: i
            for i in store.select(
                Instrument, f"id IN ({','.join('?' * len(instrument_ids))})", instrument_ids
            )
        }
        if instrument_ids
        else {}
    )
    return SiteRecords(
        site=site,
        components=store.select(Component, "site_id = ?", [site_id], order_by="kind, tag"),
        inspections=inspections,
        readings=readings,
        findings=store.select(Finding, in_site, [site_id]),
        photos=store.select(Photo, in_site, [site_id]),
        instruments=instruments,
        not_inspected=store.select(NotInspected, in_site, [site_id]),
        geometry=site_geometry(store, site_id),
        surveys=store.select(SoilSurvey, "site_id = ?", [site_id], order_by="date, created_at"),
    )


def iter_site_records(store: Store) -> Iterator[SiteRecords]:
    """Every site's records, one site at a time in id order, from one query per table.

    For checking a whole database: a query per site would run thousands of queries,
    and holding every site at once would hold every reading. Each table is read in
    site order and the streams are merged, so only one site is in memory at a time;
    one more small query gives each visit's site.
    """
    instruments = {i.id: i for i in store.select(Instrument)}
    site_of = dict(store.db.execute("SELECT id, site_id FROM inspection").fetchall())
    streams = {
        "components": _by_site(store, Component, "SELECT * FROM component ORDER BY site_id"),
        "inspections": _by_site(
            store, Inspection, "SELECT * FROM inspection ORDER BY site_id, date"
        ),
        "readings": _by_visit(store, Reading, "reading", site_of),
        "findings": _by_visit(store, Finding, "finding", site_of),
        "photos": _by_visit(store, Photo, "photo", site_of),
        "not_inspected": _by_visit(store, NotInspected, "not_inspected", site_of),
        # Validated, not trusted-built: points are stored as JSON text; geometry is small.
        "geometry": (
            (site_id, list(items))
            for site_id, items in groupby(
                store.select(GeometryItem, order_by="site_id"), key=attrgetter("site_id")
            )
        ),
        "surveys": _by_site(
            store, SoilSurvey, "SELECT * FROM soil_survey ORDER BY site_id, date, created_at"
        ),
    }
    pending = {name: next(stream, None) for name, stream in streams.items()}
    for site_id, (site,) in _by_site(store, Site, "SELECT * FROM site ORDER BY id", "id"):
        parts: dict[str, list[Record]] = {}
        for name, stream in streams.items():
            while pending[name] is not None and pending[name][0] < site_id:
                pending[name] = next(stream, None)
            if pending[name] is not None and pending[name][0] == site_id:
                parts[name] = pending[name][1]
                pending[name] = next(stream, None)
        readings = parts.get("readings", [])
        used = set(map(_instrument_of, readings))
        # Built without validation: each part was read back from the store just above.
        yield SiteRecords.model_construct(
            site=site,
            components=parts.get("components", []),
            inspections=parts.get("inspections", []),
            readings=readings,
            findings=parts.get("findings", []),
            photos=parts.get("photos", []),
            instruments={key: instruments[key] for key in used if key in instruments},
            not_inspected=parts.get("not_inspected", []),
            geometry=parts.get("geometry", []),
            surveys=parts.get("surveys", []),
        )


_instrument_of = attrgetter("instrument_id")


def _by_site(
    store: Store, model: type[Record], sql: str, site: str = "site_id"
) -> Iterator[tuple[str, list[Record]]]:
    """(site id, records) for each site with rows, from a query in site order.

    Args:
        site: the column holding the site id.
    """
    cursor = store.db.execute(sql)
    names = [d[0] for d in cursor.description]
    build = _trusted_builder(model, names)
    for site_id, rows in groupby(cursor, key=itemgetter(names.index(site))):
        yield site_id, [build(row) for row in rows]


def _by_visit(
    store: Store, model: type[Record], table: str, site_of: dict[str, str]
) -> Iterator[tuple[str, list[Record]]]:
    """(site id, records) for each site with rows in a table that hangs off inspections.

    The rows come in site order and carry their visit, not their site, so that half a
    million rows do not each bring the site id along too; a visit's rows come together,
    so its site is looked up once.

    Args:
        site_of: the site id of each inspection id.
    """
    cursor = store.db.execute(
        f"SELECT t.* FROM inspection i JOIN [{table}] t ON t.inspection_id = i.id"
        " ORDER BY i.site_id"
    )
    names = [d[0] for d in cursor.description]
    build = _trusted_builder(model, names)
    visits = groupby(cursor, key=itemgetter(names.index("inspection_id")))
    for site_id, runs in groupby(visits, key=lambda run: site_of[run[0]]):
        yield site_id, [build(row) for _, rows in runs for row in rows]


def _trusted_builder(model: type[Record], names: list[str]) -> Callable[[tuple[Any, ...]], Record]:
    """A fast way from a stored row to its record, for rows the store itself wrote.

    Every row was validated when it was written, so reading half a million of them
    back need not validate again: the text columns are turned back into dates,
    enums and booleans, and the record is assembled the way pydantic's
    `model_construct` does. The function is generated with one expression per
    column (as `dataclasses` generates `__init__`), since a loop over the columns
    costs as much again. Every record of a table shares one set of set fields:
    it already holds every field, and pydantic only ever adds a field's name to it.
    Should the table's columns not be exactly the model's
    fields (a database from another version), each row is validated instead.

    Args:
        model: the record type.
        names: the columns, in the order the query gives them.
    """
    fields = model.model_fields
    if set(names) != set(fields):
        return lambda row: from_row(model, dict(zip(names, row, strict=True)))
    scope: dict[str, Any] = {
        "new": object.__new__,
        **{f"set{slot}": _slot_setter(slot) for slot in _SLOTS},
        "model": model,
        "every": set(names),
        "parse_time": datetime.fromisoformat,
        "UTC": UTC,
        "stored_time": _stored_time,
    }
    items = []
    for index, name in enumerate(names):
        convert = _converter(fields[name].annotation)
        cell = f"row[{index}]"
        if convert is None:
            items.append(f"{name!r}: {cell}")
        elif convert is _stored_time:  # the usual case inline: stored in UTC with its offset
            items.append(
                f"{name!r}: None if {cell} is None else (t if (t := parse_time({cell})).tzinfo"
                f" is UTC else stored_time({cell}))"
            )
        elif isinstance(convert, dict):  # a lookup that takes None too: no call, no test
            scope[f"convert_{index}"] = convert
            items.append(f"{name!r}: convert_{index}[{cell}]")
        else:
            scope[f"convert_{index}"] = convert
            items.append(f"{name!r}: None if {cell} is None else convert_{index}({cell})")
    source = (
        "def build(row):\n"
        "    record = new(model)\n"
        f"    set__dict__(record, {{{', '.join(items)}}})\n"
        "    set__pydantic_fields_set__(record, every)\n"
        "    set__pydantic_extra__(record, None)\n"
        "    set__pydantic_private__(record, None)\n"
        "    return record\n"
    )
    exec(source, scope)  # noqa: S102 - the source is made above from the model's own field names
    return scope["build"]  # type: ignore[no-any-return]


#: What `model_construct` sets on a new record besides its fields.
_SLOTS = ("__dict__", "__pydantic_fields_set__", "__pydantic_extra__", "__pydantic_private__")


def _slot_setter(name: str) -> Callable[[Any, Any], None]:
    """The setter of one of pydantic's slots on a record, taken from the slot itself.

    Calling the slot's own setter skips the attribute lookup `object.__setattr__`
    makes, on every one of half a million records; should pydantic ever hold the
    attribute differently, `object.__setattr__` does the job.
    """
    slot = vars(BaseModel).get(name)
    if isinstance(slot, MemberDescriptorType | GetSetDescriptorType):
        return slot.__set__  # type: ignore[no-any-return]
    return lambda record, value: object.__setattr__(record, name, value)


def _converter(annotation: Any) -> Callable[[Any], Any] | dict[Any, Any] | None:
    """How a stored column becomes the field's value: a function, or for an enum a
    lookup of every stored value and None (None: stored as it is used; SQLite gives
    REAL columns back as floats already)."""
    kinds = [a for a in get_args(annotation) if a is not type(None)] or [annotation]
    kind = kinds[0]
    if kind is datetime:
        return _stored_time
    if kind is date:
        return date.fromisoformat
    if kind is bool:
        return bool
    if isinstance(kind, type) and issubclass(kind, Enum):
        return {None: None, **{member.value: member for member in kind}}
    return None


def _stored_time(text: str) -> datetime:
    """Stored times carry their offset; naive ones are UTC, as the models take them."""
    value = datetime.fromisoformat(text)
    if value.tzinfo is UTC:
        return value
    return value.replace(tzinfo=UTC) if value.tzinfo is None else value.astimezone(UTC)


def draft_keys(store: Store) -> set[tuple[str, str, str]]:
    """(site id, kind, ISO date) of every draft inspection, to avoid making one twice."""
    return {
        (site_id, kind, day)
        for site_id, kind, day in store.db.execute(
            "SELECT site_id, kind, date FROM inspection WHERE state = 'draft'"
        )
    }


def site_ids(store: Store) -> list[str]:
    """Every site's id, in name order."""
    return [row[0] for row in store.db.execute("SELECT id FROM site ORDER BY name COLLATE NOCASE")]


def last_write(store: Store) -> int | None:
    """A number that changes whenever anything is written: the newest audit row's."""
    return store.db.execute("SELECT MAX(rowid) FROM audit").fetchone()[0]


def site_listing(store: Store) -> list[tuple[str, str, str, str, str, date | None, str]]:
    """(id, name, level, client, town, last visit, profile) of every site, in one lean query.

    A list of thousands of sites is the first thing on screen, so this skips
    building full records.
    """
    cursor = store.db.execute(
        "SELECT s.id, s.name, s.protection_level, s.client, s.town, MAX(i.date), s.profile"
        " FROM site s LEFT JOIN inspection i ON i.site_id = s.id GROUP BY s.id"
    )
    return [
        (site_id, name, level, client, town, date.fromisoformat(last) if last else None, profile)
        for site_id, name, level, client, town, last, profile in cursor
    ]


@dataclass(frozen=True)
class OpenFinding:
    """A finding not yet resolved, with where and when it was found."""

    finding: Finding
    site_id: str
    site_name: str
    found_on: date
    tag: str


def open_findings(store: Store) -> list[OpenFinding]:
    """Every unresolved finding that is not graded sound, soonest due first."""
    rows = store.db.execute(
        "SELECT f.id, s.id, s.name, i.date, COALESCE(c.tag, '') FROM finding f"
        " JOIN inspection i ON i.id = f.inspection_id JOIN site s ON s.id = i.site_id"
        " LEFT JOIN component c ON c.id = f.component_id"
        " WHERE f.resolved_by IS NULL AND f.grade != 'sound'"
    ).fetchall()
    found = {f.id: f for f in store.select(Finding, "resolved_by IS NULL AND grade != 'sound'")}
    items = [
        OpenFinding(found[fid], site_id, name, date.fromisoformat(day), tag)
        for fid, site_id, name, day, tag in rows
        if fid in found
    ]
    return sorted(items, key=lambda o: (o.finding.due_by or date.max, o.found_on, o.site_name))


def later_inspections(store: Store, item: OpenFinding) -> list[Inspection]:
    """The site's visits since the finding, any of which may have put it right."""
    return store.select(
        Inspection,
        "site_id = ? AND date >= ? AND id != ?",
        [item.site_id, item.found_on.isoformat(), item.finding.inspection_id],
        order_by="date DESC",
    )
