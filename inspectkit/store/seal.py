"""What a signature covers: an inspection's records in a canonical form, and the seal over them.

A signed report's PDF signature covers the file, and the file alone says nothing
about the database. So at signing the report embeds a digest of every record
the inspection holds (its own fields, each reading, finding and photo, the photo
by its file's hash) and the audit chain's head; and the inspection keeps a
*seal*: the same digests, the report's hash and the signing time, signed with the
inspector's key. The seal travels with the inspection in bundles, so another
database can check that a signed inspection is what its signer signed, against a
certificate it trusts itself (`store.trust`), before taking it as signed.

What is left out of a record's digest is what may still change once signed: the
save stamps, the fields the signing itself sets, and the later inspection that
resolves a finding.
"""

from __future__ import annotations

import base64
import hashlib
import json
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

from cryptography import x509
from cryptography.exceptions import InvalidSignature
from cryptography.hazmat.primitives import hashes
from cryptography.hazmat.primitives.asymmetric import ec, padding, rsa

from inspectkit.store.audit import last_hash
from inspectkit.store.audit_key import database_id
from inspectkit.store.database import Store
from inspectkit.store.rows import canonical
from inspectkit.store.trust import TrustError, fingerprint, is_trusted

FORMAT = "inspectkit-seal"
VERSION = 1
#: The tables whose rows an inspection's signature covers, its own first.
COVERED_TABLES = ("inspection", "reading", "finding", "photo")
_STAMPS = frozenset({"created_at", "updated_at", "updated_by"})
#: Fields left out of each table's digest: they may change after signing, or are set by it.
_LEFT_OUT = {
    "inspection": _STAMPS
    | {"state", "finished", "signed_at", "report_sha256", "report_revision", "seal"},
    "reading": _STAMPS,
    "finding": _STAMPS | {"resolved_by"},
    "photo": _STAMPS,
}


class SealError(Exception):
    """A seal that does not hold; the message names what is wrong."""


def record_key(table: str, row_id: str) -> str:
    return f"{table} {row_id}"


def record_digest(table: str, row: Mapping[str, Any]) -> str:
    """The sha256 of a row's canonical text without the fields a signature does not cover."""
    kept = {k: v for k, v in row.items() if k not in _LEFT_OUT[table]}
    return hashlib.sha256((canonical(kept) or "").encode("utf-8")).hexdigest()


def covered_digests(rows: Iterable[tuple[str, Mapping[str, Any]]]) -> dict[str, str]:
    """`"table id"` → digest, for (table, row) pairs of one inspection."""
    return {record_key(t, row["id"]): record_digest(t, row) for t, row in rows}


def differences(
    signed: Mapping[str, str], now: Mapping[str, str], labels: Mapping[str, str] | None = None
) -> list[str]:
    """Each record that differs from what was signed, in words, in the order of their keys.

    Args:
        signed: Digests as signed, by `record_key`.
        now: Digests of the records as they are.
        labels: How a person recognises a record (its component's tag), by key.
    """
    found = []
    for key in sorted(set(signed) | set(now)):
        named = f"{key} ({labels[key]})" if labels and key in labels else key
        if key not in now:
            found.append(f"{named} was signed but is no longer there")
        elif key not in signed:
            found.append(f"{named} was added after signing")
        elif signed[key] != now[key]:
            found.append(f"{named} differs from what was signed")
    return found


def part_labels(store: Store, parts: Iterable[tuple[str, Mapping[str, Any]]]) -> dict[str, str]:
    """A reading's, finding's or photo's component tag and what it is, by `record_key`."""
    tags = dict(store.db.execute("SELECT id, tag FROM component"))
    labels = {}
    for table, row in parts:
        what = row.get("quantity") or row.get("grade") or row.get("original_name") or ""
        tag = tags.get(row.get("component_id"), "")
        if table != "inspection" and (tag or what):
            labels[record_key(table, row["id"])] = " ".join(str(x) for x in (tag, what) if x)
    return labels


def stored_parts(store: Store, inspection_id: str) -> list[tuple[str, dict[str, Any]]]:
    """The inspection's row and its readings, findings and photos, as stored."""
    held = store.rows_by_id("inspection", [inspection_id]).values()
    parts: list[tuple[str, dict[str, Any]]] = [("inspection", row) for row in held]
    for table in COVERED_TABLES[1:]:
        sql = f"SELECT * FROM [{table}] WHERE inspection_id = ?"
        cursor = store.db.execute(sql, [inspection_id])
        names = [d[0] for d in cursor.description]
        parts.extend((table, dict(zip(names, values, strict=True))) for values in cursor)
    return parts


