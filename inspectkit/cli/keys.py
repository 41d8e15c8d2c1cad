"""`inspectkit keys`: make or import an inspector's signing key and record its certificate."""

from __future__ import annotations

import os
import re
from pathlib import Path
from typing import Annotated

import typer

from inspectkit.cli.common import DbOption, fail, open_store, output_option
from inspectkit.model import Inspector
from inspectkit.store import Store

#: Read instead of prompting, so scripts can sign unattended.
PASSPHRASE_ENV = "INSPECTKIT_PASSPHRASE"

InspectorOption = Annotated[
    str, typer.Option("--inspector", help="The inspector's name (or the start of it) or id.")
]

keys_app = typer.Typer(
    help="Signing keys of inspectors.", no_args_is_help=True, rich_markup_mode=None
)


def passphrase(*, confirm: bool = False) -> bytes:
    """The key passphrase from INSPECTKIT_PASSPHRASE, or asked for without echo."""
    value = os.environ.get(PASSPHRASE_ENV)
    if value is None:
        value = typer.prompt("Key passphrase", hide_input=True, confirmation_prompt=confirm)
    if not value:
        fail(f"the passphrase is empty; type one, or set {PASSPHRASE_ENV}")
    return value.encode("utf-8")


def find_inspector(store: Store, name_or_id: str) -> Inspector:
    """An inspector by id, exact name, or the one name starting with the text; else stop."""
    found = store.get(Inspector, name_or_id)
    if found is not None:
        return found
    for where in ("lower(name) = lower(?)", "lower(name) LIKE lower(?) || '%'"):
        matches = store.select(Inspector, where, [name_or_id])
        if len(matches) == 1:
            return matches[0]
        if len(matches) > 1:
            names = ", ".join(m.name for m in matches)
            fail(f"--inspector {name_or_id!r} matches {names}; give more of the name or the id")
    fail(f"--inspector {name_or_id!r}: no such inspector; check the name or id")


def _slug(text: str) -> str:
    return re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-") or "key"


@keys_app.command("new")
def new(
    ctx: typer.Context,
    inspector: InspectorOption,
    output: Annotated[
        Path | None,
        output_option("Key file to write (default: beside the database, in <db>-keys/)."),
    ] = None,
    db: DbOption = None,
) -> None:
    """Make a passphrase-protected key and self-signed certificate for an inspector."""
    from inspectkit.report.keys import KeyProblem, keys_dir, new_key, stored_key_path

    with open_store(ctx, db) as store:
        person = find_inspector(store, inspector)
        try:
            path = output or keys_dir(store) / f"{_slug(person.name)}-{person.id[:8]}.p12"
        except KeyProblem as exc:
            fail(str(exc))
        if path.exists():
            fail(f"{path} exists already; choose another file with -o")
        secret = passphrase(confirm=True)
        try:
            made = new_key(
                path,
                secret,
                name=person.name,
                organisation=person.organisation,
                qualification=person.qualification,
            )
        except KeyProblem as exc:
            fail(str(exc))
        store.save(
            person.model_copy(
                update={
                    "signing_key": stored_key_path(store, path),
                    "certificate_pem": made.certificate_pem,
                }
            )
        )
    typer.echo(f"Key for {person.name} written to {path}")
    typer.echo(
        f"Certificate valid until {made.not_after.date().isoformat()}; "
        "give clients the certificate (inspectkit keys show) to check reports with."
    )


@keys_app.command("import")
def import_key(
    ctx: typer.Context,
    file: Annotated[
        Path, typer.Argument(help="PKCS#12 file (.p12/.pfx) from a CA.", dir_okay=False)
    ],
    inspector: InspectorOption,
    db: DbOption = None,
) -> None:
    """Use a key and certificate issued by a certificate authority for an inspector."""
    from inspectkit.report.keys import KeyProblem, read_key, stored_key_path

    with open_store(ctx, db) as store:
        person = find_inspector(store, inspector)
        try:
            key = read_key(file, passphrase())
        except KeyProblem as exc:
            fail(str(exc))
        store.save(
            person.model_copy(
                update={
                    "signing_key": stored_key_path(store, file),
                    "certificate_pem": key.certificate_pem,
                }
            )
        )
    typer.echo(f"Key of {key.subject} recorded for {person.name} (file {file})")


@keys_app.command("show")
def show(ctx: typer.Context, inspector: InspectorOption, db: DbOption = None) -> None:
    """Print an inspector's certificate (PEM), to hand to clients who check reports."""
    with open_store(ctx, db) as store:
        person = find_inspector(store, inspector)
    if not person.certificate_pem:
        fail(f"{person.name} has no certificate yet; run `inspectkit keys new --inspector ...`")
    typer.echo(person.certificate_pem, nl=False)


def register(app: typer.Typer) -> None:
    app.add_typer(keys_app, name="keys")
