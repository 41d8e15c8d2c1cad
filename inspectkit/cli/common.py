"""What every command shares: the `--db` option, opening the store, output, exit codes."""

from __future__ import annotations

import json
import sys
from datetime import date, datetime
from enum import IntEnum
from pathlib import Path
from typing import Annotated, Any, NoReturn

import typer

from inspectkit.paths import default_db_path
from inspectkit.printable import printable
from inspectkit.store import Store, StoreError


class Exit(IntEnum):
    """Exit codes that mean something to a script."""

    OK = 0
    #: Something the user must act on: a failing reading, an overdue site, an altered file.
    ACT = 1
    #: Bad input: a wrong option, a file that cannot be read, a record that does not validate.
    BAD_INPUT = 2


#: At most this many lines of problems are printed, then how many more there are.
MAX_LINES = 20

DbOption = Annotated[
    Path | None,
    typer.Option(
        "--db",
        help="Database file (default: the one in your user data folder).",
        dir_okay=False,
        show_default=False,
    ),
]

JsonOption = Annotated[
    bool, typer.Option("--json", help="Print JSON for scripts instead of a table.")
]


def output_option(help_text: str) -> Any:
    """`-o/--output FILE` (`--out` is taken too), the same on every command that writes one."""
    return typer.Option("-o", "--output", "--out", help=help_text, dir_okay=False)


def today_option(purpose: str) -> Any:
    """`--today YYYY-MM-DD`: the day a command works as of, so a script can replay a date.

    Args:
        purpose: what the day is for, as the start of the help ("Judge", "Count ages").
    """
    return typer.Option(
        "--today",
        formats=["%Y-%m-%d"],
        help=f"{purpose} as of this day, YYYY-MM-DD (default: today).",
        show_default=False,
    )


def day_of(today: datetime | None) -> date:
    """The `--today` option's day, or the real one."""
    return today.date() if today is not None else date.today()


def resolve_db(ctx: typer.Context, db: Path | None) -> Path:
    """`--db` given after the command wins over one given before it, then the default."""
    if db is not None:
        return db
    root = ctx.find_root().obj or {}
    return root.get("db") or default_db_path()


def open_store(ctx: typer.Context, db: Path | None, *, create: bool = False) -> Store:
    """Open the database a command works on, or stop with exit 2 and the reason."""
    path = resolve_db(ctx, db)
    try:
        store = Store.open(path, create=create or path == default_db_path())
    except StoreError as exc:
        fail(str(exc))
    show_cautions_once(store)
    return store


def _person_reading() -> bool:
    """A person is at the terminal (stderr is one), not a script reading the output."""
    return sys.stderr.isatty()


def show_cautions_once(store: Store) -> None:
    """The cautions on stderr, the first time a person runs a command on this database.

    Not when the terminal UI has had them acknowledged already, and not for a script
    (stderr not a terminal), whose output nobody reads; the database remembers it.
    """
    from inspectkit.cautions import ACKNOWLEDGED_SETTING, SHOWN_BY_COMMAND_SETTING

    if store.get_setting(SHOWN_BY_COMMAND_SETTING) or store.get_setting(ACKNOWLEDGED_SETTING):
        return
    if not _person_reading():
        return
    typer.echo(cautions_block(again=True), err=True)
    store.set_setting(SHOWN_BY_COMMAND_SETTING, "yes")


def cautions_block(*, again: bool = False) -> str:
    """The cautions as a command prints them, under their title."""
    from inspectkit.cautions import TITLE, cautions_text

    hint = " (shown once; `inspectkit cautions` shows them again)" if again else ""
    return f"{TITLE}{hint}:\n\n{cautions_text()}\n"


def fail(message: str, code: Exit = Exit.BAD_INPUT) -> NoReturn:
    """Print the message on stderr (control characters escaped) and stop."""
    typer.echo(f"inspectkit: {printable(message)}", err=True)
    raise typer.Exit(int(code))


def emit_json(data: Any) -> None:
    """JSON on stdout, dates and enums as text."""
    json.dump(data, sys.stdout, indent=2, ensure_ascii=False, default=str)
    sys.stdout.write("\n")
