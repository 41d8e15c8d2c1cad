"""The vocabulary of inspectkit: the records an inspection produces, as pydantic models.

Every record has a UUID text key so that records made on two laptops can be
merged later, and `created_at` / `updated_at` / `updated_by` so a merge can tell
which copy is newer. Validation messages name the field and say what to type
instead, because they are shown to an inspector on a roof, not to a programmer.

Values are kept in SI base units (Ω, Ω·m, counts); `units.py` turns what people
type into those.
"""

from __future__ import annotations

import os
import re
import uuid
from datetime import UTC, date, datetime, timedelta
from enum import StrEnum
from typing import TYPE_CHECKING, Any, ClassVar

from pydantic import (
    BaseModel,
    ConfigDict,
    Field,
    ValidationError,
    ValidationInfo,
    field_validator,
    model_validator,
)

from inspectkit.earthing_values import (
    SeriesError,
    canonical_survey,
    canonical_traverse,
    read_survey,
)
from inspectkit.wording import with_article

if TYPE_CHECKING:
    from inspectkit.geometry_model import GeometryItem

#: A reading may carry a time this far past the laptop's clock before it is refused:
#: instrument clocks and laptop clocks drift apart, and time zones get mixed up.
CLOCK_SKEW = timedelta(hours=12)
#: Longest name of a site, an inspector or a client (our default).
NAME_MAX = 200
#: Longest free-text notes on a site or an inspection (our default: a few pages).
NOTES_MAX = 10_000
#: Largest seal: about 100 characters per record an inspection holds (our default).
SEAL_MAX = 4_000_000

#: Above this an earth, continuity or bonding resistance is not a resistance an
#: instrument shows but a typing slip (our default).
MAX_RESISTANCE_OHM = 1.0e6
#: Highest plausible soil resistivity; rock and dry sand reach 10⁴ Ω·m (common practice).
MAX_RESISTIVITY_OHM_M = 1.0e6
#: Strike counters are six-digit at most (common practice).
MAX_COUNT = 999_999


def new_id() -> str:
    """A fresh record key; random, so two offline laptops never collide."""
    return str(uuid.uuid4())


def new_ids(count: int) -> list[str]:
    """`count` fresh keys as `new_id` makes them (random UUID version 4), in one go.

    An import writes an audit row per record: one read of the system's random
    source and one hex conversion for all of them costs a fifth of `count` calls
    to `new_id`.
    """
    raw = bytearray(os.urandom(16 * count))
    raw[6::16] = bytes(0x40 | (byte & 0x0F) for byte in raw[6::16])  # version 4
    raw[8::16] = bytes(0x80 | (byte & 0x3F) for byte in raw[8::16])  # RFC 4122 variant
    text = raw.hex()
    return [
        f"{text[n : n + 8]}-{text[n + 8 : n + 12]}-{text[n + 12 : n + 16]}-"
        f"{text[n + 16 : n + 20]}-{text[n + 20 : n + 32]}"
        for n in range(0, 32 * count, 32)
    ]


def utcnow() -> datetime:
    """The current time, timezone-aware in UTC, to the second."""
    return datetime.now(UTC).replace(microsecond=0)


class ProtectionLevel(StrEnum):
    """Lightning protection level (class of LPS) of IEC 62305: I is the most stringent."""

    I = "I"  # noqa: E741 - the standard's own name
    II = "II"
    III = "III"
    IV = "IV"


class ComponentKind(StrEnum):
    """Parts of an LPS, in the trade's terms."""

    AIR_TERMINAL = "air_terminal"
    AIR_CONDUCTOR = "air_conductor"
    DOWN_CONDUCTOR = "down_conductor"
    TEST_JOINT = "test_joint"
    EARTH_ELECTRODE = "earth_electrode"
    BONDING = "bonding"
    SPD = "spd"
    STRIKE_COUNTER = "strike_counter"

    @property
    def label(self) -> str:
        return _KIND_LABELS[self]


_KIND_LABELS = {
    ComponentKind.AIR_TERMINAL: "air terminal",
    ComponentKind.AIR_CONDUCTOR: "air-termination conductor",
    ComponentKind.DOWN_CONDUCTOR: "down conductor",
    ComponentKind.TEST_JOINT: "test joint",
    ComponentKind.EARTH_ELECTRODE: "earth electrode",
    ComponentKind.BONDING: "equipotential bonding",
    ComponentKind.SPD: "surge protective device",
    ComponentKind.STRIKE_COUNTER: "strike counter",
}

