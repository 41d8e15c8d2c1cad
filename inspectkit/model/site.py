"""The records of a protected structure itself: the site, its LPS components, and its
soil surveys (which belong to the ground, not to one visit).
"""

from __future__ import annotations

from datetime import date
from typing import Any, ClassVar

from pydantic import Field, ValidationInfo, field_validator, model_validator

from inspectkit.earthing_values import SeriesError, canonical_survey, read_survey
from inspectkit.model.limits import (
    EARLIEST_YEAR,
    MAX_ELECTRODE_M,
    MAX_ROD_DIAMETER_M,
    NAME_MAX,
    NOTES_MAX,
)
from inspectkit.model.record import Record, day_not_in_future, enum_field, now_from, tag_field
from inspectkit.model.terms import (
    ComponentKind,
    EarthingArrangement,
    ElectrodeOrientation,
    ElectrodeType,
    ProtectionLevel,
)


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
        now = now_from(info)
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

    _kind = enum_field("kind", ComponentKind, "component kind")
    _tag = tag_field("TJ-03")

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
        return day_not_in_future(value, info, "survey")

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
