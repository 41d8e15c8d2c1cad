"""`inspectkit retire`: take an inspector or instrument out of use, keeping it for the history."""

from __future__ import annotations

from datetime import date
from enum import StrEnum
from typing import Annotated

import typer

from inspectkit.cli import lookups
from inspectkit.cli.common import DbOption, fail, open_store
from inspectkit.model import Inspector, Instrument
from inspectkit.retiring import retire


class Kind(StrEnum):
    """What can be retired."""

    INSPECTOR = "inspector"
    INSTRUMENT = "instrument"


def _day(text: str | None) -> date:
    if text is None:
        return date.today()
    try:
        return date.fromisoformat(text.strip())
    except ValueError:
        fail(f"--on: {text!r} is not a date; type it as YYYY-MM-DD, e.g. 2026-07-31")


def retire_command(
    ctx: typer.Context,
    kind: Annotated[Kind, typer.Argument(help="inspector or instrument.")],
    name: Annotated[
        str, typer.Argument(help="The inspector's name, or the instrument's serial; or the id.")
    ],
    on: Annotated[
        str | None, typer.Option("--on", help="Retired from this day, YYYY-MM-DD (default: today).")
    ] = None,
    db: DbOption = None,
) -> None:
    """Retire an inspector or instrument (added by mistake, or no longer in use).

    Old inspections and readings keep it; pickers and defaults no longer offer it.
    """
    day = _day(on)
    with open_store(ctx, db) as store:
        if kind is Kind.INSPECTOR:
            person = retire(store, Inspector, lookups.inspector(store, name).id, day)
            typer.echo(f"retired inspector {person.name} from {person.retired_on}")
        else:
            meter = retire(store, Instrument, lookups.instrument(store, name).id, day)
            typer.echo(f"retired instrument {meter.description} {meter.serial} "
                       f"from {meter.retired_on}")  # fmt: skip


def register(app: typer.Typer) -> None:
    app.command("retire")(retire_command)