#: The order an inspector walks a site: roof first, then down the building, then
#: the ground-level test joints and what hangs off them.
WALKING_ORDER: tuple[ComponentKind, ...] = (
    ComponentKind.AIR_TERMINAL,
    ComponentKind.AIR_CONDUCTOR,
    ComponentKind.DOWN_CONDUCTOR,
    ComponentKind.TEST_JOINT,
    ComponentKind.EARTH_ELECTRODE,
    ComponentKind.BONDING,
    ComponentKind.SPD,
    ComponentKind.STRIKE_COUNTER,
)


class ElectrodeType(StrEnum):
    """Form of an earth electrode; type A are rods and plates, type B rings and foundations."""

    ROD = "rod"
    PLATE = "plate"
    RING = "ring"
    FOUNDATION = "foundation"

    @property
    def arrangement(self) -> EarthingArrangement:
        """The earthing arrangement electrodes of this form make up."""
        if self in (ElectrodeType.ROD, ElectrodeType.PLATE):
            return EarthingArrangement.A
        return EarthingArrangement.B


class EarthingArrangement(StrEnum):
    """How the earth electrodes are laid out (IEC 62305-3, 5.4.2).

    Type A: a separate rod or plate at each down conductor; type B: a ring conductor
    round the structure, or its foundation electrode.
    """

    A = "A"
    B = "B"


class ElectrodeOrientation(StrEnum):
    """How a type A electrode lies: its minimum length is l1 laid flat, 0.5·l1 otherwise.

    IEC 62305-3 clause 5.4.2.1 (as quoted): horizontal electrodes at least l1 long,
    vertical or inclined ones at least 0.5·l1.
    """

    VERTICAL = "vertical"
    HORIZONTAL = "horizontal"
    INCLINED = "inclined"


#: Longest earth electrode, or ring radius, accepted in m: more is a typing slip (our default).
MAX_ELECTRODE_M = 1000.0
#: Widest rod accepted in m; a rod is far thinner than this (our default).
MAX_ROD_DIAMETER_M = 0.2

#: Oldest year a structure or an LPS on it may be given as built or installed.
EARLIEST_YEAR = 1800


class InspectionKind(StrEnum):
    """Why a visit was made (IEC 62305-3 Annex E; NFPA 780 Annex D)."""

    INITIAL = "initial"
    VISUAL = "visual"
    COMPLETE = "complete"
    POST_STRIKE = "post_strike"
    AMENDMENT = "amendment"


class InspectionState(StrEnum):
    """A draft can be edited; a signed inspection is frozen."""

    DRAFT = "draft"
    SIGNED = "signed"


class Quantity(StrEnum):
    """What a reading measures."""

    EARTH_ISOLATED = "earth_isolated"
    EARTH_COMBINED = "earth_combined"
    CONTINUITY = "continuity"
    BONDING = "bonding"
    SOIL_RESISTIVITY = "soil_resistivity"
    STRIKE_COUNT = "strike_count"

    @property
    def unit(self) -> str:
        """The SI unit the value is stored in."""
        return _QUANTITY_UNITS[self]

    @property
    def label(self) -> str:
        return _QUANTITY_LABELS[self]


_QUANTITY_UNITS = {
    Quantity.EARTH_ISOLATED: "Ω",
    Quantity.EARTH_COMBINED: "Ω",
    Quantity.CONTINUITY: "Ω",
    Quantity.BONDING: "Ω",
    Quantity.SOIL_RESISTIVITY: "Ω·m",
    Quantity.STRIKE_COUNT: "count",
}

_QUANTITY_LABELS = {
    Quantity.EARTH_ISOLATED: "earth resistance, electrode isolated",
    Quantity.EARTH_COMBINED: "earth resistance, combined system",
    Quantity.CONTINUITY: "continuity",
    Quantity.BONDING: "bonding resistance",
    Quantity.SOIL_RESISTIVITY: "soil resistivity",
    Quantity.STRIKE_COUNT: "strike counter value",
}