def covered_now(store: Store, inspection_id: str) -> dict[str, Any]:
    """What a signature made now covers: the records' digests, and the audit chain's head
    in the database that signs (named, since the inspection may travel to others)."""
    ident = database_id(store)
    return {
        "inspection_id": inspection_id,
        "records": covered_digests(stored_parts(store, inspection_id)),
        "database_id": ident,
        "audit_head": last_hash(store.db),
    }


def digest_map(value: Any) -> dict[str, str] | None:
    """`value` if it is a map of record keys to digests (as a seal or a report holds), else None."""
    if isinstance(value, dict) and all(
        isinstance(k, str) and isinstance(v, str) for k, v in value.items()
    ):
        return value
    return None


def payload_text(fields: Mapping[str, Any]) -> str:
    """The seal's signed text: canonical JSON, so both sides hash the same bytes."""
    return canonical({"format": FORMAT, "version": VERSION, **fields}) or ""


def make_seal(payload: str, signature: bytes, certificate_pem: str) -> str:
    """The text the inspection keeps: payload, signature and signer's certificate."""
    return json.dumps(
        {
            "payload": payload,
            "signature": base64.b64encode(signature).decode("ascii"),
            "certificate": certificate_pem,
        },
        separators=(",", ":"),
    )


@dataclass(frozen=True)
class Seal:
    """A seal checked to be signed by the certificate it carries."""

    fields: dict[str, Any]
    certificate_pem: str
    trusted: bool
    fingerprint: str


def open_seal(text: str) -> Seal:
    """Check a seal's signature and read it; trust is looked up, not required.

    Raises:
        SealError: no seal, not one, or its signature does not hold.
    """
    if not text:
        raise SealError("it carries no seal (signed without inspectkit's signing step)")
    try:
        outer = json.loads(text)
        payload = outer["payload"]
        signature = base64.b64decode(outer["signature"], validate=True)
        pem = outer["certificate"]
        fields = json.loads(payload)
        cert = x509.load_pem_x509_certificate(pem.encode("ascii"))
        fp = fingerprint(pem)
    except (ValueError, KeyError, TypeError, TrustError, UnicodeError, RecursionError) as exc:
        raise SealError(f"its seal cannot be read ({exc.__class__.__name__})") from None
    if not isinstance(fields, dict) or fields.get("format") != FORMAT:
        raise SealError("its seal is not an inspectkit seal")
    if digest_map(fields.get("records")) is None:
        raise SealError("its seal does not list its records' digests")
    if fields.get("version") != VERSION:
        raise SealError(f"its seal is of an unknown version {fields.get('version')!r}")
    try:
        _verify(cert, signature, payload.encode("utf-8"))
    except (InvalidSignature, ValueError, TypeError):
        raise SealError("its seal's signature does not match its content") from None
    return Seal(fields, pem, is_trusted(pem), fp)


def _verify(cert: x509.Certificate, signature: bytes, data: bytes) -> None:
    key = cert.public_key()
    if isinstance(key, rsa.RSAPublicKey):
        key.verify(signature, data, padding.PKCS1v15(), hashes.SHA256())
    elif isinstance(key, ec.EllipticCurvePublicKey):
        key.verify(signature, data, ec.ECDSA(hashes.SHA256()))
    else:
        raise ValueError("unsupported key type")


def check_signed(
    row: Mapping[str, Any],
    parts: Iterable[tuple[str, Mapping[str, Any]]],
    *,
    require_trust: bool = True,
) -> Seal:
    """A signed inspection row and its records hold: a trusted seal that covers exactly them.

    Args:
        row: The inspection's row, as stored.
        parts: Its readings, findings and photos as (table, row).
        require_trust: The seal's certificate must be trusted here (off for the
            doctor, which asks only whether the records are still those signed).

    Raises:
        SealError: what does not hold, naming the first record that differs.
    """
    seal = open_seal(row.get("seal") or "")
    fields = seal.fields
    if require_trust and not seal.trusted:
        raise SealError(
            f"it is signed with a certificate not trusted here (fingerprint {seal.fingerprint})"
        )
    for name in ("inspection_id", "report_sha256", "signed_at"):
        expected = row["id"] if name == "inspection_id" else row.get(name)
        if fields.get(name) != expected:
            raise SealError(f"its {name} is not the one its seal signed")
    now = covered_digests([("inspection", row), *parts])
    wrong = differences(fields["records"], now)
    if wrong:
        more = f" (and {len(wrong) - 1} more)" if len(wrong) > 1 else ""
        raise SealError(f"its records are not those signed: {wrong[0]}{more}")
    return seal
