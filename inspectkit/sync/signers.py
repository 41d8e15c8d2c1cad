"""What a bundle may say about signing: signed inspections only with a trusted seal, no new trust.

A bundle is untrusted input, and a signed report's promise rests on whom this
machine trusts. So a bundle may bring inspectors and their certificates, but
they arrive untrusted (and the import says so); it may not replace a
certificate trusted here; and an inspection it brings as signed is taken only
when its seal verifies against a certificate trusted here and covers exactly
the records the inspection will hold after the import.
"""

from __future__ import annotations

from typing import Any

from inspectkit.store import Store
from inspectkit.store.seal import (
    COVERED_TABLES,
    SealError,
    check_signed,
    open_seal,
    record_key,
    stored_parts,
)
from inspectkit.store.trust import TrustError, fingerprint, is_trusted, spaced
from inspectkit.sync.bundle import Bundle
from inspectkit.sync.guard import BundleError


def check_signed_inspections(store: Store, bundle: Bundle) -> list[str]:
    """Refuse the bundle if an inspection it brings as signed does not hold.

    Returns:
        Records added here to an inspection that arrives signed without them, as
        report lines: they stay, but no signature covers them.

    Raises:
        BundleError: naming the inspection and what does not hold.
    """
    same = bundle.same.get("inspection", set())
    notes = []
    for row in bundle.rows.get("inspection", []):
        if row.get("state") != "signed" or row["id"] in same:
            continue
        try:
            listed = set(open_seal(row.get("seal") or "").fields["records"])
            parts, ours_only = _parts_after_import(store, bundle, row["id"], listed)
            check_signed(row, parts)
        except SealError as exc:
            raise BundleError(
                f"inspection {row['id']} of {row.get('date')} arrives signed, but {exc}; "
                "a signed inspection is taken only with a seal from a certificate trusted "
                "here (`inspectkit keys list`), so the bundle is refused"
            ) from None
        notes.extend(
            f"{key} was added here to inspection {row['id']}, which arrives signed without "
            "it: no signature covers it; record it in an amendment"
            for key in ours_only
        )
    return notes


def _parts_after_import(
    store: Store, bundle: Bundle, inspection_id: str, listed: set[str]
) -> tuple[list[tuple[str, Any]], list[str]]:
    """The inspection's parts the signature must cover, and ours that it cannot.

    Ours, with theirs on top and their withdrawals taken out; of ours that the
    bundle does not carry, only those the seal lists (a bundle made `--since`
    leaves out what did not change): the rest were added here after the two
    databases last met, and are reported rather than taken for part of the signing.
    """
    parts: dict[str, tuple[str, dict[str, Any]]] = {
        record_key(table, row["id"]): (table, row)
        for table, row in stored_parts(store, inspection_id)[1:]
    }
    carried = set()
    for table in COVERED_TABLES[1:]:
        for row in bundle.rows.get(table, []):
            key = record_key(table, row["id"])
            carried.add(key)
            if row.get("inspection_id") == inspection_id:
                parts[key] = (table, row)
            else:
                parts.pop(key, None)
        for row_id in bundle.deleted.get(table, {}):
            parts.pop(record_key(table, row_id), None)
    ours_only = sorted(key for key in parts if key not in carried and key not in listed)
    for key in ours_only:
        del parts[key]
    return list(parts.values()), ours_only


def untrusted_signers(store: Store, bundle: Bundle) -> list[str]:
    """Inspectors the bundle brings with a certificate not trusted here, as report lines.

    Raises:
        BundleError: the bundle gives an inspector a certificate other than the
            one trusted here for them.
    """
    ours = store.rows_by_id("inspector", [r["id"] for r in bundle.rows.get("inspector", [])])
    lines = []
    for row in bundle.rows.get("inspector", []):
        pem = row.get("certificate_pem") or ""
        held = (ours.get(row["id"]) or {}).get("certificate_pem") or ""
        if not pem or pem == held and is_trusted(held):
            continue
        if held and held != pem and is_trusted(held) and not is_trusted(pem):
            raise BundleError(
                f"inspector {row.get('name')} ({row['id']}): the bundle gives a certificate "
                f"({_fingerprint(pem)}) other than the one trusted here; a bundle cannot "
                "replace a trusted certificate. If they made a new key, check its fingerprint "
                "with them and run `inspectkit keys trust FILE` first"
            )
        if not is_trusted(pem):
            lines.append(
                f"inspector {row.get('name')} came with a certificate not trusted here "
                f"(fingerprint {_fingerprint(pem)}): reports it signs read as NOT KNOWN until "
                "you check the fingerprint with them and run `inspectkit keys trust FILE`"
            )
    return lines


def _fingerprint(pem: str) -> str:
    try:
        return spaced(fingerprint(pem))
    except TrustError:
        return "unreadable"
