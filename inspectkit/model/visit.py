"""The records of one visit: the inspection, its readings, findings, components not
inspected, and photos.
"""

from __future__ import annotations

from datetime import date, datetime
from typing import ClassVar

from pydantic import Field, ValidationInfo, field_validator, model_validator

from inspectkit.earthing_values import SeriesError, canonical_traverse
from inspectkit.model.limits import CLOCK_SKEW, NOTES_MAX, SEAL_MAX
from inspectkit.model.record import Record, as_utc, day_not_in_future, enum_field, now_from
from inspectkit.model.tables import METHODS_FOR, QUANTITY_MAX
from inspectkit.model.terms import (
    Grade,
    InspectionKind,
    InspectionState,
    JointState,
    Method,
    NotInspectedReason,
    Quantity,
    SoilCondition,
)
from inspectkit.wording import with_article


class Inspection(Record):
    """One visit to a site."""

    table: ClassVar[str] = "inspection"

    site_id: str
    kind: InspectionKind
    date: date
    inspector_id: str | None = None
    weather: str = Field(default="", max_length=200)
    soil: SoilCondition | None = None
    state: InspectionState = InspectionState.DRAFT
    #: Marked complete by the inspector at the end of the walkdown.
    finished: bool = False
    signed_at: datetime | None = None
    report_sha256: str | None = None
    report_revision: int = 0
    #: The signed inspection this one corrects (kind amendment).
    amends_id: str | None = None
    #: What could not be inspected and why (no roof access, buried, locked), in words;
    #: each component not inspected is a `NotInspected` record as well.
    not_inspected: str = Field(default="", max_length=2000)
    #: The inspector confirmed, on finishing, that every test joint opened for an
    #: isolated reading was reconnected and re-tested; None: not asked (no joint opened).
    joints_reconnected: bool | None = None
    #: Why the joints were not confirmed reconnected, when they were not.
    reconnection_note: str = Field(default="", max_length=500)
    #: Who went round with the inspector (site manager, client's engineer).
    accompanied_by: str = Field(default="", max_length=200)
    #: Changes to the structure since the last visit that need more protection.
    changes_since_last: str = Field(default="", max_length=2000)
    notes: str = Field(default="", max_length=NOTES_MAX)
    #: The signer's seal over what the signature covers (see `store.seal`); set at signing.
    seal: str = Field(default="", max_length=SEAL_MAX)

    _kind = enum_field("kind", InspectionKind, "inspection kind")

    @field_validator("date")
    @classmethod
    def _not_in_future(cls, value: date, info: ValidationInfo) -> date:
        return day_not_in_future(value, info, "visit")

    @model_validator(mode="after")
    def _amendment_names_original(self) -> Inspection:
        if self.kind is InspectionKind.AMENDMENT and not self.amends_id:
            raise ValueError("an amendment must name the signed inspection it corrects (amends_id)")
        if self.state is InspectionState.SIGNED and self.signed_at is None:
            raise ValueError("a signed inspection needs signed_at; sign it through the report")
        return self


