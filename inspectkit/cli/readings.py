"""`inspectkit readings import`: readings from a test instrument's CSV file."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import typer

from inspectkit.cli.common import DbOption, JsonOption, emit_json, fail, open_store
from inspectkit.model import Instrument, Method, Quantity

readings_app = typer.Typer(
    help="Readings: add one as the walkdown does, or import an instrument's CSV file.",
    no_args_is_help=True,
)


@readings_app.command("import")
def import_csv(
    ctx: typer.Context,
    file: Annotated[
        Path, typer.Argument(help="CSV file written by the instrument.", dir_okay=False)
    ],
    inspection: Annotated[str, typer.Option("--inspection", help="Id of the draft inspection.")],
    columns: Annotated[
        str,
        typer.Option(
            "--map",
            help="Which column holds what, by header name or 1-based position: "
            "tag=Point,value=Reading,taken_at=Date[,unit=Unit,quantity=…,method=…,"
            "joint_state=…,note=…,traverse=…,current_probe=…]; a traverse cell holds "
            "'52%=3.8; 61.8%=3.9; 72%=4.0' and its value cell stays empty.",
        ),
    ],
    quantity: Annotated[
        Quantity | None, typer.Option("--quantity", help="What every row measures.")
    ] = None,
    method: Annotated[
        Method | None, typer.Option("--method", help="How every row was measured.")
    ] = None,
    unit: Annotated[
        str | None,
        typer.Option("--unit", help="Unit of bare numbers in the value column, e.g. mΩ."),
    ] = None,
    decimal_comma: Annotated[
        bool, typer.Option("--decimal-comma", help="Commas in values are decimal commas.")
    ] = False,
    dayfirst: Annotated[
        bool, typer.Option("--dayfirst", help="Dates like 03/04/2026 are day/month.")
    ] = False,
    tz: Annotated[
        str, typer.Option("--tz", help="Time zone of times written without one, e.g. Europe/Paris.")
    ] = "UTC",
    instrument: Annotated[
        str | None, typer.Option("--instrument", help="Instrument id or serial number.")
    ] = None,
    delimiter: Annotated[
        str | None, typer.Option("--delimiter", help="Column separator (default: guessed).")
    ] = None,
    no_header: Annotated[
        bool, typer.Option("--no-header", help="The first line is data; map columns by position.")
    ] = False,
    dry_run: Annotated[
        bool, typer.Option("--dry-run", help="Check and report; save nothing.")
    ] = False,
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """Import readings, matching rows to components by tag; one bad row imports nothing."""
    from inspectkit.sync.csvimport import ColumnMap, CsvImportError, CsvOptions, import_readings_csv

    try:
        zone = ZoneInfo(tz)
    except (ZoneInfoNotFoundError, ValueError):
        fail(f"--tz {tz!r} is not a time zone; use a name such as UTC or Europe/Paris")
    with open_store(ctx, db) as store:
        instrument_id = None
        if instrument is not None:
            found = store.select(Instrument, "id = ? OR serial = ?", [instrument, instrument])
            if len(found) != 1:
                fail(f"--instrument {instrument!r}: no single instrument has that id or serial")
            instrument_id = found[0].id
        try:
            options = CsvOptions(
                quantity=quantity, method=method, unit=unit, decimal_comma=decimal_comma,
                dayfirst=dayfirst, tz=zone, instrument_id=instrument_id, header=not no_header,
                delimiter=delimiter,
            )  # fmt: skip
            result = import_readings_csv(
                store, file, inspection, ColumnMap.parse(columns), options, dry_run=dry_run
            )
        except CsvImportError as exc:
            fail(f"{file}:\n" + "\n".join(f"  {p}" for p in exc.problems))
    if json_out:
        emit_json(
            {
                "dry_run": dry_run,
                "added": result.added,
                "rows": [
                    {"row": o.row, "line": o.line, "tag": o.tag, "action": o.action,
                     "reading_id": o.reading.id}
                    for o in result.rows
                ],
            }
        )  # fmt: skip
        return
    for outcome in result.rows:
        typer.echo(outcome.describe(dry_run))
    verb = "would be added" if dry_run else "added"
    typer.echo(f"{result.added} readings {verb}, {len(result.rows) - result.added} skipped.")


def register(app: typer.Typer) -> None:
    app.add_typer(readings_app, name="readings")
