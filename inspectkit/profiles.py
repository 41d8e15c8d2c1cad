"""Rule sets ("profiles"): inspection intervals and acceptance limits a site is held to.

Profiles are TOML files so that a contractor can keep the figures their local code
or authority requires without touching code. Built-in ones ship in
`templates/profiles/`; a user's own go in the user config folder under `profiles/`
and win over a built-in one of the same name. Every number is checked on load, and a
bad one is reported with the file and the key so it can be fixed.
"""

from __future__ import annotations

from functools import cache
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from inspectkit.model import ProtectionLevel, Quantity
from inspectkit.paths import templates_dir, user_config_dir
from inspectkit.tomlfile import read_toml, validated
from inspectkit.units import parse


class ProfileError(ValueError):
    """A profile file is missing, malformed or holds a figure that cannot be used."""


class LevelIntervals(BaseModel):
    """Maximum months between inspections for one protection level."""

    model_config = ConfigDict(extra="forbid", frozen=True)

    visual_months: int = Field(gt=0, le=120)
    complete_months: int = Field(gt=0, le=240)
    critical_complete_months: int = Field(gt=0, le=240)


class ExplosiveIntervals(BaseModel):
    """Shorter periods for structures with a risk of explosion."""

    model_config = ConfigDict(extra="forbid", frozen=True)

    visual_months: int = Field(gt=0, le=120)
    complete_months: int = Field(gt=0, le=240)


_LIMIT_QUANTITY = {
    "earth_combined": Quantity.EARTH_COMBINED,
    "earth_isolated": Quantity.EARTH_ISOLATED,
    "earth_isolated_per_electrode": Quantity.EARTH_ISOLATED,
    "continuity": Quantity.CONTINUITY,
    "bonding": Quantity.BONDING,
}


class Limits(BaseModel):
    """Acceptance limits, in SI base units (Ω); written in the file with their unit."""

    model_config = ConfigDict(extra="forbid", frozen=True)

    earth_combined: float = Field(gt=0)
    #: A fixed limit for each electrode with its test joint open...
    earth_isolated: float | None = Field(default=None, gt=0)
    #: ...or this many ohms times the number of electrodes (BS 6651 practice).
    earth_isolated_per_electrode: float | None = Field(default=None, gt=0)
    continuity: float = Field(gt=0)
    bonding: float = Field(gt=0)
    #: A rise by more than this fraction on the baseline or previous reading is `watch`:
    #: an electrode's isolated reading...
    rise_fraction: float = Field(gt=0, le=10)
    #: ...and each other quantity with a limit; left out, the electrode's step applies
    #: (profiles written before these keys existed still load).
    earth_combined_rise_fraction: float | None = Field(default=None, gt=0, le=10)
    continuity_rise_fraction: float | None = Field(default=None, gt=0, le=10)
    bonding_rise_fraction: float | None = Field(default=None, gt=0, le=10)

    def rise_step(self, quantity: Quantity) -> float:
        """The fraction a reading of this quantity may rise before it is watched."""
        own = {
            Quantity.EARTH_COMBINED: self.earth_combined_rise_fraction,
            Quantity.CONTINUITY: self.continuity_rise_fraction,
            Quantity.BONDING: self.bonding_rise_fraction,
        }.get(quantity)
        return self.rise_fraction if own is None else own

    @field_validator(*_LIMIT_QUANTITY, mode="before")
    @classmethod
    def _with_unit(cls, value: Any, info: Any) -> Any:
        if isinstance(value, str):
            measured = parse(value, _LIMIT_QUANTITY[info.field_name])
            if measured.over_range or measured.value is None:
                raise ValueError("a limit is a plain value such as '10 Ω', not over-range")
            return measured.value
        return value


class Triggers(BaseModel):
    """How soon after an event an inspection falls due."""

    model_config = ConfigDict(extra="forbid", frozen=True)

    post_strike_days: int = Field(ge=0, le=365)
    alteration_days: int = Field(ge=0, le=365)
    due_soon_days: int = Field(ge=0, le=365)


