"""`inspectkit readings import`: readings from a test instrument's CSV file."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Annotated
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import typer

from inspectkit.cli.common import DbOption, JsonOption, emit_json, fail, open_store
from inspectkit.model import Method, Quantity
from inspectkit.store.record_queries import instruments_by_id_or_serial

if TYPE_CHECKING:
    from inspectkit.store import Store
    from inspectkit.sync.csvimport import CsvImport

readings_app = typer.Typer(
    help="Readings: add one as the walkdown does, or import an instrument's CSV file.",
    no_args_is_help=True,
)


# The import's options, one alias each, so that the command's signature stays readable.
FileArgument = Annotated[
    Path, typer.Argument(help="CSV file written by the instrument.", dir_okay=False)
]
InspectionOption = Annotated[str, typer.Option("--inspection", help="Id of the draft inspection.")]
MapOption = Annotated[
    str,
    typer.Option(
        "--map",
        help="Which column holds what, by header name or 1-based position: "
        "tag=Point,value=Reading,taken_at=Date[,unit=Unit,quantity=…,method=…,"
        "joint_state=…,note=…,traverse=…,current_probe=…]; a traverse cell holds "
        "'52%=3.8; 61.8%=3.9; 72%=4.0' and its value cell stays empty.",
    ),
]
QuantityOption = Annotated[
    Quantity | None, typer.Option("--quantity", help="What every row measures.")
]
MethodOption = Annotated[
    Method | None, typer.Option("--method", help="How every row was measured.")
]
UnitOption = Annotated[
    str | None,
    typer.Option("--unit", help="Unit of bare numbers in the value column, e.g. mΩ."),
]
DecimalCommaOption = Annotated[
    bool, typer.Option("--decimal-comma", help="Commas in values are decimal commas.")
]
DayfirstOption = Annotated[
    bool, typer.Option("--dayfirst", help="Dates like 03/04/2026 are day/month.")
]
TzOption = Annotated[
    str, typer.Option("--tz", help="Time zone of times written without one, e.g. Europe/Paris.")
]
InstrumentOption = Annotated[
    str | None, typer.Option("--instrument", help="Instrument id or serial number.")
]
DelimiterOption = Annotated[
    str | None, typer.Option("--delimiter", help="Column separator (default: guessed).")
]
NoHeaderOption = Annotated[
    bool, typer.Option("--no-header", help="The first line is data; map columns by position.")
]
DryRunOption = Annotated[bool, typer.Option("--dry-run", help="Check and report; save nothing.")]


@readings_app.command("import")
def import_csv(
    ctx: typer.Context,
    file: FileArgument,
    inspection: InspectionOption,
    columns: MapOption,
    quantity: QuantityOption = None,
    method: MethodOption = None,
    unit: UnitOption = None,
    decimal_comma: DecimalCommaOption = False,
    dayfirst: DayfirstOption = False,
    tz: TzOption = "UTC",
    instrument: InstrumentOption = None,
    delimiter: DelimiterOption = None,
    no_header: NoHeaderOption = False,
    dry_run: DryRunOption = False,
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """Import readings, matching rows to components by tag; one bad row imports nothing."""
    from inspectkit.sync.csv_options import ColumnMap, CsvImportError, CsvOptions
    from inspectkit.sync.csvimport import import_readings_csv

    try:
        zone = ZoneInfo(tz)
    except (ZoneInfoNotFoundError, ValueError):
        fail(f"--tz {tz!r} is not a time zone; use a name such as UTC or Europe/Paris")
    with open_store(ctx, db) as store:
        instrument_id = None if instrument is None else _instrument_id(store, instrument)
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
        _emit_json(result, dry_run)
        return
    for outcome in result.rows:
        typer.echo(outcome.describe(dry_run))
    verb = "would be added" if dry_run else "added"
    typer.echo(f"{result.added} readings {verb}, {len(result.rows) - result.added} skipped.")


def _instrument_id(store: Store, text: str) -> str:
    """The id of the one instrument whose id or serial is `text`; else stop."""
    found = instruments_by_id_or_serial(store, text)
    if len(found) != 1:
        fail(f"--instrument {text!r}: no single instrument has that id or serial")
    return found[0].id


def _emit_json(result: CsvImport, dry_run: bool) -> None:
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


def register(app: typer.Typer) -> None:
    app.add_typer(readings_app, name="readings")
