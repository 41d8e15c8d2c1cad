"""Checking a signed report: intact or altered, who signed it, and whether the database knows it.

The decision rests on pyHanko's `intact` and `bottom_line` only: after a byte
inside the signed range is changed, `valid` may still read True. A damaged
signature blob raises instead of returning a status; that too means altered,
and so does a change in the zero padding around the signature, which the
signature itself does not cover.

Signers are trusted only through this user's own list (`store.trust`), never
through the certificates a database holds: a bundle can bring those. With the
database, the records the signature covers are compared one by one with what
the database holds now, and the audit chain must still hold its head at signing.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime
from io import BytesIO
from typing import Any

from inspectkit.model import Inspection
from inspectkit.report.sign import COVERED_KEY, quiet_pyhanko
from inspectkit.store import Store
from inspectkit.store.audit_key import stored_id
from inspectkit.store.record_queries import audit_holds, inspections_with_report
from inspectkit.store.seal import (
    covered_digests,
    differences,
    digest_map,
    part_labels,
    stored_parts,
)
from inspectkit.store.trust import trusted

#: The problem reported for a PDF that was never signed.
NO_SIGNATURE = "the file carries no signature"


@dataclass(frozen=True)
class Verification:
    """What a check of a signed file found.

    Attributes:
        intact: The signed bytes are unchanged and the signature is mathematically sound.
        trusted: The signer's certificate is one of the trusted certificates given.
        signer: The name in the signer's certificate, if a signature was found.
        signed_at: The signing time the signer's software recorded.
        sha256: Hash of the whole file, to compare with the database.
        whole_file: The signature covers the whole file (nothing appended after it).
        problem: Why the file is not intact, in words; empty when it is.
    """

    intact: bool
    trusted: bool
    signer: str | None
    signed_at: datetime | None
    sha256: str
    whole_file: bool
    problem: str = ""

    @property
    def ok(self) -> bool:
        """Intact, covering the whole file, and signed by someone we know."""
        return self.intact and self.trusted and self.whole_file


def _context(trust_pems: Sequence[str]) -> Any:
    from asn1crypto import pem, x509
    from pyhanko_certvalidator import ValidationContext

    roots = []
    for text in trust_pems:
        if text.strip():
            _, _, der = pem.unarmor(text.encode("ascii"))
            roots.append(x509.Certificate.load(der))
    return ValidationContext(trust_roots=roots, allow_fetching=False)


def _embedded(data: bytes) -> tuple[Any, str]:
    """The file's signature, or None and the reason there is none."""
    from pyhanko.pdf_utils.misc import PdfError
    from pyhanko.pdf_utils.reader import PdfFileReader

    try:
        signatures = PdfFileReader(BytesIO(data), strict=False).embedded_signatures
    except (PdfError, ValueError, KeyError, IndexError, TypeError) as exc:
        return None, f"the file cannot be read as a PDF ({exc})"
    if not signatures:
        return None, NO_SIGNATURE
    embedded = signatures[-1]
    if not _padding_is_clean(embedded.pkcs7_content):
        return None, "the signature's container was changed after signing"
    return embedded, ""


def _padding_is_clean(contents: bytes) -> bool:
    """The bytes after the signature's DER object are the zeros signing left there.

    The signed byte range leaves the signature's own slot out, and a parser reads
    only the DER object at its start: without this a change in the padding would
    read as intact.
    """
    from asn1crypto import parser

    try:
        _, _, _, header, body, trailer = parser.parse(contents)
    except (ValueError, TypeError):
        return False
    return not contents[len(header) + len(body) + len(trailer) :].strip(b"\0")


def _result(data: bytes, embedded: Any, status: Any, problem: str) -> Verification:
    from pyhanko.sign.validation import SignatureCoverageLevel

    sha = hashlib.sha256(data).hexdigest()
    if status is None:
        return Verification(False, False, _signer_of(embedded), None, sha, False, problem)
    whole = status.coverage == SignatureCoverageLevel.ENTIRE_FILE
    if not status.intact:
        problem = "the signed content was changed after signing"
    elif not status.valid:
        problem = "the signature does not match the signer's certificate"
    elif not whole:
        problem = "content was added to the file after it was signed"
    return Verification(
        intact=bool(status.intact and status.valid),
        trusted=bool(status.trusted),
        signer=_signer_of(embedded),
        signed_at=status.signer_reported_dt,
        sha256=sha,
        whole_file=whole,
        problem=problem,
    )