class Profile(BaseModel):
    """One rule set; a site names the profile it is held to.

    A standard that grades structures by protection level (IEC 62305) gives
    `intervals` for every level. One that does not (NFPA 780), or a practice of one
    fixed period whatever the level (BS 6651), gives one `interval` instead, with
    `interval_mark` saying so; `levels = false` says the standard has no levels at
    all, so sites held to it show none.
    """

    model_config = ConfigDict(extra="forbid", frozen=True)

    name: str = Field(min_length=1)
    title: str = ""
    standard: str = ""
    #: The standard grades structures by protection level I–IV.
    levels: bool = True
    intervals: dict[ProtectionLevel, LevelIntervals] = Field(default_factory=dict)
    #: One set of periods for every site, whatever its level.
    interval: LevelIntervals | None = None
    #: Said as the basis of `interval`, e.g. "BS 6651 practice: fixed interval".
    interval_mark: str = ""
    #: Without levels: structures up to this height take Class I materials, taller
    #: ones Class II (NFPA 780's own terms).
    class_height_m: float | None = Field(default=None, gt=0)
    explosive: ExplosiveIntervals
    limits: Limits
    triggers: Triggers
    #: The file it was read from, for messages.
    source: str = ""

    @model_validator(mode="after")
    def _periods(self) -> Profile:
        if self.interval is not None:
            if self.intervals:
                raise ValueError(
                    "intervals: give either [interval] (one period for every site) or "
                    "[intervals.<level>] for each level, not both"
                )
            return self
        if not self.levels:
            raise ValueError("interval: a profile without levels needs one [interval] table")
        missing = [level.value for level in ProtectionLevel if level not in self.intervals]
        if missing:
            raise ValueError(
                f"intervals: no intervals for level {', '.join(missing)}; "
                "add [intervals.<level>], or one [interval] for every site"
            )
        return self

    def intervals_for(self, level: ProtectionLevel) -> LevelIntervals:
        """The periods for a site of that level (the same for all with one `interval`)."""
        return self.interval if self.interval is not None else self.intervals[level]

    def grading(self, level: ProtectionLevel, height_m: float | None) -> tuple[str, str]:
        """How a site is graded in the standard's own terms, as (label, value) words."""
        if self.levels:
            return "Protection level", f"LPL {level.value}"
        if self.class_height_m is None or height_m is None:
            return "Protection level", f"none ({self.title or self.name} uses no levels)"
        limit = f"{self.class_height_m:g} m"
        if height_m <= self.class_height_m:
            return "Material class", f"Class I (structure up to {limit})"
        return "Material class", f"Class II (structure taller than {limit})"

    def interval_basis(self, level: ProtectionLevel) -> str:
        """Why a site gets its periods: "level II", or the profile's fixed-interval mark."""
        if self.interval is None:
            return f"level {level.value}"
        return self.interval_mark or "one interval for every site"

    def limit_for(self, quantity: Quantity, electrode_count: int = 1) -> float | None:
        """The acceptance limit for a quantity, or None where the profile sets none."""
        limits = self.limits
        if quantity is Quantity.EARTH_ISOLATED:
            if limits.earth_isolated_per_electrode is not None:
                return limits.earth_isolated_per_electrode * max(electrode_count, 1)
            return limits.earth_isolated
        return {
            Quantity.EARTH_COMBINED: limits.earth_combined,
            Quantity.CONTINUITY: limits.continuity,
            Quantity.BONDING: limits.bonding,
        }.get(quantity)


def builtin_profiles_dir() -> Path:
    return templates_dir() / "profiles"


def user_profiles_dir() -> Path:
    return user_config_dir() / "profiles"


def load_profile_file(path: Path) -> Profile:
    """Read and check one profile file; errors name the file and the key."""
    data = read_toml(path, ProfileError, "the profile")
    return validated(Profile, {**data, "source": str(path)}, ProfileError, str(path))


def profile_paths() -> dict[str, Path]:
    """Every profile file by name; the user's own win over built-in ones."""
    found: dict[str, Path] = {}
    for folder in (builtin_profiles_dir(), user_profiles_dir()):
        if folder.is_dir():
            for path in sorted(folder.glob("*.toml")):
                found[path.stem] = path
    return found


def load_profile(name: str) -> Profile:
    """The profile of that name, from the user's folder or the built-in ones."""
    path = profile_paths().get(name)
    if path is None:
        known = ", ".join(sorted(profile_paths())) or "none"
        raise ProfileError(f"no profile named {name!r}; known profiles: {known}")
    profile = load_profile_file(path)
    if profile.name != name:
        raise ProfileError(
            f"{path}: name: is {profile.name!r}; it must match the file name {name!r}"
        )
    return profile


def load_all_profiles() -> dict[str, Profile]:
    """Every profile, checked; used where many sites are checked at once."""
    return {name: load_profile(name) for name in profile_paths()}


@cache
def _uses_levels(name: str) -> bool:
    """Whether the profile of that name grades sites by level (an unreadable one: yes)."""
    try:
        return load_profile(name).levels
    except ProfileError:
        return True


def level_shown(profile: str, level: str, none: str | None = "—") -> str | None:
    """A site's level as lists show it: `none` under a profile whose standard has no levels."""
    return str(level) if _uses_levels(profile) else none
