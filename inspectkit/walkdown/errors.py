"""How the walkdown refuses an entry: `WalkdownError`, naming the field and what to type.

Every entry is checked by its model and saved through here, so a model's refusal and a
signed inspection's reach the screen in the same words.
"""

from __future__ import annotations

from datetime import date, datetime
from typing import Any

from pydantic import ValidationError

from inspectkit.model import explain
from inspectkit.store import FrozenRecordError, Store


class WalkdownError(ValueError):
    """An entry that cannot be saved; `field` names the field, the message says what to type.

    Attributes:
        field: The entry field at fault (`value`, `method`, `text`, `due_by`, …).
    """

    def __init__(self, field: str, message: str) -> None:
        super().__init__(message)
        self.field = field


def validated(
    model: type[Any],
    data: dict[str, Any],
    now: date | datetime | None = None,
    whole: str = "record",
) -> Any:
    """A record checked by its model; a refusal names the field and what to type.

    Args:
        whole: The field to blame for a check on the whole record (the model's
            own rules, such as a defect needing words).
    """
    try:
        return model.model_validate(data, context={"now": now} if now is not None else None)
    except ValidationError as exc:
        first = exc.errors()[0]
        if first["loc"]:
            raise WalkdownError(str(first["loc"][0]), explain(exc)) from None
        raise WalkdownError(whole, explain(exc).removeprefix("record: ")) from None


def save_entry(store: Store, record: Any) -> Any:
    """The record saved; a signed inspection's refusal said as the inspection's."""
    try:
        return store.save(record)
    except FrozenRecordError as exc:
        raise WalkdownError("inspection", str(exc)) from None
