"""Signing a rendered report with the inspector's key (PAdES, through pyHanko).

pyHanko takes about a third of a second to import, so it is imported inside
the functions that need it; `inspectkit --help` and the TUI's start stay quick.
The synchronous `sign_pdf` runs its own event loop: inside the TUI use
`async_sign_pdf` (or a thread worker).
"""

from __future__ import annotations

import hashlib
import logging
import unicodedata
from dataclasses import dataclass
from io import BytesIO
from pathlib import Path
from typing import Any

#: Name of the signature field every report carries.
FIELD_NAME = "InspectorSignature"
#: Catalog entry holding what the signature covers in the database (see `store.seal`).
COVERED_KEY = "/InspectkitCovered"


class SignError(Exception):
    """A report could not be signed; the message says what to do."""


@dataclass(frozen=True)
class SignatureSlot:
    """Where the visible signature goes: a page (0-based) and a box in PDF points."""

    page: int
    box: tuple[int, int, int, int]


@dataclass(frozen=True)
class SignedReport:
    """A signed file's bytes and the hash the database keeps of them."""

    data: bytes
    sha256: str


def quiet_pyhanko() -> None:
    """pyHanko logs tracebacks (a wrong passphrase, an untrusted signer) that we report in words."""
    for name in ("pyhanko", "pyhanko_certvalidator"):
        logging.getLogger(name).setLevel(logging.CRITICAL)


def _prepare(
    pdf: bytes,
    key_path: Path,
    passphrase: bytes,
    slot: SignatureSlot,
    *,
    reason: str,
    location: str,
    covered: str = "",
) -> tuple[Any, Any]:
    """The pyHanko signer and the incremental writer holding the new field (and `covered`)."""
    from pyhanko.pdf_utils import generic
    from pyhanko.pdf_utils.incremental_writer import IncrementalPdfFileWriter
    from pyhanko.sign import fields, signers
    from pyhanko.stamp import TextStampStyle

    quiet_pyhanko()
    if not key_path.is_file():
        raise SignError(f"{key_path}: no such key file; make one with `inspectkit keys new`")
    signer = signers.SimpleSigner.load_pkcs12(str(key_path), passphrase=passphrase)
    if signer is None:
        raise SignError(f"{key_path}: wrong passphrase, or not a PKCS#12 key file")
    writer = IncrementalPdfFileWriter(BytesIO(pdf))
    if covered:
        # In the revision the signature covers: changing it afterwards shows as altered.
        writer.root[generic.NameObject(COVERED_KEY)] = generic.TextStringObject(covered)
        writer.update_root()
    fields.append_signature_field(
        writer,
        fields.SigFieldSpec(sig_field_name=FIELD_NAME, on_page=slot.page, box=slot.box),
    )
    pdf_signer = signers.PdfSigner(
        signers.PdfSignatureMetadata(
            field_name=FIELD_NAME,
            md_algorithm="sha256",
            reason=reason,
            location=location or None,
        ),
        signer=signer,
        stamp_style=TextStampStyle(
            stamp_text="Digitally signed by\n%(signer)s\n%(ts)s",
            border_width=0,
        ),
    )
    return pdf_signer, writer


def sign_pdf(
    pdf: bytes,
    key_path: Path,
    passphrase: bytes,
    slot: SignatureSlot,
    *,
    reason: str,
    location: str = "",
    covered: str = "",
) -> SignedReport:
    """Sign a rendered report; the original bytes stay as they were, the signature is appended.

    Args:
        covered: What the signature covers in the database (`store.seal`), as JSON
            text, kept in the signed revision for `verify --db` to compare.

    Raises:
        SignError: missing key file or wrong passphrase.
    """
    pdf_signer, writer = _prepare(
        pdf, key_path, passphrase, slot, reason=_latin(reason), location=_latin(location),
        covered=covered,
    )  # fmt: skip
    out = BytesIO()
    pdf_signer.sign_pdf(writer, output=out)
    return _signed(out)


async def async_sign_pdf(
    pdf: bytes,
    key_path: Path,
    passphrase: bytes,
    slot: SignatureSlot,
    *,
    reason: str,
    location: str = "",
    covered: str = "",
) -> SignedReport:
    """`sign_pdf` for code already running an event loop (the TUI)."""
    pdf_signer, writer = _prepare(
        pdf, key_path, passphrase, slot, reason=_latin(reason), location=_latin(location),
        covered=covered,
    )  # fmt: skip
    out = BytesIO()
    await pdf_signer.async_sign_pdf(writer, output=out)
    return _signed(out)


def _signed(out: BytesIO) -> SignedReport:
    data = out.getvalue()
    return SignedReport(data=data, sha256=hashlib.sha256(data).hexdigest())


def _latin(text: str) -> str:
    """Text the stamp's standard font can show: accents kept, other letters decomposed."""
    try:
        text.encode("cp1252")
    except UnicodeEncodeError:
        return "".join(
            c if c.encode("cp1252", "ignore") else unicodedata.normalize("NFKD", c)[:1]
            for c in text
        )
    return text
