"""Producing an inspection's report file: build, render, and optionally sign and freeze.

The command line and the TUI both come through here, so a report made either
way is the same file. Signing is split in three steps (`prepare`, the pyHanko
call, `record_signature`) so that the TUI can await the signature inside its
own event loop; `export_report` runs all three for the command line.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from inspectkit.model import Inspection, InspectionState, Inspector, utcnow
from inspectkit.report.branding import Branding, load_branding
from inspectkit.report.content import ReportContent
from inspectkit.report.keys import key_path
from inspectkit.report.model import ReportError, build_report, revision_of
from inspectkit.report.render import RenderedReport, render_report
from inspectkit.report.sign import SignedReport, sign_pdf
from inspectkit.store import Store


@dataclass(frozen=True)
class Prepared:
    """A rendered report and what signing it needs."""

    inspection: Inspection
    content: ReportContent
    rendered: RenderedReport
    key: Path | None
    signing_at: datetime | None


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
        branding: The contractor's branding (templates/report.toml by default).
        now: The signing time (tests pass a fixed one).

    Raises:
        ReportError: no such inspection, already signed, or no inspector key.
    """
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
        inspector = store.get(Inspector, inspection.inspector_id) if inspection.inspector_id else None
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
    rendered = render_report(content, branding or load_branding())
    return Prepared(inspection, content, rendered, key, signing_at)


def reason(prepared: Prepared) -> str:
    """The signature's stated reason: what is being signed."""
    return (
        f"{prepared.content.title}, {prepared.content.site_name}, "
        f"{prepared.content.inspection_date.isoformat()}, {prepared.content.revision_label}"
    )


def record_signature(store: Store, prepared: Prepared, signed: SignedReport) -> Inspection:
    """Freeze the inspection: signed, when, which revision, and the signed file's hash."""
    frozen = prepared.inspection.model_copy(
        update={
            "state": InspectionState.SIGNED,
            "finished": True,
            "signed_at": prepared.signing_at or utcnow(),
            "report_sha256": signed.sha256,
            "report_revision": revision_of(prepared.inspection),
        }
    )
    return store.save(frozen)


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

    The file is written before the inspection is frozen, so a failure to write
    leaves the inspection a draft.

    Raises:
        ReportError, SignError: see `prepare` and `sign_pdf`.
    """
    sign = passphrase is not None
    prepared = prepare(store, inspection_id, sign=sign, keep_photos=keep_photos,
                       branding=branding, now=now)
    data = prepared.rendered.data
    if sign and prepared.key is not None:
        signed = sign_pdf(data, prepared.key, passphrase or b"", prepared.rendered.signature_slot,
                          reason=reason(prepared), location=prepared.content.site_name)
        output.write_bytes(signed.data)
        record_signature(store, prepared, signed)
        return prepared, signed.data
    output.write_bytes(data)
    return prepared, data
