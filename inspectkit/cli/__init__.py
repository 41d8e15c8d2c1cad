"""The `inspectkit` command: every job reachable without the TUI.

Each sub-command lives in its own module with a `register(app)` function; this
module only builds the root, so that `inspectkit --help` stays quick and a
command's heavy imports happen when that command runs.
"""

from __future__ import annotations

import importlib
import sys
from pathlib import Path
from typing import Annotated

import typer

from inspectkit import __version__
from inspectkit.cli.common import DbOption, resolve_db
from inspectkit.printable import PrintableStream

#: Modules under inspectkit.cli that add commands.
COMMAND_MODULES = ("sites", "demo", "plan", "sync", "check", "readings", "report", "keys", "verify",
                   "upkeep", "inspection", "entries", "findings", "safety",
                   "organisations", "retire", "geometry")

app = typer.Typer(
    name="inspectkit",
    help="Records, checks, schedules and signed reports for lightning protection inspection.",
    no_args_is_help=False,
    add_completion=False,
    rich_markup_mode=None,
    pretty_exceptions_enable=False,
)


def _version(value: bool) -> None:
    if value:
        typer.echo(f"inspectkit {__version__}")
        raise typer.Exit()


@app.callback(invoke_without_command=True)
def root(
    ctx: typer.Context,
    db: DbOption = None,
    version: Annotated[
        bool,
        typer.Option("--version", callback=_version, is_eager=True, help="Print the version."),
    ] = False,
) -> None:
    """With no command, open the terminal UI on the database."""
    ctx.obj = {"db": db}
    if ctx.invoked_subcommand is None:
        open_tui(resolve_db(ctx, db))
    elif not isinstance(sys.stdout, PrintableStream):
        # Names, notes and messages come from bundles and files: no command prints
        # a control character raw (the TUI draws on the terminal through its own stream).
        sys.stdout = PrintableStream(sys.stdout)  # type: ignore[assignment]


def open_tui(db_path: Path) -> None:
    """Start the terminal UI on a database file."""
    from inspectkit.tui.app import make_app

    make_app(db_path).run()


for _name in COMMAND_MODULES:
    importlib.import_module(f"inspectkit.cli.{_name}").register(app)


def main() -> None:
    app()
