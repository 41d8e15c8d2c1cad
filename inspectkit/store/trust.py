"""The certificates this user trusts to sign reports, kept outside any database.

A database travels (bundles, backups, a copied file), so nothing in it can say
whom to trust: a bundle could otherwise bring its own signer. The list lives in
the user config folder instead, written by this machine only: a key made here
is trusted when it is made, any other certificate when the user has checked its
fingerprint and said so (`inspectkit keys trust FILE`).
"""

from __future__ import annotations

import hashlib
import json
import os
from dataclasses import dataclass
from pathlib import Path

from cryptography import x509
from cryptography.hazmat.primitives import serialization

from inspectkit.model import utcnow
from inspectkit.paths import user_config_dir

TRUST_FILE = "trusted-certificates.json"


class TrustError(Exception):
    """The trust list or a certificate cannot be read; the message says what to do."""


@dataclass(frozen=True)
class Trusted:
    """One trusted certificate: its fingerprint, whom it names, and how it came to be trusted."""

    fingerprint: str
    subject: str
    pem: str
    how: str
    added_at: str


def private_folder(folder: Path) -> Path:
    """A folder only this user can open (0700), made if need be."""
    folder.mkdir(parents=True, exist_ok=True, mode=0o700)
    folder.chmod(0o700)
    return folder


def write_private(path: Path, data: bytes, *, exclusive: bool = False) -> None:
    """Write a file only this user can read (0600) from its first byte, never chmod-ed later.

    Args:
        path: The file; its folder is made private if it is new.
        data: The content.
        exclusive: Refuse (FileExistsError) when the file exists, instead of replacing it.
    """
    if not path.parent.exists():
        private_folder(path.parent)
    if exclusive:
        fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
        return
    temp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    fd = os.open(temp, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o600)
    with os.fdopen(fd, "wb") as handle:
        handle.write(data)
        handle.flush()
        os.fsync(handle.fileno())
    os.replace(temp, path)


def fingerprint(pem: str) -> str:
    """The SHA-256 of the certificate's DER bytes, in hex: what two people compare by phone."""
    return hashlib.sha256(_load(pem).public_bytes(serialization.Encoding.DER)).hexdigest()


def spaced(fp: str) -> str:
    """A fingerprint in groups of four, easier to read aloud."""
    return " ".join(fp[n : n + 4] for n in range(0, len(fp), 4))


def subject_of(pem: str) -> str:
    cert = _load(pem)
    names = cert.subject.get_attributes_for_oid(x509.NameOID.COMMON_NAME)
    return str(names[0].value) if names else cert.subject.rfc4514_string()


def _load(pem: str) -> x509.Certificate:
    try:
        return x509.load_pem_x509_certificate(pem.encode("ascii"))
    except (ValueError, UnicodeEncodeError) as exc:
        raise TrustError(f"not a PEM certificate ({exc})") from exc


def trust_path() -> Path:
    return user_config_dir() / TRUST_FILE


def trusted() -> dict[str, Trusted]:
    """Every trusted certificate by fingerprint; none when the list does not exist yet."""
    path = trust_path()
    try:
        content = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        return {}
    except (OSError, ValueError) as exc:
        raise TrustError(
            f"{path}: the list of trusted certificates cannot be read ({exc}); "
            "move it away and trust the certificates again with `inspectkit keys trust`"
        ) from exc
    items = content.get("certificates", []) if isinstance(content, dict) else []
    return {
        item["fingerprint"]: Trusted(**item)
        for item in items
        if isinstance(item, dict) and set(item) == set(Trusted.__dataclass_fields__)
    }


def is_trusted(pem: str) -> bool:
    if not pem.strip():
        return False
    try:
        return fingerprint(pem) in trusted()
    except TrustError:
        return False


def trust(pem: str, how: str) -> Trusted:
    """Add a certificate to the trusted list (nothing changes when it is there already)."""
    fp = fingerprint(pem)
    known = trusted()
    if fp in known:
        return known[fp]
    entry = Trusted(fp, subject_of(pem), pem, how, utcnow().isoformat())
    known[fp] = entry
    data = {"version": 1, "certificates": [item.__dict__ for item in known.values()]}
    write_private(trust_path(), json.dumps(data, indent=2).encode("utf-8"))
    return entry
