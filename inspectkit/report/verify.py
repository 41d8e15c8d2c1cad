"""Checking a signed report: intact or altered, who signed it, and whether the database knows it.

The decision rests on pyHanko's `intact` and `bottom_line` only: after a byte
inside the signed range is changed, `valid` may still read True. A damaged
signature blob raises instead of returning a status; that too means altered.
"""

from __future__ import annotations

import hashlib
import logging
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime
from io import BytesIO
from typing import Any

from inspectkit.model import Inspection, Inspector
from inspectkit.store import Store

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


def _quiet() -> None:
    """An untrusted self-signed signer makes the validator log a traceback; we report it."""
    for name in ("pyhanko", "pyhanko_certvalidator"):
        logging.getLogger(name).setLevel(logging.CRITICAL)


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
    return signatures[-1], ""


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

    _quiet()
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

    _quiet()
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


def inspector_certificates(store: Store) -> list[Inspector]:
    """Inspectors with a certificate on record: the trust roots a database gives."""
    return store.select(Inspector, "certificate_pem != ''")


def inspection_for_file(store: Store, sha256: str) -> Inspection | None:
    """The inspection whose signed report has exactly this hash."""
    found = store.select(Inspection, "report_sha256 = ?", [sha256])
    return found[0] if found else None