_QUANTITY_MAX = {
    Quantity.EARTH_ISOLATED: MAX_RESISTANCE_OHM,
    Quantity.EARTH_COMBINED: MAX_RESISTANCE_OHM,
    Quantity.CONTINUITY: MAX_RESISTANCE_OHM,
    Quantity.BONDING: MAX_RESISTANCE_OHM,
    Quantity.SOIL_RESISTIVITY: MAX_RESISTIVITY_OHM_M,
    Quantity.STRIKE_COUNT: float(MAX_COUNT),
}
#: Most a value of each quantity can plausibly be, in its SI unit (public for units.py).
QUANTITY_MAX = _QUANTITY_MAX


class Method(StrEnum):
    """How a reading was taken."""

    FALL_OF_POTENTIAL_3P = "fall_of_potential_3p"
    FOUR_POLE = "four_pole"
    CLAMP_ON = "clamp_on"
    LOW_OHM_2W = "low_ohm_2w"
    LOW_OHM_4W = "low_ohm_4w"
    WENNER = "wenner"
    COUNTER_READ = "counter_read"


#: Which methods make sense for which quantity; anything else is refused.
METHODS_FOR: dict[Quantity, frozenset[Method]] = {
    Quantity.EARTH_ISOLATED: frozenset({Method.FALL_OF_POTENTIAL_3P, Method.FOUR_POLE}),
    # A clamp-on meter needs a parallel network: combined system only (common practice).
    Quantity.EARTH_COMBINED: frozenset(
        {Method.FALL_OF_POTENTIAL_3P, Method.FOUR_POLE, Method.CLAMP_ON}
    ),
    Quantity.CONTINUITY: frozenset({Method.LOW_OHM_2W, Method.LOW_OHM_4W}),
    Quantity.BONDING: frozenset({Method.LOW_OHM_2W, Method.LOW_OHM_4W}),
    Quantity.SOIL_RESISTIVITY: frozenset({Method.WENNER, Method.FOUR_POLE}),
    Quantity.STRIKE_COUNT: frozenset({Method.COUNTER_READ}),
}

#: The method assumed when none is chosen: the one most instruments in the trade use.
DEFAULT_METHOD: dict[Quantity, Method] = {
    Quantity.EARTH_ISOLATED: Method.FALL_OF_POTENTIAL_3P,
    Quantity.EARTH_COMBINED: Method.FALL_OF_POTENTIAL_3P,
    Quantity.CONTINUITY: Method.LOW_OHM_4W,
    Quantity.BONDING: Method.LOW_OHM_4W,
    Quantity.SOIL_RESISTIVITY: Method.WENNER,
    Quantity.STRIKE_COUNT: Method.COUNTER_READ,
}


class InstrumentKind(StrEnum):
    """What sort of test instrument it is; each kind measures its own quantities."""

    EARTH_TESTER = "earth_tester"
    LOW_OHMMETER = "low_ohmmeter"
    CLAMP_METER = "clamp_meter"

    @property
    def label(self) -> str:
        return _INSTRUMENT_KIND_LABELS[self]


_INSTRUMENT_KIND_LABELS = {
    InstrumentKind.EARTH_TESTER: "earth tester",
    InstrumentKind.LOW_OHMMETER: "low-resistance ohmmeter",
    InstrumentKind.CLAMP_METER: "clamp meter",
}

#: The methods each kind of instrument works by (common practice): an earth tester
#: drives current through auxiliary probes, a low-resistance ohmmeter through leads,
#: a clamp meter induces it in a closed loop.
INSTRUMENT_METHODS: dict[InstrumentKind, frozenset[Method]] = {
    InstrumentKind.EARTH_TESTER: frozenset(
        {Method.FALL_OF_POTENTIAL_3P, Method.FOUR_POLE, Method.WENNER}
    ),
    InstrumentKind.LOW_OHMMETER: frozenset({Method.LOW_OHM_2W, Method.LOW_OHM_4W}),
    InstrumentKind.CLAMP_METER: frozenset({Method.CLAMP_ON}),
}

#: The quantities each kind of instrument measures: those its methods measure. A
#: strike counter is read by eye, with no instrument.
INSTRUMENT_QUANTITIES: dict[InstrumentKind, frozenset[Quantity]] = {
    kind: frozenset(q for q, ways in METHODS_FOR.items() if ways & methods)
    for kind, methods in INSTRUMENT_METHODS.items()
}


