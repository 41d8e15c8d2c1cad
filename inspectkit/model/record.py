"""What every stored record is: the `Record` base, and the validators records share.

Every record has a UUID text key so that records made on two laptops can be
merged later, and `created_at` / `updated_at` / `updated_by` so a merge can tell
which copy is newer. Validation messages name the field and say what to type
instead, because they are shown to an inspector on a roof, not to a programmer.
"""

from __future__ import annotations

import re
import uuid
from datetime import UTC, date, datetime
from enum import StrEnum
from typing import Any, ClassVar

from pydantic import (
    BaseModel,
    ConfigDict,
    Field,
    ValidationError,
    ValidationInfo,
    field_validator,
)

from inspectkit.model.ids import new_id, utcnow
from inspectkit.model.limits import CLOCK_SKEW

#: A UUID as `str(uuid.UUID(...))` writes it (RFC 4122 §3), in lower case.
_CANONICAL_UUID = re.compile(r"[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}\Z")


class Record(BaseModel):
    """Fields every stored record carries."""

    model_config = ConfigDict(extra="forbid", validate_assignment=True, use_enum_values=False)

    #: Table this record lives in; set by each subclass.
    table: ClassVar[str] = ""

    id: str = Field(default_factory=new_id, description="UUID text key")
    created_at: datetime = Field(default_factory=utcnow)
    updated_at: datetime = Field(default_factory=utcnow)
    updated_by: str = Field(default="", max_length=200)

    @field_validator("id")
    @classmethod
    def _id_is_uuid(cls, value: str) -> str:
        if _CANONICAL_UUID.match(value):  # the form keys are made in; parsing it costs more
            return value
        try:
            uuid.UUID(value)
        except ValueError:
            raise ValueError(
                "must be a UUID such as 3f2b…; leave it empty to get a new one"
            ) from None
        return value

    @field_validator("created_at", "updated_at")
    @classmethod
    def _aware(cls, value: datetime) -> datetime:
        return as_utc(value)


def as_utc(value: datetime) -> datetime:
    """Naive times are taken as UTC so that comparisons never mix the two."""
    if value.tzinfo is None:
        return value.replace(tzinfo=UTC)
    return value.astimezone(UTC)


def now_from(info: ValidationInfo) -> datetime | None:
    """The 'now' a record is checked against: from the validation context, else the clock.

    The demo generator and imports pass their own `now` so that a scenario anchored
    on another date validates the same way; records read back from the store pass
    `stored=True` and are not checked against the clock at all, since they were
    checked when they were written.
    """
    context = info.context or {}
    if context.get("stored"):
        return None
    now = context.get("now")
    if isinstance(now, datetime):
        return as_utc(now)
    if isinstance(now, date):
        return datetime(now.year, now.month, now.day, 23, 59, 59, tzinfo=UTC)
    return utcnow()


def day_not_in_future(value: date, info: ValidationInfo, what: str) -> date:
    """Refuse a day later than today (with the clock skew allowed), naming what it is the day of."""
    now = now_from(info)
    if now is not None and value > (now + CLOCK_SKEW).date():
        raise ValueError(f"{value.isoformat()} is in the future; give the day of the {what}")
    return value


def enum_or_hint(value: Any, enum: type[StrEnum], what: str) -> Any:
    """Accept an enum's value or name in any case, with spaces or dashes; refuse with the list."""
    if isinstance(value, enum):
        return value
    if isinstance(value, str):
        exact = enum._value2member_map_.get(value)  # the stored form: no work to do
        if exact is not None:
            return exact
        key = value.strip().lower().replace("-", "_").replace(" ", "_")
        for member in enum:
            if key in (member.value, member.name.lower()):
                return member
        allowed = ", ".join(m.value for m in enum)
        raise ValueError(f"{value!r} is not a known {what}; use one of: {allowed}")
    return value


def explain(error: ValidationError) -> str:
    """One line per problem, each naming the field, for people rather than programmers."""
    lines = []
    for item in error.errors():
        field = ".".join(str(p) for p in item["loc"]) or "record"
        message = item["msg"].removeprefix("Value error, ")
        lines.append(f"{field}: {message}")
    return "\n".join(lines)


def enum_field(field: str, enum: type[StrEnum], what: str) -> Any:
    """The validator of a field holding a term of `enum`, declared in one line per record.

    It takes what people type as `enum_or_hint` does and refuses the rest in the same
    words wherever the term is held (`what` names it in the message).
    """

    def hinted(cls: type[Record], value: Any) -> Any:
        return enum_or_hint(value, enum, what)

    return field_validator(field, mode="before")(hinted)


def tag_field(example: str) -> Any:
    """The validator of a `tag` field: what is painted on site, in capitals, never blank.

    Args:
        example: A tag of this kind of record, shown in the message for a blank one.
    """

    def painted(cls: type[Record], value: str) -> str:
        value = value.strip().upper()
        if not value:
            raise ValueError(f"must not be blank; type the tag painted on site, e.g. {example}")
        return value

    return field_validator("tag")(painted)
