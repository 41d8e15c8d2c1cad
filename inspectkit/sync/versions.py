"""Which versions of a record a database has seen, read from its audit log.

Every version a database ever held of a record is the `after` (or `before`) of one
of its audit rows, and a version that lost a conflict is kept there too. So the
audit log already knows "the last exchange": if their copy is one we have seen,
ours is the same or later; if ours is one they have seen, theirs is later; if
neither, both sides edited since they last met, and that is a conflict.
"""

from __future__ import annotations

import hashlib
from collections.abc import Sequence
from typing import Any

from inspectkit.store import Store
from inspectkit.store.rows import canonical
from inspectkit.store.sync_rows import audit_versions


def version_hash(row: dict[str, Any]) -> str:
    """The sha256 of a row in the audit log's canonical text."""
    return _text_hash(canonical(row) or "")


def _text_hash(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def known_versions(store: Store, table: str, ids: Sequence[str]) -> dict[str, set[str]]:
    """For each record id changed after it was added, the hashes of all its versions.

    A record only ever inserted has one version, the one it holds now, so its
    insert row is skipped: every later version shows as some row's `before`, the
    first included, and a conflict row holds both sides.
    """
    known: dict[str, set[str]] = {}
    for row_id, before, after in audit_versions(store, table, ids):
        versions = known.setdefault(row_id, set())
        for text in (before, after):
            if text is not None:
                versions.add(_text_hash(text))
    return known