def _signer_of(embedded: Any) -> str | None:
    if embedded is None:
        return None
    try:
        return str(embedded.signer_cert.subject.native.get("common_name") or "")
    except (ValueError, KeyError, AttributeError, TypeError):
        return None


def verify_pdf(data: bytes, trust_pems: Sequence[str] = ()) -> Verification:
    """Check a signed report against the given trusted certificates (PEM text)."""
    from pyhanko.sign.validation import validate_pdf_signature
    from pyhanko.sign.validation.errors import SignatureValidationError

    quiet_pyhanko()
    embedded, problem = _embedded(data)
    if embedded is None:
        return _result(data, None, None, problem)
    try:
        status = validate_pdf_signature(embedded, signer_validation_context=_context(trust_pems))
    except (SignatureValidationError, ValueError, KeyError, TypeError) as exc:
        return _result(data, embedded, None, f"the signature is damaged ({exc})")
    return _result(data, embedded, status, "")


async def async_verify_pdf(data: bytes, trust_pems: Sequence[str] = ()) -> Verification:
    """`verify_pdf` for code already running an event loop (the TUI)."""
    from pyhanko.sign.validation import async_validate_pdf_signature
    from pyhanko.sign.validation.errors import SignatureValidationError

    quiet_pyhanko()
    embedded, problem = _embedded(data)
    if embedded is None:
        return _result(data, None, None, problem)
    try:
        status = await async_validate_pdf_signature(
            embedded, signer_validation_context=_context(trust_pems)
        )
    except (SignatureValidationError, ValueError, KeyError, TypeError) as exc:
        return _result(data, embedded, None, f"the signature is damaged ({exc})")
    return _result(data, embedded, status, "")


def trusted_certificates() -> list[str]:
    """The certificates this user trusts (made here, or trusted with `keys trust`), as PEM."""
    return [entry.pem for entry in trusted().values()]


def covered_in(data: bytes) -> dict[str, Any] | None:
    """What a report's signature covers in the database, as embedded at signing; None if absent."""
    from pyhanko.pdf_utils.misc import PdfError
    from pyhanko.pdf_utils.reader import PdfFileReader

    try:
        text = PdfFileReader(BytesIO(data), strict=False).root.get(COVERED_KEY)
        covered = json.loads(str(text)) if text is not None else None
    except (PdfError, ValueError, KeyError, TypeError, RecursionError):
        return None
    return covered if isinstance(covered, dict) else None


@dataclass(frozen=True)
class DatabaseCheck:
    """How a signed report compares with the database.

    Attributes:
        inspection: The signed inspection recorded with this file's hash, if any.
        differences: Each record that is not what the signature covers, in words.
        audit_head_held: The audit chain still holds the row that was its head at
            signing; None when the report carries no head (signed by an older version)
            or was signed in another database.
        covered: The report carries what its signature covers.
    """

    inspection: Inspection | None
    differences: list[str]
    audit_head_held: bool | None
    covered: bool

    @property
    def matches(self) -> bool:
        return self.inspection is not None and not self.differences and (
            self.audit_head_held is not False
        )


def check_database(store: Store, data: bytes, sha256: str) -> DatabaseCheck:
    """Compare the records a report's signature covers with what the database holds now."""
    record = inspection_for_file(store, sha256)
    covered = covered_in(data)
    if covered is not None and digest_map(covered.get("records")) is None:
        covered = None  # not what inspectkit embeds: nothing to compare
    if record is None or covered is None:
        return DatabaseCheck(record, [], None, covered is not None)
    if covered.get("inspection_id") != record.id:
        return DatabaseCheck(record, ["the report covers another inspection"], None, True)
    parts = stored_parts(store, record.id)
    now = covered_digests(parts)
    head = covered.get("audit_head")
    held = None
    # Only the database that signed holds that head; a copy received by bundle has its own log.
    if isinstance(head, str) and covered.get("database_id") == stored_id(store.db):
        held = audit_holds(store, head)
    wrong = differences(covered["records"], now, part_labels(store, parts))
    return DatabaseCheck(record, wrong, held, True)


def inspection_for_file(store: Store, sha256: str) -> Inspection | None:
    """The inspection whose signed report has exactly this hash."""
    found = inspections_with_report(store, sha256)
    return found[0] if found else None
