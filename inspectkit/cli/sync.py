"""`inspectkit export` and `inspectkit import`: bundles between databases, tables for others."""

from __future__ import annotations

import sys
from collections.abc import Callable
from datetime import date, datetime
from enum import StrEnum
from pathlib import Path
from typing import Annotated, TextIO

import typer

from inspectkit.cli.common import (
    MAX_LINES,
    DbOption,
    Exit,
    JsonOption,
    emit_json,
    fail,
    open_store,
    output_option,
)
from inspectkit.printable import printable
from inspectkit.store import Store
from inspectkit.store.queries import find_site
from inspectkit.sync.guard import BundleError
from inspectkit.wording import counted


class Format(StrEnum):
    """What `export` writes."""

    BUNDLE = "bundle"
    CSV = "csv"
    JSON = "json"
    GEOJSON = "geojson"


class Table(StrEnum):
    """Which records a CSV or JSON export holds."""

    READINGS = "readings"
    FINDINGS = "findings"


class Prefer(StrEnum):
    """Which side wins a conflict."""

    OURS = "ours"
    THEIRS = "theirs"


def _site_id(store: Store, name_or_id: str | None) -> str | None:
    if name_or_id is None:
        return None
    site = find_site(store, name_or_id)
    if site is None:
        fail(f"no single site matches {name_or_id!r}; run `inspectkit sites` to see the names")
    return site.id


def export(
    ctx: typer.Context,
    site: Annotated[
        str | None, typer.Option("--site", help="Site name (or its start) or id.")
    ] = None,
    out: Annotated[
        Path | None, output_option("File to write (default: stdout for tables).")
    ] = None,
    fmt: Annotated[
        Format, typer.Option("--format", help="bundle (records and photos) or a table.")
    ] = Format.BUNDLE,
    records: Annotated[
        Table, typer.Option("--records", help="For csv/json: readings or findings.")
    ] = Table.READINGS,
    since: Annotated[
        datetime | None,
        typer.Option(
            "--since",
            formats=["%Y-%m-%d"],
            help="Bundle: only records changed on or after YYYY-MM-DD.",
        ),
    ] = None,
    db: DbOption = None,
) -> None:
    """Write a site's bundle for another database, or readings/findings/sites for other tools.

    A bundle needs --site. CSV and JSON cover one site with --site, else every site;
    geojson writes every site's position.
    """
    from inspectkit.sync import exports
    from inspectkit.sync.bundle import export_bundle

    since_day = since.date() if since else None
    with open_store(ctx, db) as store:
        site_id = _site_id(store, site)
        if fmt is Format.BUNDLE:
            if site_id is None:
                fail("a bundle holds one site; give --site NAME")
            target = out or Path(
                f"{find_site(store, site_id).name}-{date.today()}.zip".replace(" ", "-")
            )
            try:
                summary = export_bundle(store, site_id, target, since=since_day)
            except BundleError as exc:
                fail(str(exc))
            counts = ", ".join(f"{t} {n}" for t, n in summary.counts.items() if n)
            photos = counted(summary.photos, "photo file")
            typer.echo(f"Wrote {summary.path}: records {counts}; {photos}.")
            return
        if since_day is not None:
            fail("--since applies to bundles only")
        if fmt is Format.GEOJSON:
            collection, unlocated = exports.sites_geojson(store)
            _write(out, lambda handle: exports.write_json(collection, handle))
            if unlocated:
                typer.echo(
                    f"{counted(len(unlocated), 'site')} without coordinates, written with a null "
                    "geometry: "
                    f"{printable(', '.join(unlocated))}; set their latitude and longitude to "
                    "map them",
                    err=True,
                )
            return
        if records is Table.READINGS:
            rows, fields = exports.reading_rows(store, site_id), exports.READING_FIELDS
        else:
            rows, fields = exports.finding_rows(store, site_id), exports.FINDING_FIELDS
    if fmt is Format.CSV:
        _write(out, lambda handle: exports.write_csv(rows, fields, handle))
    else:
        _write(out, lambda handle: exports.write_json(rows, handle))
    if out is not None:
        typer.echo(f"Wrote {len(rows)} {records.value} to {out}.")


def _write(out: Path | None, writer: Callable[[TextIO], None]) -> None:
    if out is None:
        writer(sys.stdout)
        return
    with out.open("w", encoding="utf-8", newline="") as handle:
        writer(handle)


def import_(
    ctx: typer.Context,
    bundle: Annotated[
        Path, typer.Argument(help="Bundle file written by `inspectkit export`.", dir_okay=False)
    ],
    prefer: Annotated[
        Prefer | None,
        typer.Option("--prefer", help="Side that wins a conflict (default: the newer)."),
    ] = None,
    dry_run: Annotated[
        bool, typer.Option("--dry-run", help="Check and report; write nothing.")
    ] = False,
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """Merge a bundle into the database: new records added, newer copies taken, signed kept.

    Exit 1 when records were kept ours because they are signed, or conflicted.
    """
    from inspectkit.sync.merge import import_bundle

    # A laptop that has never held a record receives its first bundle into a new file.
    with open_store(ctx, db, create=True) as store:
        try:
            report = import_bundle(
                store, bundle, prefer=prefer.value if prefer else None, dry_run=dry_run
            )
        except BundleError as exc:
            fail(f"{bundle}: refused, nothing was changed: {exc}")
    if json_out:
        emit_json(
            {
                "site": report.site_name,
                "dry_run": report.dry_run,
                "added": dict(report.added),
                "updated": dict(report.updated),
                "unchanged": report.unchanged,
                "kept_newer": report.kept_newer,
                "photos_added": report.photos_added,
                "kept_signed": report.kept_signed,
                "conflicts": [c.__dict__ for c in report.conflicts],
                "removed": dict(report.removed),
                "kept_deleted": report.kept_deleted,
                "kept_edited": report.kept_edited,
                "notices": report.notices,
            }
        )
    else:
        lines = report.lines()
        typer.echo("\n".join(lines[:MAX_LINES]))
        if len(lines) > MAX_LINES:
            typer.echo(f"  … and {len(lines) - MAX_LINES} more lines (all of them: --json)")
    if report.kept_signed or report.conflicts:
        raise typer.Exit(int(Exit.ACT))


def register(app: typer.Typer) -> None:
    app.command("export")(export)
    app.command("import")(import_)
