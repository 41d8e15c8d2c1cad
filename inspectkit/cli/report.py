"""`inspectkit report` and `inspectkit amend`: write, sign and correct PDF inspection reports."""

from __future__ import annotations

from datetime import date
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
from inspectkit.cli.keys import passphrase
from inspectkit.model import Inspection
from inspectkit.store import Store


def _inspection(store: Store, inspection_id: str | None, site: str | None) -> Inspection:
    from inspectkit.report.gather import latest_inspection
    from inspectkit.store.queries import find_site

    if inspection_id and site:
        fail("give an inspection id or --site, not both")
    if inspection_id:
        found = store.get(Inspection, inspection_id)
        if found is None:
            fail(f"no inspection with id {inspection_id}; list them with `inspectkit sites`")
        return found
    if not site:
        fail("give the inspection id, or --site NAME to report on a site's latest inspection")
    place = find_site(store, site)
    if place is None:
        fail(f"--site {site!r}: no single site matches; check the name or give its id")
    latest = latest_inspection(store, place.id)
    if latest is None:
        fail(f"{place.name} has no inspection yet")
    return latest


def _default_name(store: Store, inspection: Inspection) -> Path:
    from inspectkit.model import Site
    from inspectkit.report.publish import default_file_name

    site = store.get(Site, inspection.site_id)
    return Path(default_file_name(site.name if site else "site", inspection))


def report(
    ctx: typer.Context,
    inspection_id: Annotated[
        str | None,
        typer.Argument(help="The inspection's id.", show_default=False, metavar="INSPECTION"),
    ] = None,
    site: Annotated[
        str | None,
        typer.Option("--site", help="Report on this site's latest inspection (name or id)."),
    ] = None,
    output: Annotated[
        Path | None,
        output_option("PDF file to write (default: <site>-<date>-r<revision>.pdf here)."),
    ] = None,
    sign: Annotated[
        bool,
        typer.Option("--sign", help="Sign with the inspector's key and freeze the inspection."),
    ] = False,
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """Write an inspection's PDF report; with --sign, sign it and freeze the inspection."""
    from inspectkit.profiles import ProfileError
    from inspectkit.report.branding import BrandingError
    from inspectkit.report.gather import ReportError
    from inspectkit.report.publish import export_report
    from inspectkit.report.render import RenderError
    from inspectkit.report.sign import SignError

    with open_store(ctx, db) as store:
        inspection = _inspection(store, inspection_id, site)
        path = output or _default_name(store, inspection)
        secret = passphrase() if sign else None
        try:
            prepared, data = export_report(store, inspection.id, path, passphrase=secret)
        except (ReportError, SignError, RenderError, BrandingError, ProfileError) as exc:
            fail(str(exc))
        except OSError as exc:
            fail(f"{path}: cannot write the report ({exc.strerror})")
        after = store.get(Inspection, inspection.id)
    summary = {
        "file": str(path),
        "inspection": inspection.id,
        "site": prepared.content.site_name,
        "pages": prepared.rendered.pages,
        "bytes": len(data),
        "verdict": prepared.content.verdict_word,
        "signed": bool(sign),
        "sha256": after.report_sha256 if sign and after else None,
        "revision": prepared.content.revision_label,
    }
    if json_out:
        emit_json(summary)
        return
    state = f"signed, sha256 {summary['sha256']}" if sign else "not signed"
    typer.echo(
        f"{path}: {summary['pages']} pages, {len(data) / 1e6:.1f} MB, "
        f"{prepared.content.verdict_word}; {state}"
    )


def amend(
    ctx: typer.Context,
    inspection_id: Annotated[
        str, typer.Argument(help="The signed inspection to correct.", metavar="INSPECTION")
    ],
    db: DbOption = None,
) -> None:
    """Start an amendment of a signed inspection: a new draft holding copies of its records."""
    from inspectkit.report.amend import AmendError, create_amendment

    with open_store(ctx, db) as store:
        try:
            amendment = create_amendment(store, inspection_id, date.today())
        except AmendError as exc:
            fail(str(exc), Exit.BAD_INPUT)
    typer.echo(
        f"Amendment {amendment.id} (revision {amendment.report_revision}) created as a "
        f"draft; edit it, then `inspectkit report {amendment.id} --sign`."
    )


def register(app: typer.Typer) -> None:
    app.command("report")(report)
    app.command("amend")(amend)
