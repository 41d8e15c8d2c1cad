"""Producing an inspection's report file: build, render, and optionally sign and freeze.

The command line and the TUI both come through here, so a report made either
way is the same file: `export_report` for the command line, and
`export_report_async` for the TUI, which must not block or nest its event loop.
"""

from __future__ import annotations

import asyncio
import json
import re
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path
from typing import Any

from inspectkit.model import Inspection, InspectionState, Inspector, utcnow
from inspectkit.report.branding import Branding
from inspectkit.report.content import ReportContent
from inspectkit.report.gather import ReportError, build_report, revision_of
from inspectkit.report.keys import KeyProblem, key_path, sign_payload
from inspectkit.report.letterhead import report_branding
from inspectkit.report.render import RenderedReport, render_report
from inspectkit.report.sign import SignedReport, SignError, async_sign_pdf, sign_pdf
from inspectkit.store import Store
from inspectkit.store.audit_key import anchor
from inspectkit.store.rows import to_row
from inspectkit.store.seal import covered_now, make_seal, payload_text


@dataclass(frozen=True)
class Prepared:
    """A rendered report and what signing it needs."""

    inspection: Inspection
    content: ReportContent
    rendered: RenderedReport
    key: Path | None
    signing_at: datetime | None
    #: What the signature will cover in the database (`store.seal`); None when not signing.
    covered: dict[str, Any] | None = None

    def covered_text(self) -> str:
        if not self.covered:
            return ""
        return json.dumps(self.covered, sort_keys=True, separators=(",", ":"))


def default_file_name(site_name: str, inspection: Inspection) -> str:
    """`<site>-<date>-r<revision>.pdf`, the name a report is saved under unless told otherwise."""
    slug = re.sub(r"[^a-z0-9]+", "-", site_name.lower()).strip("-") or "site"
    return f"{slug}-{inspection.date.isoformat()}-r{revision_of(inspection)}.pdf"


def _plan(
    store: Store,
    inspection_id: str,
    sign: bool,
    keep_photos: set[str] | None,
    now: datetime | None,
) -> tuple[Inspection, ReportContent, Path | None, datetime | None]:
    """The database side of a report: check it may be signed, then build its content."""
    inspection = store.get(Inspection, inspection_id)
    if inspection is None:
        raise ReportError(f"no inspection with id {inspection_id}; check the id")
    key = None
    signing_at = None
    if sign:
        if inspection.state is InspectionState.SIGNED:
            raise ReportError(
                f"inspection {inspection_id} is signed already; to correct it, run "
                f"`inspectkit amend {inspection_id}` and sign the amendment"
            )
        inspector = (
            store.get(Inspector, inspection.inspector_id) if inspection.inspector_id else None
        )
        if inspector is None:
            raise ReportError(
                f"inspection {inspection_id} names no inspector; set one before signing"
            )
        if not inspector.signing_key:
            raise ReportError(
                f"inspector {inspector.name} has no signing key; make one with "
                f"`inspectkit keys new --inspector {inspector.id}`"
            )
        key = key_path(store, inspector)
        signing_at = now or utcnow()
    content = build_report(store, inspection_id, signing=signing_at)
    if keep_photos is not None:
        content = content.without_photos(keep_photos)
    return inspection, content, key, signing_at


def prepare(
    store: Store,
    inspection_id: str,
    *,
    sign: bool = False,
    keep_photos: set[str] | None = None,
    branding: Branding | None = None,
    now: datetime | None = None,
) -> Prepared:
    """Build and render a report; when it is to be signed, check it can be first.

    Args:
        store: The database.
        inspection_id: The inspection reported on.
        sign: The report will be signed: the inspection must be a draft whose
            inspector has a key.
        keep_photos: Ids of the photos to include (all by default).
        branding: The letterhead (by default the inspector's organisation's).
        now: The signing time (tests pass a fixed one).

    Raises:
        ReportError: no such inspection, already signed, or no inspector key.
    """
    inspection, content, key, signing_at = _plan(store, inspection_id, sign, keep_photos, now)
    rendered = render_report(content, branding or report_branding(store, inspection))
    covered = covered_now(store, inspection_id) if sign else None
    return Prepared(inspection, content, rendered, key, signing_at, covered)