class Reading(Record):
    """One measured value, in the SI base unit of its quantity.

    An instrument that shows over-range (`OL`, `>2000`) gives no number: the
    reading is kept with `over_range=True` and `value` holding the bound it is
    above (or None when the display gave none), so it fails any limit below it.
    """

    table: ClassVar[str] = "reading"

    inspection_id: str
    component_id: str
    quantity: Quantity
    value: float | None
    over_range: bool = False
    method: Method
    joint_state: JointState | None = None
    instrument_id: str | None = None
    taken_at: datetime
    soil: SoilCondition | None = None
    #: Set by the inspector when a reading is doubtful (wet probe, disturbed ground).
    unreliable: bool = False
    note: str = Field(default="", max_length=1000)
    #: The fall-of-potential traverse the value was taken from, as stored text
    #: (`earthing_values.Traverse`); None for a single typed value.
    traverse: str | None = None

    @field_validator("traverse")
    @classmethod
    def _traverse(cls, value: str | None) -> str | None:
        if value is None:
            return None
        try:
            return canonical_traverse(value)
        except SeriesError as exc:
            raise ValueError(str(exc)) from None

    _quantity = enum_field("quantity", Quantity, "quantity")
    _method = enum_field("method", Method, "method")

    @field_validator("taken_at")
    @classmethod
    def _taken_at(cls, value: datetime, info: ValidationInfo) -> datetime:
        value = as_utc(value)
        now = now_from(info)
        if now is not None and value > now + CLOCK_SKEW:
            raise ValueError(
                f"{value.isoformat(timespec='minutes')} is later than now; "
                "check the instrument's clock and give the time the reading was taken"
            )
        return value

    @model_validator(mode="after")
    def _value_fits_quantity(self) -> Reading:
        quantity = self.quantity
        if self.value is None:
            if not self.over_range:
                raise ValueError("value is missing; type the reading, or OL for over-range")
        else:
            if self.value != self.value or self.value in (float("inf"), float("-inf")):
                raise ValueError("value must be a finite number")
            if self.value < 0:
                raise ValueError(
                    f"value {self.value:g} {quantity.unit} is negative; "
                    f"{with_article(quantity.label)} is never below zero, check the sign or "
                    "the leads"
                )
            if self.value > QUANTITY_MAX[quantity]:
                raise ValueError(
                    f"value {self.value:g} {quantity.unit} is not plausible for a "
                    f"{quantity.label}; check the unit (kΩ or Ω?)"
                )
            if quantity is Quantity.STRIKE_COUNT and self.value != int(self.value):
                raise ValueError("a strike counter value is a whole number")
        if self.over_range and quantity is Quantity.STRIKE_COUNT:
            raise ValueError("a strike counter cannot be over-range; type the number it shows")
        if self.method not in METHODS_FOR[quantity]:
            allowed = ", ".join(sorted(m.value for m in METHODS_FOR[quantity]))
            raise ValueError(
                f"method {self.method.value} does not measure {quantity.label}; "
                f"use one of: {allowed}"
            )
        if self.traverse is not None and self.method is not Method.FALL_OF_POTENTIAL_3P:
            raise ValueError(
                "a traverse belongs to a fall-of-potential reading; "
                "set method to fall_of_potential_3p or leave the traverse out"
            )
        if quantity is Quantity.EARTH_ISOLATED and self.joint_state is JointState.CLOSED:
            raise ValueError(
                "an isolated electrode reading needs the test joint open; "
                "set joint_state to open, or record it as earth_combined"
            )
        if quantity is Quantity.EARTH_COMBINED and self.joint_state is JointState.OPEN:
            raise ValueError(
                "a combined-system reading needs the test joint closed; "
                "set joint_state to closed, or record it as earth_isolated"
            )
        return self


class Finding(Record):
    """A condition observed on a component."""

    table: ClassVar[str] = "finding"

    inspection_id: str
    component_id: str | None = None
    grade: Grade
    category: str = Field(default="", max_length=100)
    text: str = Field(default="", max_length=2000)
    remedial_action: str = Field(default="", max_length=2000)
    due_by: date | None = None
    #: The inspection that found the defect put right, or found it still present
    #: (then a finding of that inspection names this one in `same_as_id`).
    resolved_by: str | None = None
    #: The earlier open finding of the same fault this one repeats ("still present").
    same_as_id: str | None = None

    _grade = enum_field("grade", Grade, "grade")

    @model_validator(mode="after")
    def _defect_needs_words(self) -> Finding:
        if self.grade is not Grade.SOUND and not self.text.strip():
            raise ValueError("text is empty; say what was found, e.g. 'clamp loose at TJ-03'")
        return self


class NotInspected(Record):
    """A component the inspector could not inspect on a visit, and why.

    It stands instead of a grade: a visit is complete when every component is graded
    or marked so, and the next round plans a return for it.
    """

    table: ClassVar[str] = "not_inspected"

    inspection_id: str
    component_id: str
    reason: NotInspectedReason
    #: What stopped the inspection, in words; required when the reason is `other`.
    text: str = Field(default="", max_length=500)

    _reason = enum_field("reason", NotInspectedReason, "reason")

    @model_validator(mode="after")
    def _other_needs_words(self) -> NotInspected:
        if self.reason is NotInspectedReason.OTHER and not self.text.strip():
            raise ValueError(
                "text is empty; say why it was not inspected, e.g. 'locked plant room'"
            )
        return self

    @property
    def why(self) -> str:
        """`no access: locked compound`, the reason and its words."""
        words = self.text.strip()
        if self.reason is NotInspectedReason.OTHER:
            return words
        return f"{self.reason.label}: {words}" if words else self.reason.label


class Photo(Record):
    """A photo; the file lives in a content-addressed folder beside the database."""

    table: ClassVar[str] = "photo"

    sha256: str = Field(pattern=r"^[0-9a-f]{64}$")
    original_name: str = Field(default="", max_length=300)
    caption: str = Field(default="", max_length=500)
    taken_at: datetime | None = None
    inspection_id: str | None = None
    component_id: str | None = None
    #: EXIF orientation tag (1–8); reports rotate by it.
    orientation: int = Field(default=1, ge=1, le=8)
    width: int | None = None
    height: int | None = None
