"""The records of who inspects and with what: instruments, organisations, inspectors.

They belong to no site; a site's records name them by key.
"""

from __future__ import annotations

from datetime import date
from typing import Any, ClassVar

from pydantic import Field, field_validator

from inspectkit.model.record import Record, enum_or_hint
from inspectkit.model.terms import InstrumentKind


class Instrument(Record):
    """A test instrument; a reading taken after its calibration lapsed proves nothing."""

    table: ClassVar[str] = "instrument"

    description: str = Field(min_length=1, max_length=200)
    serial: str = Field(min_length=1, max_length=100)
    calibration_due: date | None = None
    #: What it measures; None for instruments recorded before kinds were (not judged).
    kind: InstrumentKind | None = None
    #: Set when the instrument is no longer used (or was added by mistake): kept for
    #: the readings taken with it, no longer offered.
    retired_on: date | None = None

    @field_validator("kind", mode="before")
    @classmethod
    def _kind(cls, value: Any) -> Any:
        return None if value == "" else enum_or_hint(value, InstrumentKind, "instrument kind")

    @property
    def named(self) -> str:
        """`earth tester ET-4410` as messages name it."""
        return f"{self.description} {self.serial}"


class Organisation(Record):
    """An inspecting organisation (a contractor): the letterhead of its inspectors' reports.

    Kept on each laptop, not carried in site bundles; an inspector whose organisation
    is not here is reported under the default one.
    """

    table: ClassVar[str] = "organisation"

    name: str = Field(min_length=1, max_length=200)
    address: str = Field(default="", max_length=500)
    phone: str = Field(default="", max_length=100)
    email: str = Field(default="", max_length=200)
    #: Path of the logo image; empty for none.
    logo: str = Field(default="", max_length=1000)
    primary: str = Field(default="#1F4E79", pattern=r"^#[0-9a-fA-F]{6}$")
    accent: str = Field(default="#C98A1B", pattern=r"^#[0-9a-fA-F]{6}$")
    #: The organisation made at first start: reports of inspectors without one use it.
    is_default: bool = False


class Inspector(Record):
    """A person who signs inspections."""

    table: ClassVar[str] = "inspector"

    name: str = Field(min_length=1, max_length=200)
    #: The organisation the inspector works for; its letterhead is on their reports.
    organisation_id: str | None = None
    #: The organisation's name as text, kept from before organisations were records.
    organisation: str = Field(default="", max_length=200)
    qualification: str = Field(default="", max_length=200)
    #: Path of the inspector's PKCS#12 key file, relative to the data folder.
    signing_key: str = Field(default="", max_length=1000)
    #: The inspector's certificate (PEM), so reports can be checked against it.
    certificate_pem: str = Field(default="", max_length=20_000)
    #: Set when the person no longer inspects (or was added by mistake): kept for the
    #: inspections they signed, no longer offered.
    retired_on: date | None = None
