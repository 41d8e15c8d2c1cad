"""`inspectkit organisations`: the inspecting organisations whose letterheads reports carry."""

from __future__ import annotations

from typing import Annotated

import typer
from pydantic import ValidationError

from inspectkit.cli import lookups
from inspectkit.cli.common import DbOption, JsonOption, emit_json, fail, open_store
from inspectkit.model import Organisation, explain
from inspectkit.store.record_queries import (
    inspectors_by_name,
    organisations_by_name,
    organisations_named,
)

organisations_app = typer.Typer(
    help="Inspecting organisations: list, add, and say which one an inspector works for.",
    no_args_is_help=False,
    invoke_without_command=True,
    rich_markup_mode=None,
)


@organisations_app.callback()
def listing(ctx: typer.Context, db: DbOption = None, json_out: JsonOption = False) -> None:
    """List the organisations, the default first, with their inspectors."""
    if ctx.invoked_subcommand is not None:
        return
    from inspectkit.report.letterhead import ensure_default_organisation

    with open_store(ctx, db) as store:
        ensure_default_organisation(store)
        found = organisations_by_name(store, default_first=True)
        members = {o.id: [] for o in found}
        for inspector in inspectors_by_name(store):
            members.setdefault(inspector.organisation_id or "", []).append(inspector.name)
    if json_out:
        emit_json(
            [
                {"id": o.id, "name": o.name, "default": o.is_default, "inspectors": members[o.id]}
                for o in found
            ]
        )
        return
    for organisation in found:
        mark = " (default)" if organisation.is_default else ""
        people = ", ".join(members[organisation.id]) or "no inspector"
        typer.echo(f"{organisation.name}{mark}: {people}  [{organisation.id}]")


@organisations_app.command("add")
def add(
    ctx: typer.Context,
    name: Annotated[str, typer.Argument(help="The organisation's name.")],
    address: Annotated[str, typer.Option("--address", help="Postal address.")] = "",
    phone: Annotated[str, typer.Option("--phone", help="Telephone.")] = "",
    email: Annotated[str, typer.Option("--email", help="E-mail address.")] = "",
    logo: Annotated[str, typer.Option("--logo", help="Path of a logo image.")] = "",
    db: DbOption = None,
) -> None:
    """Add an inspecting organisation."""
    try:
        made = Organisation(name=name, address=address, phone=phone, email=email, logo=logo)
    except ValidationError as exc:
        fail(explain(exc))
    with open_store(ctx, db) as store:
        store.save(made)
    typer.echo(f"Added {made.name} [{made.id}]")


@organisations_app.command("join")
def join(
    ctx: typer.Context,
    inspector: Annotated[str, typer.Argument(help="The inspector (name or id).")],
    organisation: Annotated[str, typer.Argument(help="The organisation (name or id).")],
    db: DbOption = None,
) -> None:
    """Say which organisation an inspector works for: its letterhead goes on their reports."""
    with open_store(ctx, db) as store:
        person = lookups.inspector(store, inspector)
        found = organisations_named(store, organisation.strip())
        chosen = found[0] if len(found) == 1 else store.get(Organisation, organisation.strip())
        if chosen is None:
            fail(f"no organisation {organisation!r}; `inspectkit organisations` lists them")
        store.save(person.model_copy(update={"organisation_id": chosen.id}))
    typer.echo(f"{person.name} works for {chosen.name}")


def register(app: typer.Typer) -> None:
    app.add_typer(organisations_app, name="organisations")
