"""`inspectkit cautions`: the safety cautions, the same list the TUI and every report show."""

from __future__ import annotations

import typer

from inspectkit.cli.common import JsonOption, cautions_block, emit_json


def cautions(json_out: JsonOption = False) -> None:
    """Show the safety cautions (the same as the TUI's first start and every report)."""
    from inspectkit.cautions import CAUTIONS, TITLE

    if json_out:
        emit_json({"title": TITLE, "cautions": list(CAUTIONS)})
    else:
        typer.echo(cautions_block())


def register(app: typer.Typer) -> None:
    app.command("cautions")(cautions)
