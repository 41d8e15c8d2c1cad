"""The trade's terms as enums: what a value in a record may be, with its words.

Each enum's `.value` is what is stored; `.label` (where there is one) is what a
person reads. The tables that relate the terms to each other are in `tables.py`.
"""

from __future__ import annotations

from enum import StrEnum


class _SaidAsWritten(StrEnum):
    """A term whose words are its value with spaces: `no_access` reads "no access"."""

    @property
    def label(self) -> str:
        return self.value.replace("_", " ")


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


class Method(StrEnum):
    """How a reading was taken."""

    FALL_OF_POTENTIAL_3P = "fall_of_potential_3p"
    FOUR_POLE = "four_pole"
    CLAMP_ON = "clamp_on"
    LOW_OHM_2W = "low_ohm_2w"
    LOW_OHM_4W = "low_ohm_4w"
    WENNER = "wenner"
    COUNTER_READ = "counter_read"


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


class JointState(StrEnum):
    """Whether the test joint was open (electrode alone) or closed (whole system)."""

    OPEN = "open"
    CLOSED = "closed"


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


class NotInspectedReason(_SaidAsWritten):
    """Why a component was not inspected on a visit."""

    NO_ACCESS = "no_access"
    UNSAFE = "unsafe"
    COVERED = "covered"
    REMOVED = "removed"
    OTHER = "other"


class GeometryKind(_SaidAsWritten):
    """What a geometry record draws, in the trade's terms."""

    ROOF = "roof"
    AIR_TERMINAL = "air_terminal"
    AIR_CONDUCTOR = "air_conductor"
    DOWN_CONDUCTOR = "down_conductor"
    ROOFTOP_ITEM = "rooftop_item"


class Between(StrEnum):
    """What lies between a rooftop item and the nearest LPS conductor (km of IEC 62305-3)."""

    AIR = "air"
    SOLID = "solid"
