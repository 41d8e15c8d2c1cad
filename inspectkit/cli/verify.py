"""`inspectkit verify`: is a signed report intact, who signed it, and does the database know it."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from inspectkit.cli.common import DbOption, Exit, JsonOption, emit_json, fail, resolve_db


def verify(
    ctx: typer.Context,
    file: Annotated[Path, typer.Argument(help="The signed PDF report.", dir_okay=False)],
    db: DbOption = None,
    cert: Annotated[
        Path | None,
        typer.Option(
            "--cert",
            dir_okay=False,
            help="The inspector's certificate (PEM) to trust, when no database is given.",
        ),
    ] = None,
    json_out: JsonOption = False,
) -> None:
    """Say whether a signed report is intact or altered, who signed it and when.

    Exit 0 when intact and signed by a known inspector; 1 when altered, signed
    by someone not known, or (with --db) not the file the database recorded.
    """
    from inspectkit.model import Site
    from inspectkit.report.keys import certificate_from_pem
    from inspectkit.report.verify import (
        NO_SIGNATURE,
        inspection_for_file,
        inspector_certificates,
        verify_pdf,
    )
    from inspectkit.store import Store, StoreError

    try:
        data = file.read_bytes()
    except OSError as exc:
        fail(f"{file}: cannot read it ({exc.strerror})")
    trusted: list[str] = []
    if cert is not None:
        try:
            text = cert.read_text(encoding="ascii")
            certificate_from_pem(text)
        except (OSError, ValueError) as exc:
            fail(f"--cert {cert}: not a PEM certificate ({exc})")
        trusted.append(text)
    record = None
    site_name = None
    db_given = db is not None or (ctx.find_root().obj or {}).get("db") is not None
    if db_given:
        try:
            store = Store.open(resolve_db(ctx, db), create=False)
        except StoreError as exc:
            fail(str(exc))
        with store:
            trusted += [i.certificate_pem for i in inspector_certificates(store)]
            result = verify_pdf(data, trusted)
            record = inspection_for_file(store, result.sha256)
            if record is not None:
                site = store.get(Site, record.site_id)
                site_name = site.name if site else None
    else:
        result = verify_pdf(data, trusted)
    matches = record is not None if db_given else None
    ok = result.ok and matches is not False
    if json_out:
        emit_json(
            {
                "file": str(file),
                "intact": result.intact,
                "whole_file": result.whole_file,
                "trusted": result.trusted,
                "signer": result.signer,
                "signed_at": result.signed_at.isoformat() if result.signed_at else None,
                "sha256": result.sha256,
                "matches_database": matches,
                "inspection": record.id if record else None,
                "problem": result.problem,
                "ok": ok,
            }
        )
    else:
        if result.intact and result.whole_file:
            typer.echo(f"{file}: INTACT — unchanged since it was signed")
        elif result.problem == NO_SIGNATURE:
            typer.echo(f"{file}: NOT SIGNED — {result.problem}; nothing to verify")
        else:
            typer.echo(f"{file}: ALTERED — {result.problem}")
        if result.signer:
            when = result.signed_at.isoformat(timespec="minutes") if result.signed_at else "?"
            typer.echo(f"Signed by {result.signer} at {when}")
        if result.signer and not result.trusted and result.intact:  # altered: trust is moot
            typer.echo("Signer NOT KNOWN: the certificate is not one given by --db or --cert")
        if matches is True and record is not None:
            typer.echo(
                f"Matches the database: inspection {record.id} of {record.date.isoformat()}"
                f" at {site_name}, revision {record.report_revision}"
            )
        elif matches is False:
            typer.echo("Does NOT match the database: no signed inspection has this file's sha256")
    raise typer.Exit(int(Exit.OK if ok else Exit.ACT))


def register(app: typer.Typer) -> None:
    app.command("verify")(verify)