def instrument_misfit(
    kind: InstrumentKind | None, quantity: Quantity, method: Method, named: str
) -> str | None:
    """Why an instrument of this kind cannot have taken the reading, or None when it can.

    An instrument whose kind is not recorded is not judged.

    Args:
        named: How to call the instrument in the message (description and serial).
    """
    if kind is None:
        return None
    if quantity not in INSTRUMENT_QUANTITIES[kind]:
        fits = ", ".join(
            k.label for k in InstrumentKind if quantity in INSTRUMENT_QUANTITIES[k]
        ) or "none (it is read by eye)"
        return (
            f"{named} is a {kind.label} and does not measure {quantity.label}; "
            f"take it with an instrument of kind: {fits}"
        )
    if method not in INSTRUMENT_METHODS[kind]:
        ways = ", ".join(sorted(m.value for m in INSTRUMENT_METHODS[kind] & METHODS_FOR[quantity]))
        return (
            f"{named} is a {kind.label} and does not measure by {method.value}; "
            f"give the method it used: {ways}"
        )
    return None


class JointState(StrEnum):
    """Whether the test joint was open (electrode alone) or closed (whole system)."""

    OPEN = "open"
    CLOSED = "closed"


#: The joint state an earth reading implies: isolated means the joint was opened.
JOINT_FOR: dict[Quantity, JointState] = {
    Quantity.EARTH_ISOLATED: JointState.OPEN,
    Quantity.EARTH_COMBINED: JointState.CLOSED,
}


#: What can be measured on each kind of component, in entry order. Soil resistivity is
#: optional at a test joint or electrode; air terminals and SPDs are judged by eye only.
#: A reading of any other quantity on a component is refused, whichever way it comes.
QUANTITIES_FOR: dict[ComponentKind, tuple[Quantity, ...]] = {
    ComponentKind.AIR_TERMINAL: (),
    ComponentKind.AIR_CONDUCTOR: (Quantity.CONTINUITY,),
    ComponentKind.DOWN_CONDUCTOR: (Quantity.CONTINUITY,),
    ComponentKind.TEST_JOINT: (
        Quantity.EARTH_ISOLATED,
        Quantity.EARTH_COMBINED,
        Quantity.SOIL_RESISTIVITY,
    ),
    ComponentKind.EARTH_ELECTRODE: (Quantity.EARTH_ISOLATED, Quantity.SOIL_RESISTIVITY),
    ComponentKind.BONDING: (Quantity.BONDING,),
    ComponentKind.SPD: (),
    ComponentKind.STRIKE_COUNTER: (Quantity.STRIKE_COUNT,),
}


class SoilCondition(StrEnum):
    """Ground state at the time of an earth reading; readings rise in dry or frozen ground."""

    DRY = "dry"
    NORMAL = "normal"
    WET = "wet"
    FROZEN = "frozen"


class Grade(StrEnum):
    """How a component was found."""

    SOUND = "sound"
    NEEDS_ATTENTION = "needs_attention"
    DEFECT = "defect"


class Severity(StrEnum):
    """Outcome of a check, from harmless to urgent."""

    OK = "ok"
    WATCH = "watch"
    INCOMPLETE = "incomplete"
    #: Readings that prove nothing (e.g. taken with a lapsed instrument): take them again.
    RETAKE = "retake"
    FAIL = "fail"
    OVERDUE = "overdue"

    @property
    def rank(self) -> int:
        """Bigger is worse; used to sort worst first."""
        return _SEVERITY_RANK[self]


_SEVERITY_RANK = {
    Severity.OK: 0,
    Severity.WATCH: 1,
    Severity.INCOMPLETE: 2,
    Severity.RETAKE: 3,
    Severity.FAIL: 4,
    Severity.OVERDUE: 5,
}


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
        return _as_utc(value)


def _as_utc(value: datetime) -> datetime:
    """Naive times are taken as UTC so that comparisons never mix the two."""
    if value.tzinfo is None:
        return value.replace(tzinfo=UTC)
    return value.astimezone(UTC)


def _now_from(info: ValidationInfo) -> datetime | None:
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
        return _as_utc(now)
    if isinstance(now, date):
        return datetime(now.year, now.month, now.day, 23, 59, 59, tzinfo=UTC)
    return utcnow()


