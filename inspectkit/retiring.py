"""Inspectors and instruments no longer in use: kept for the history, no longer offered.

A person who left, an instrument sold, or one added by mistake cannot be deleted:
old inspections and readings name them. Retiring one keeps the record, and every
picker and default leaves it out from then on.
"""

from __future__ import annotations

from datetime import date
from operator import attrgetter
from typing import TypeVar

from inspectkit.model import Inspector, Instrument
from inspectkit.store import Store

R = TypeVar("R", Inspector, Instrument)


class RetireError(ValueError):
    """Nothing to retire: the message names the record and what to do."""


def retire(store: Store, model: type[R], record_id: str, on: date) -> R:
    """Retire an inspector or instrument from `on`; one retired already keeps its day.

    Raises:
        RetireError: no such record.
    """
    record = store.get(model, record_id)
    if record is None:
        raise RetireError(f"no {model.table} with id {record_id}; check the id")
    if record.retired_on is not None:
        return record
    return store.save(record.model_copy(update={"retired_on": on}))


def in_service(store: Store, model: type[R], order_by: str, on: date | None = None) -> list[R]:
    """The records still offered: not retired, or retired after `on` (default: any retired).

    `order_by` names the model's fields to sort by, first the one that counts most
    (`"description, serial"`); sorted here, so that no SQL is written outside the store.
    """
    fields = [name.strip() for name in order_by.split(",")]
    kept = [
        r for r in store.select(model)
        if r.retired_on is None or (on is not None and r.retired_on > on)
    ]  # fmt: skip
    return sorted(kept, key=attrgetter(*fields))
