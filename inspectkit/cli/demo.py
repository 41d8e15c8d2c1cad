"""`inspectkit demo`: a fresh copy of the invented demo scenario, in the TUI or on disk."""

from __future__ import annotations

import tempfile
from datetime import date
from pathlib import Path
from typing import Annotated

import typer

from inspectkit.cli.common import fail, output_option


def _parse_day(value: str | None) -> date | None:
    if value is None:
        return None
    try:
        return date.fromisoformat(value)
    except ValueError:
        raise typer.BadParameter(f"{value!r} is not a date; use YYYY-MM-DD") from None


def demo(
    out: Annotated[
        Path | None,
        output_option("Write the demo database (and its photos beside it) here and stop."),
    ] = None,
    anchor: Annotated[
        str | None,
        typer.Option(
            "--anchor",
            help="Date the scenario is built around, YYYY-MM-DD (default: today).",
            show_default=False,
        ),
    ] = None,
) -> None:
    """Open a fresh copy of the demo scenario, so the demo can't be spoiled."""
    from inspectkit.demo.generate import build_demo
    from inspectkit.demo.scenario import ScenarioError

    day = _parse_day(anchor) or date.today()
    if out is not None and out.exists():
        fail(f"{out} exists already; give a new path for the demo database")
    target = out or Path(tempfile.mkdtemp(prefix="inspectkit-demo-")) / "demo.sqlite"
    try:
        path = build_demo(target, anchor=day)
    except ScenarioError as exc:
        fail(str(exc))
    if out is not None:
        typer.echo(f"Demo database written to {out}")
        return
    from inspectkit.cli import open_tui

    open_tui(path)


def register(app: typer.Typer) -> None:
    app.command("demo")(demo)