def reason(prepared: Prepared) -> str:
    """The signature's stated reason: what is being signed."""
    return (
        f"{prepared.content.title}, {prepared.content.site_name}, "
        f"{prepared.content.inspection_date.isoformat()}, {prepared.content.revision_label}"
    )


def _finish(
    store: Store,
    prepared: Prepared,
    output: Path,
    signed: SignedReport | None,
    passphrase: bytes | None = None,
) -> bytes:
    """Write the file, then (when signed) seal and freeze the inspection.

    A failed write leaves a draft. The seal signs what the report's signature
    covers, with the report's hash and signing time, so the signed inspection
    can travel to another database and be checked there.
    """
    data = signed.data if signed is not None else prepared.rendered.data
    if signed is None or prepared.key is None or passphrase is None:
        output.write_bytes(data)
        return data
    sealed = seal_signed(
        prepared.inspection,
        prepared.covered or {},
        prepared.key,
        passphrase,
        report_sha256=signed.sha256,
        signed_at=prepared.signing_at or utcnow(),
    )
    output.write_bytes(data)
    store.save(sealed)
    anchor(store, f"inspection {sealed.id} was signed")
    return data


def seal_signed(
    inspection: Inspection,
    covered: dict[str, Any],
    key: Path,
    passphrase: bytes,
    *,
    report_sha256: str,
    signed_at: datetime,
) -> Inspection:
    """The inspection as signed: frozen fields set, and its seal over what the report covers.

    Raises:
        SignError: the key file cannot sign (see `keys.sign_payload`).
    """
    frozen = inspection.model_copy(
        update={
            "state": InspectionState.SIGNED,
            "finished": True,
            "signed_at": signed_at,
            "report_sha256": report_sha256,
            "report_revision": revision_of(inspection),
        }
    )
    row = to_row(frozen)
    payload = payload_text(
        {**covered, "report_sha256": row["report_sha256"], "signed_at": row["signed_at"]}
    )
    try:
        signature, certificate = sign_payload(key, passphrase, payload.encode("utf-8"))
    except KeyProblem as exc:
        raise SignError(str(exc)) from None
    return frozen.model_copy(update={"seal": make_seal(payload, signature, certificate)})


def export_report(
    store: Store,
    inspection_id: str,
    output: Path,
    *,
    passphrase: bytes | None = None,
    keep_photos: set[str] | None = None,
    branding: Branding | None = None,
    now: datetime | None = None,
) -> tuple[Prepared, bytes]:
    """Write an inspection's report to `output`, signed and frozen when a passphrase is given.

    Raises:
        ReportError, SignError: see `prepare` and `sign_pdf`.
    """
    prepared = prepare(
        store,
        inspection_id,
        sign=passphrase is not None,
        keep_photos=keep_photos,
        branding=branding,
        now=now,
    )
    signed = None
    if passphrase is not None and prepared.key is not None:
        signed = sign_pdf(
            prepared.rendered.data,
            prepared.key,
            passphrase,
            prepared.rendered.signature_slot,
            reason=reason(prepared),
            location=prepared.content.site_name,
            covered=prepared.covered_text(),
        )
    return prepared, _finish(store, prepared, output, signed, passphrase)


async def export_report_async(
    store: Store,
    inspection_id: str,
    output: Path,
    *,
    passphrase: bytes | None = None,
    keep_photos: set[str] | None = None,
    branding: Branding | None = None,
    now: datetime | None = None,
) -> tuple[Prepared, bytes]:
    """`export_report` inside a running event loop (the TUI).

    The database work stays on the loop's thread (a connection cannot cross
    threads); the rendering, which touches no database, runs in a worker thread;
    the signature is awaited.
    """
    inspection, content, key, signing_at = _plan(
        store, inspection_id, passphrase is not None, keep_photos, now
    )
    letterhead = branding or report_branding(store, inspection)
    rendered = await asyncio.to_thread(render_report, content, letterhead)
    covered = covered_now(store, inspection_id) if passphrase is not None else None
    prepared = Prepared(inspection, content, rendered, key, signing_at, covered)
    signed = None
    if passphrase is not None and key is not None:
        signed = await async_sign_pdf(
            rendered.data,
            key,
            passphrase,
            rendered.signature_slot,
            reason=reason(prepared),
            location=content.site_name,
            covered=prepared.covered_text(),
        )
    return prepared, _finish(store, prepared, output, signed, passphrase)