def _day_not_in_future(value: date, info: ValidationInfo, what: str) -> date:
    """Refuse a day later than today (with the clock skew allowed), naming what it is the day of."""
    now = _now_from(info)
    if now is not None and value > (now + CLOCK_SKEW).date():
        raise ValueError(f"{value.isoformat()} is in the future; give the day of the {what}")
    return value


class Site(Record):
    """A protected structure."""

    table: ClassVar[str] = "site"

    name: str = Field(min_length=1, max_length=NAME_MAX)
    client: str = Field(default="", max_length=NAME_MAX)
    address: str = Field(default="", max_length=500)
    town: str = Field(default="", max_length=200)
    latitude: float | None = None
    longitude: float | None = None
    protection_level: ProtectionLevel
    profile: str = Field(default="iec-62305-3", min_length=1, max_length=100)
    critical: bool = False
    explosive_risk: bool = False
    height_m: float | None = None
    notes: str = Field(default="", max_length=NOTES_MAX)
    #: Date of the last alteration to the structure; it calls for an inspection.
    altered_on: date | None = None
    #: Who installed the LPS (firm or person), for the report's general part.
    installer: str = Field(default="", max_length=200)
    installed_year: int | None = None
    built_year: int | None = None
    #: What the structure is used for, e.g. "offices", "fuel depot".
    use: str = Field(default="", max_length=200)
    #: Type of construction, e.g. "steel frame, brick cladding".
    construction: str = Field(default="", max_length=200)
    roofing: str = Field(default="", max_length=200)
    #: The standard and edition the LPS was designed to, e.g. "IEC 62305-3:2010".
    design_standard: str = Field(default="", max_length=100)
    #: e.g. "mesh on flat roof with rods on plant".
    air_termination: str = Field(default="", max_length=300)
    earthing_arrangement: EarthingArrangement | None = None
    #: When the site can be visited, e.g. "weekdays 08:00-15:00; not school_term"
    #: (read by the planner, `inspectkit.plan.access`); empty for any working day.
    access: str = Field(default="", max_length=200)

    @field_validator("name")
    @classmethod
    def _name_not_blank(cls, value: str) -> str:
        if not value.strip():
            raise ValueError("must not be blank; type the site's name")
        return value.strip()

    @field_validator("protection_level", mode="before")
    @classmethod
    def _level(cls, value: Any) -> Any:
        if isinstance(value, str) and value.strip().upper() in ProtectionLevel.__members__:
            return value.strip().upper()
        if isinstance(value, int) and 1 <= value <= 4:
            return ("I", "II", "III", "IV")[value - 1]
        if isinstance(value, str | int) and not isinstance(value, ProtectionLevel):
            raise ValueError(f"{value!r} is not a protection level; use I, II, III or IV")
        return value

    @field_validator("installed_year", "built_year")
    @classmethod
    def _plausible_year(cls, value: int | None, info: ValidationInfo) -> int | None:
        now = _now_from(info)
        if value is None or now is None:
            return value
        latest = now.year + 1
        if not EARLIEST_YEAR <= value <= latest:
            raise ValueError(
                f"{value} is not a plausible year; give the four-digit year, "
                f"{EARLIEST_YEAR} to {latest}, or leave it empty"
            )
        return value

    @field_validator("earthing_arrangement", mode="before")
    @classmethod
    def _arrangement(cls, value: Any) -> Any:
        if isinstance(value, str) and not isinstance(value, EarthingArrangement):
            key = value.strip().upper().removeprefix("TYPE").strip()
            if not key:
                return None
            if key not in EarthingArrangement.__members__:
                raise ValueError(
                    f"{value!r} is not an earthing arrangement; use A (a rod or plate at "
                    "each down conductor) or B (ring or foundation electrode)"
                )
            return key
        return value

    @field_validator("latitude")
    @classmethod
    def _latitude(cls, value: float | None) -> float | None:
        if value is not None and not -90.0 <= value <= 90.0:
            raise ValueError(f"{value} is out of range; latitude runs from -90 to 90 degrees")
        return value

    @field_validator("longitude")
    @classmethod
    def _longitude(cls, value: float | None) -> float | None:
        if value is not None and not -180.0 <= value <= 180.0:
            raise ValueError(f"{value} is out of range; longitude runs from -180 to 180 degrees")
        return value

    @field_validator("height_m")
    @classmethod
    def _height(cls, value: float | None) -> float | None:
        if value is not None and not 0 < value <= 1000:
            raise ValueError(f"{value} m is not a building height; give metres between 0 and 1000")
        return value

    @model_validator(mode="after")
    def _both_coordinates(self) -> Site:
        if (self.latitude is None) != (self.longitude is None):
            raise ValueError("latitude and longitude go together; give both or neither")
        return self


