"""The record store: one SQLite file through sqlite-utils, photos in a folder beside it.

This package is the only place that writes. Every write is one transaction and leaves
a hash-chained audit row.
"""

from __future__ import annotations

from inspectkit.store.database import Store
from inspectkit.store.errors import FrozenRecordError, NewerSchemaError, StoreError

__all__ = ["FrozenRecordError", "NewerSchemaError", "Store", "StoreError"]
