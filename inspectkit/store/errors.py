"""What the store refuses: one exception each, its message saying why and what to do.

Apart from `database.py` so that the modules the store is built of can raise them
without importing the `Store` they serve.
"""

from __future__ import annotations


class StoreError(Exception):
    """The database cannot be used as asked; the message says why and what to do."""


class NewerSchemaError(StoreError):
    """The database was made by a newer inspectkit than this one."""


class FrozenRecordError(StoreError):
    """A signed inspection, or something recorded in it, was about to change."""