class Component(Record):
    """One part of a site's LPS, known on site by the tag painted on it."""

    table: ClassVar[str] = "component"

    site_id: str
    kind: ComponentKind
    tag: str = Field(min_length=1, max_length=40)
    location: str = Field(default="", max_length=300)
    material: str = Field(default="", max_length=100)
    installed_on: date | None = None
    #: A test joint's down conductor, an electrode's test joint.
    parent_id: str | None = None
    electrode_type: ElectrodeType | None = None
    #: Retired components keep their history but are no longer inspected.
    retired_on: date | None = None
    #: A type A electrode's lie: vertical (driven rod), horizontal (strip), inclined.
    electrode_orientation: ElectrodeOrientation | None = None
    #: An electrode's length in m: a rod's driven length, a strip's run.
    length_m: float | None = None
    #: A driven rod's diameter in m (Dwight's formula needs it).
    diameter_m: float | None = None
    #: A type B ring's mean radius r_e in m: that of a circle of the area it encloses.
    ring_radius_m: float | None = None

    @field_validator("kind", mode="before")
    @classmethod
    def _kind(cls, value: Any) -> Any:
        return _enum_or_hint(value, ComponentKind, "component kind")

    @field_validator("tag")
    @classmethod
    def _tag(cls, value: str) -> str:
        value = value.strip().upper()
        if not value:
            raise ValueError("must not be blank; type the tag painted on site, e.g. TJ-03")
        return value

    @field_validator("length_m", "diameter_m", "ring_radius_m")
    @classmethod
    def _size(cls, value: float | None, info: ValidationInfo) -> float | None:
        most = MAX_ROD_DIAMETER_M if info.field_name == "diameter_m" else MAX_ELECTRODE_M
        if value is not None and not 0 < value <= most:
            raise ValueError(
                f"{value:g} m is out of range; give metres above 0 and at most {most:g} "
                "(16 mm is 0.016 m)"
            )
        return value

    @model_validator(mode="after")
    def _electrode_type_only_on_electrodes(self) -> Component:
        if self.kind is not ComponentKind.EARTH_ELECTRODE:
            for name in _ELECTRODE_FIELDS:
                if getattr(self, name) is not None:
                    raise ValueError(f"{name} applies to earth electrodes only; leave it empty")
        if self.diameter_m is not None and self.length_m is not None:
            if self.diameter_m >= self.length_m:
                raise ValueError(
                    f"diameter_m {self.diameter_m:g} m is not less than length_m "
                    f"{self.length_m:g} m; give the diameter in metres (16 mm is 0.016)"
                )
        return self


#: Fields only an earth electrode may have.
_ELECTRODE_FIELDS = (
    "electrode_type", "electrode_orientation", "length_m", "diameter_m", "ring_radius_m",
)  # fmt: skip


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
        return None if value == "" else _enum_or_hint(value, InstrumentKind, "instrument kind")

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

    @field_validator("kind", mode="before")
    @classmethod
    def _kind(cls, value: Any) -> Any:
        return _enum_or_hint(value, InspectionKind, "inspection kind")

    @field_validator("date")
    @classmethod
    def _not_in_future(cls, value: date, info: ValidationInfo) -> date:
        return _day_not_in_future(value, info, "visit")

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

    @field_validator("quantity", mode="before")
    @classmethod
    def _quantity(cls, value: Any) -> Any:
        return _enum_or_hint(value, Quantity, "quantity")

    @field_validator("method", mode="before")
    @classmethod
    def _method(cls, value: Any) -> Any:
        return _enum_or_hint(value, Method, "method")

    @field_validator("taken_at")
    @classmethod
    def _taken_at(cls, value: datetime, info: ValidationInfo) -> datetime:
        value = _as_utc(value)
        now = _now_from(info)
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
            if self.value > _QUANTITY_MAX[quantity]:
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

    @field_validator("grade", mode="before")
    @classmethod
    def _grade(cls, value: Any) -> Any:
        return _enum_or_hint(value, Grade, "grade")

    @model_validator(mode="after")
    def _defect_needs_words(self) -> Finding:
        if self.grade is not Grade.SOUND and not self.text.strip():
            raise ValueError("text is empty; say what was found, e.g. 'clamp loose at TJ-03'")
        return self


