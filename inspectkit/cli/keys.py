"""`inspectkit keys`: make or import an inspector's signing key and record its certificate."""

from __future__ import annotations

import os
import re
from pathlib import Path
from typing import Annotated

import typer

from inspectkit.cli.common import (
    DbOption,
    Exit,
    JsonOption,
    emit_json,
    fail,
    open_store,
    output_option,
)
from inspectkit.model import Inspector
from inspectkit.store import Store
from inspectkit.store.record_queries import (
    inspectors_named,
    inspectors_named_from,
    inspectors_with_certificate,
)

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
    for matching in (inspectors_named, inspectors_named_from):
        matches = matching(store, name_or_id)
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
    from inspectkit.store.trust import trust

    with open_store(ctx, db) as store:
        person = find_inspector(store, inspector)
        try:
            key = read_key(file, passphrase())
        except KeyProblem as exc:
            fail(str(exc))
        # The user holds the key itself and chose to use it here: it is theirs to trust.
        trust(key.certificate_pem, "key imported on this machine")
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


@keys_app.command("trust")
def trust_certificate(
    file: Annotated[
        Path, typer.Argument(help="The certificate (PEM) to trust.", dir_okay=False)
    ],
    yes: Annotated[
        bool, typer.Option("--yes", help="Trust without asking (the fingerprint was checked).")
    ] = False,
) -> None:
    """Trust a certificate to sign reports, after comparing its fingerprint with its owner."""
    from inspectkit.store.trust import (
        TrustError,
        fingerprint,
        is_trusted,
        spaced,
        subject_of,
        trust,
    )

    try:
        pem = file.read_text(encoding="ascii")
        fp, subject = fingerprint(pem), subject_of(pem)
    except (OSError, UnicodeDecodeError) as exc:
        fail(f"{file}: cannot read it as a PEM certificate ({exc})")
    except TrustError as exc:
        fail(f"{file}: {exc}")
    typer.echo(f"Certificate of {subject}")
    typer.echo(f"Fingerprint (SHA-256): {spaced(fp)}")
    if is_trusted(pem):
        typer.echo("Already trusted here.")
        return
    typer.echo("Compare the fingerprint with its owner (by phone, in person) before you trust it.")
    if not yes and not typer.confirm("Trust this certificate to sign reports?", default=False):
        fail("not trusted; nothing was changed", Exit.ACT)
    trust(pem, "trusted by hand")
    typer.echo(f"Trusted: reports signed by {subject} with this key now verify here.")


@keys_app.command("list")
def list_keys(ctx: typer.Context, db: DbOption = None, json_out: JsonOption = False) -> None:
    """Inspectors' certificates and the certificates trusted here, each trusted or not."""
    from inspectkit.store.trust import TrustError, fingerprint, spaced, trusted

    try:
        known = trusted()
    except TrustError as exc:
        fail(str(exc))
    with open_store(ctx, db) as store:
        people = inspectors_with_certificate(store)
    rows = []
    for person in people:
        try:
            fp = fingerprint(person.certificate_pem)
        except TrustError:
            fp = ""
        how = known[fp].how if fp in known else ""
        rows.append(
            {"inspector": person.name, "id": person.id, "fingerprint": fp,
             "trusted": fp in known, "how": how}
        )  # fmt: skip
    named = {row["fingerprint"] for row in rows}
    rows += [
        {"inspector": None, "id": None, "fingerprint": fp, "trusted": True, "how": entry.how,
         "subject": entry.subject}  # fmt: skip
        for fp, entry in known.items()
        if fp not in named
    ]
    if json_out:
        emit_json(rows)
        return
    for row in rows:
        who = row["inspector"] or f"{row.get('subject')} (no inspector here)"
        state = f"TRUSTED ({row['how']})" if row["trusted"] else "NOT TRUSTED"
        typer.echo(f"{who}: {state}")
        typer.echo(f"  fingerprint {spaced(row['fingerprint']) if row['fingerprint'] else '?'}")
    if not rows:
        typer.echo("No certificates yet: make a key with `inspectkit keys new --inspector NAME`.")


def register(app: typer.Typer) -> None:
    app.add_typer(keys_app, name="keys")
