"""`inspectkit verify`: is a signed report intact, who signed it, and does the database know it."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Annotated

import typer

from inspectkit.cli.common import (
    MAX_LINES,
    DbOption,
    Exit,
    JsonOption,
    emit_json,
    fail,
    resolve_db,
)

if TYPE_CHECKING:
    from inspectkit.report.verify import DatabaseCheck, Verification


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
    from inspectkit.report.verify import verify_pdf

    try:
        data = file.read_bytes()
    except OSError as exc:
        fail(f"{file}: cannot read it ({exc.strerror})")
    result = verify_pdf(data, _trusted(cert))
    checked, site_name = None, None
    if db is not None or (ctx.find_root().obj or {}).get("db") is not None:
        checked, site_name = _check_database(ctx, db, data, result.sha256)
    matches = checked.matches if checked is not None else None
    ok = result.ok and matches is not False
    if json_out:
        _emit_json(file, result, checked, ok)
    else:
        _signature_lines(file, result)
        if checked is not None:
            _database_lines(checked, site_name)
    raise typer.Exit(int(Exit.OK if ok else Exit.ACT))


def _trusted(cert: Path | None) -> list[str]:
    """The certificates to trust: those kept on this machine, and `--cert` if given."""
    from inspectkit.report.keys import certificate_from_pem
    from inspectkit.report.verify import trusted_certificates
    from inspectkit.store.trust import TrustError

    try:
        trusted = trusted_certificates()
    except TrustError as exc:
        fail(str(exc))
    if cert is not None:
        try:
            text = cert.read_text(encoding="ascii")
            certificate_from_pem(text)
        except (OSError, ValueError) as exc:
            fail(f"--cert {cert}: not a PEM certificate ({exc})")
        trusted.append(text)
    return trusted


def _check_database(
    ctx: typer.Context, db: Path | None, data: bytes, sha256: str
) -> tuple[DatabaseCheck, str | None]:
    """The database's word on the file, and the name of the site it speaks of."""
    from inspectkit.model import Site
    from inspectkit.report.verify import check_database
    from inspectkit.store import Store, StoreError

    try:
        store = Store.open(resolve_db(ctx, db), create=False)
    except StoreError as exc:
        fail(str(exc))
    with store:
        checked = check_database(store, data, sha256)
        site_name = None
        if checked.inspection is not None:
            site = store.get(Site, checked.inspection.site_id)
            site_name = site.name if site else None
    return checked, site_name


def _emit_json(file: Path, result: Verification, checked: DatabaseCheck | None, ok: bool) -> None:
    record = checked.inspection if checked is not None else None
    emit_json(
        {
            "file": str(file),
            "intact": result.intact,
            "whole_file": result.whole_file,
            "trusted": result.trusted,
            "signer": result.signer,
            "signed_at": result.signed_at.isoformat() if result.signed_at else None,
            "sha256": result.sha256,
            "matches_database": checked.matches if checked is not None else None,
            "inspection": record.id if record else None,
            "differences": checked.differences if checked else [],
            "problem": result.problem,
            "ok": ok,
        }
    )


def _signature_lines(file: Path, result: Verification) -> None:
    from inspectkit.report.verify import NO_SIGNATURE

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
        typer.echo(
            "Signer NOT KNOWN: the certificate is not one made on this machine, trusted "
            "with `inspectkit keys trust FILE`, or given with --cert"
        )


def _database_lines(checked: DatabaseCheck, site_name: str | None) -> None:
    record = checked.inspection
    if record is None:
        typer.echo("Does NOT match the database: no signed inspection has this file's sha256")
        return
    if checked.matches:
        typer.echo(
            f"Matches the database: inspection {record.id} of {record.date.isoformat()}"
            f" at {site_name}, revision {record.report_revision}"
        )
    else:
        typer.echo(
            f"Does NOT match the database: inspection {record.id} holds records other than "
            "those the signature covers"
        )
    for line in checked.differences[:MAX_LINES]:
        typer.echo(f"  {line}")
    if len(checked.differences) > MAX_LINES:
        typer.echo(f"  … and {len(checked.differences) - MAX_LINES} more")
    if checked.audit_head_held is False:
        typer.echo(
            "  the audit log no longer holds the row that was its head at signing: "
            "it was rewritten or cut short since"
        )
    if not checked.covered:
        typer.echo("  (the report does not say which records it covers: signed by an old version)")


def register(app: typer.Typer) -> None:
    app.command("verify")(verify)