class NotInspectedReason(StrEnum):
    """Why a component was not inspected on a visit."""

    NO_ACCESS = "no_access"
    UNSAFE = "unsafe"
    COVERED = "covered"
    REMOVED = "removed"
    OTHER = "other"

    @property
    def label(self) -> str:
        return self.value.replace("_", " ")


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

    @field_validator("reason", mode="before")
    @classmethod
    def _reason(cls, value: Any) -> Any:
        return _enum_or_hint(value, NotInspectedReason, "reason")

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


class SoilSurvey(Record):
    """A Wenner soil resistivity survey on a site: one line of probes, several spacings.

    The points are stored as canonical JSON text (`earthing_values.read_survey`):
    (spacing a in m, reading R in Ω) pairs; the engine works out ρ(a).
    """

    table: ClassVar[str] = "soil_survey"

    site_id: str
    date: date
    #: Which way the probe line ran, e.g. "N–S, east lawn".
    direction: str = Field(default="", max_length=200)
    #: Depth b the probes were driven to, in m; None when not recorded (taken as shallow).
    probe_depth_m: float | None = Field(default=None, ge=0, le=10)
    points: str
    #: The spacing whose ρ the inspector chose as the site's design value, in m.
    chosen_spacing_m: float | None = Field(default=None, gt=0)
    instrument_id: str | None = None
    note: str = Field(default="", max_length=1000)

    @field_validator("points")
    @classmethod
    def _points(cls, value: str) -> str:
        try:
            return canonical_survey(value)
        except SeriesError as exc:
            raise ValueError(str(exc)) from None

    @field_validator("date")
    @classmethod
    def _not_in_future(cls, value: date, info: ValidationInfo) -> date:
        return _day_not_in_future(value, info, "survey")

    @model_validator(mode="after")
    def _chosen_spacing_is_a_spacing(self) -> SoilSurvey:
        if self.chosen_spacing_m is not None:
            spacings = [a for a, _ in read_survey(self.points)]
            if self.chosen_spacing_m not in spacings:
                listed = ", ".join(f"{a:g}" for a in spacings)
                raise ValueError(
                    f"chosen_spacing_m {self.chosen_spacing_m:g} m is not one of the "
                    f"survey's spacings ({listed} m)"
                )
        return self


#: Every record type, in an order where a record's references come before it.
RECORD_TYPES: tuple[type[Record], ...] = (
    Site,
    Component,
    Instrument,
    Inspector,
    Inspection,
    Reading,
    Finding,
    Photo,
    NotInspected,
    SoilSurvey,
)

MODEL_FOR_TABLE: dict[str, type[Record]] = {m.table: m for m in RECORD_TYPES}


def _enum_or_hint(value: Any, enum: type[StrEnum], what: str) -> Any:
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


class SiteRecords(BaseModel):
    """Everything recorded for one site: what the engine needs to judge it.

    Instruments are those referenced by the site's readings.
    """

    model_config = ConfigDict(arbitrary_types_allowed=True)

    site: Site
    components: list[Component] = Field(default_factory=list)
    inspections: list[Inspection] = Field(default_factory=list)
    readings: list[Reading] = Field(default_factory=list)
    findings: list[Finding] = Field(default_factory=list)
    photos: list[Photo] = Field(default_factory=list)
    instruments: dict[str, Instrument] = Field(default_factory=dict)
    not_inspected: list[NotInspected] = Field(default_factory=list)
    #: The site's Wenner soil surveys, oldest first.
    surveys: list[SoilSurvey] = Field(default_factory=list)
    #: The site's geometry (roofs, LPS conductors, rooftop items); empty: none recorded.
    geometry: list[GeometryItem] = Field(default_factory=list)


# Last, not at the top: the geometry vocabulary builds on `Record` above, and on loading
# completes `SiteRecords.geometry` (whichever of the two modules is imported first).
import inspectkit.geometry_model  # noqa: E402, F401
