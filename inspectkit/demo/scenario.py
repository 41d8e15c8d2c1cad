"""The demo scenario file (`demo_db/scenario.toml`) read into checked models.

The scenario is data so that it can be read and edited without reading the
generator; a slip in it is reported with the key to fix, like a profile.
"""

from __future__ import annotations

from pathlib import Path
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from inspectkit.model import ElectrodeType, Grade, NotInspectedReason, ProtectionLevel
from inspectkit.paths import demo_dir
from inspectkit.plan.geo import parse_point
from inspectkit.tomlfile import read_toml, validated

#: Names an inspection can be referred to by in the scenario file.
InspectionRef = str


class ScenarioError(ValueError):
    """The scenario file is missing or holds something the generator cannot use."""


class _Data(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class _Firm(_Data):
    name: str
    address: str = ""
    phone: str = ""
    email: str = ""


class Contractor(_Firm):
    """The demo's own contractor: the default organisation, like the branding file's."""

    #: The depot rounds are planned from, "LAT,LON".
    depot: str | None = None

    @field_validator("depot")
    @classmethod
    def _position(cls, value: str | None) -> str | None:
        if value is not None:
            parse_point(value, "depot")  # a PointError is a ValueError: named by pydantic
        return value


class OrganisationSpec(_Firm):
    """Another inspecting organisation some inspectors work for."""

    key: str
    primary: str = "#1F4E79"
    accent: str = "#C98A1B"


class InspectorSpec(_Data):
    key: str
    name: str
    login: str
    qualification: str = ""
    #: An [[organisation]] key; empty: the contractor.
    organisation: str = ""


class InstrumentSpec(_Data):
    key: str
    description: str
    serial: str
    #: What it measures: earth resistance, or continuity and bonding.
    use: Literal["earth", "low_ohm"]
    #: Days after the anchor the calibration runs out; negative: already lapsed.
    calibration_due_days: int


class FixedEarth(_Data):
    """An electrode whose reading on the latest complete inspection is set, e.g. a failing one."""

    tag: str
    ohms: float = Field(gt=0)


class SkippedPart(_Data):
    """A component the latest complete inspection could not inspect, and why."""

    tag: str
    reason: NotInspectedReason
    text: str = ""


class DriftingEarth(_Data):
    """An electrode whose resistance climbs steadily over the site's history."""

    tag: str
    from_ohms: float = Field(gt=0)
    to_ohms: float = Field(gt=0)


class Strike(_Data):
    """A strike-counter increment found at a visit, perhaps followed by a post-strike inspection."""

    at: InspectionRef
    increment: int = Field(gt=0)
    post_strike_days: int | None = Field(default=None, gt=0)


class FindingSpec(_Data):
    at: InspectionRef
    on: str
    grade: Grade
    category: str = ""
    text: str
    remedial: str = ""
    due_days: int | None = None
    resolved_at: InspectionRef | None = None
    #: The same fault as this visit's finding on the component, found still present.
    same_as: InspectionRef | None = None
    #: Caption of a generated photo attached to the finding.
    photo: str | None = None
    #: EXIF orientation of that photo (6: taken with the camera turned).
    photo_orientation: int = Field(default=1, ge=1, le=8)


class SiteSpec(_Data):
    key: str
    name: str
    client: str = ""
    address: str = ""
    town: str = ""
    latitude: float | None = None
    longitude: float | None = None
    level: ProtectionLevel
    profile: str = "iec-62305-3"
    critical: bool = False
    explosive_risk: bool = False
    height_m: float | None = None
    notes: str = ""
    installer: str = ""
    built_year: int | None = None
    use: str = ""
    construction: str = ""
    roofing: str = ""
    design_standard: str = ""
    air_termination: str = ""
    #: When the site can be visited, as the planner reads it.
    access: str = ""
    years: int = Field(ge=2, le=15)
    air_terminals: int = Field(ge=1)
    mesh_conductors: int = Field(ge=0)
    down_conductors: int = Field(ge=2, le=40)
    bonding: list[str] = Field(default_factory=list)
    spds: int = Field(default=0, ge=0)
    strike_counters: list[str] = Field(default_factory=list)
    counter_start: int = Field(default=0, ge=0)
    electrode: ElectrodeType = ElectrodeType.ROD
    earth_ohms: tuple[float, float]
    complete_every_months: int = Field(gt=0)
    visual_every_months: int = Field(ge=0)
    last_complete_days: int = Field(gt=0)
    visuals_after: list[int] | None = None
    inspectors: list[str] = Field(min_length=1)
    failing_earth: list[FixedEarth] = Field(default_factory=list)
    failing_continuity: list[FixedEarth] = Field(default_factory=list)
    drifting_earth: list[DriftingEarth] = Field(default_factory=list)
    strikes: list[Strike] = Field(default_factory=list)
    lapsed_instrument: str | None = None
    missing_readings: list[str] = Field(default_factory=list)
    not_inspected: str = ""
    #: Components the latest complete inspection marked not inspected.
    skipped: list[SkippedPart] = Field(default_factory=list)
    #: Who went round with the inspector at the latest complete inspection.
    accompanied_by: str = ""
    #: Changes to the structure found at the latest complete inspection.
    changes_since_last: str = ""
    draft_today: Literal["visual", "complete"] | None = None
    #: The site's roof plan: a geometry file (the import format) under demo_db/.
    geometry: str | None = None
    finding: list[FindingSpec] = Field(default_factory=list)

    @model_validator(mode="after")
    def _ohms_in_order(self) -> SiteSpec:
        low, high = self.earth_ohms
        if not 0 < low <= high:
            raise ValueError("earth_ohms must be [low, high] with 0 < low <= high")
        return self


class Scenario(_Data):
    contractor: Contractor
    organisation: list[OrganisationSpec] = Field(default_factory=list)
    inspector: list[InspectorSpec] = Field(min_length=1)
    instrument: list[InstrumentSpec] = Field(min_length=1)
    site: list[SiteSpec] = Field(min_length=1)

    @model_validator(mode="after")
    def _known_keys(self) -> Scenario:
        inspectors = {i.key for i in self.inspector}
        instruments = {i.key for i in self.instrument}
        organisations = {o.key for o in self.organisation}
        for inspector in self.inspector:
            if inspector.organisation and inspector.organisation not in organisations:
                raise ValueError(
                    f"inspector {inspector.key}: organisation {inspector.organisation!r} is "
                    "not an [[organisation]] key"
                )
        for site in self.site:
            unknown = set(site.inspectors) - inspectors
            if unknown:
                raise ValueError(f"site {site.key}: unknown inspectors {sorted(unknown)}")
            if site.lapsed_instrument and site.lapsed_instrument not in instruments:
                raise ValueError(
                    f"site {site.key}: lapsed_instrument {site.lapsed_instrument!r} is not "
                    "an [[instrument]] key"
                )
        return self


def scenario_path() -> Path:
    return demo_dir() / "scenario.toml"


def load_scenario(path: Path | None = None) -> Scenario:
    """Read and check the scenario file; errors name the file and the key."""
    path = path or scenario_path()
    data = read_toml(path, ScenarioError, "the scenario")
    return validated(Scenario, data, ScenarioError, str(path))
