"""Planning figures: minutes per component, speed, road factor, day length, and their files.

The shipped `templates/plan.toml` holds defaults; a user's own `plan.toml` in the
config folder overrides them key by key, so a contractor changes one figure without
copying the rest. Every figure is checked on load and a bad one named with its file
and key.
"""

from __future__ import annotations

from datetime import time
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator

from inspectkit.model import ComponentKind, InspectionKind
from inspectkit.paths import templates_dir, user_config_dir
from inspectkit.tomlfile import read_toml, validated

#: Inspection kinds a round plans time for; others are not visits the office books.
TIMED_KINDS = (InspectionKind.VISUAL, InspectionKind.COMPLETE, InspectionKind.POST_STRIKE)
WEEKDAYS = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")


class PlanSettingsError(ValueError):
    """A planning file is unreadable or holds a figure that cannot be used."""


class PlanSettings(BaseModel):
    """The figures a round is planned with."""

    model_config = ConfigDict(extra="forbid", frozen=True)

    #: Minutes per visit before the first component is looked at.
    setup_minutes: float = Field(ge=0, le=600)
    #: Minutes per open defect whose remedial action is re-checked.
    recheck_minutes: float = Field(ge=0, le=600)
    #: Average speed between sites, km/h.
    speed_kmh: float = Field(gt=0, le=200)
    #: Road distance over great-circle distance.
    road_factor: float = Field(ge=1, le=5)
    #: Working time per day, travel included.
    hours_per_day: float = Field(gt=0, le=24)
    #: When a day's first drive leaves the depot.
    day_start: time
    #: Weekdays visits are planned on, as mon…sun.
    working_days: tuple[str, ...] = Field(min_length=1)
    #: Minutes per component, by inspection kind and component kind.
    minutes: dict[InspectionKind, dict[ComponentKind, float]]

    @field_validator("day_start", mode="before")
    @classmethod
    def _clock(cls, value: Any) -> Any:
        if isinstance(value, str):
            try:
                return time.fromisoformat(value)
            except ValueError:
                raise ValueError(
                    f"{value!r} is not a time of day; write it as HH:MM, e.g. 08:00"
                ) from None
        return value

    @field_validator("working_days")
    @classmethod
    def _weekdays(cls, value: tuple[str, ...]) -> tuple[str, ...]:
        days = tuple(d.strip().lower()[:3] for d in value)
        wrong = [given for given, d in zip(value, days, strict=True) if d not in WEEKDAYS]
        if wrong:
            raise ValueError(f"{', '.join(wrong)}: not a weekday; use {', '.join(WEEKDAYS)}")
        return days

    @field_validator("minutes")
    @classmethod
    def _every_kind(
        cls, value: dict[InspectionKind, dict[ComponentKind, float]]
    ) -> dict[InspectionKind, dict[ComponentKind, float]]:
        for kind in TIMED_KINDS:
            table = value.get(kind)
            if table is None:
                raise ValueError(f"no [minutes.{kind.value}] table; add one")
            missing = [c.value for c in ComponentKind if c not in table]
            if missing:
                raise ValueError(f"[minutes.{kind.value}] lacks {', '.join(missing)}; add them")
            negative = [c.value for c, m in table.items() if not 0 <= m <= 600]
            if negative:
                raise ValueError(
                    f"[minutes.{kind.value}] {', '.join(negative)}: give minutes from 0 to 600"
                )
        return value

    @property
    def weekday_numbers(self) -> frozenset[int]:
        """Working days as `date.weekday()` numbers (Monday 0)."""
        return frozenset(WEEKDAYS.index(d) for d in self.working_days)


def builtin_settings_path() -> Path:
    return templates_dir() / "plan.toml"


def user_settings_path() -> Path:
    return user_config_dir() / "plan.toml"


def load_plan_settings(user_file: Path | None = None) -> PlanSettings:
    """The shipped figures with the user's file laid over them.

    Args:
        user_file: the user's overrides; `plan.toml` in the config folder by default
            (a missing file changes nothing).

    Raises:
        PlanSettingsError: a file cannot be read, or a figure is wrong (file and key named).
    """
    data = _read(builtin_settings_path())
    user = user_settings_path() if user_file is None else user_file
    sources = str(builtin_settings_path())
    if user.is_file():
        data = _merged(data, _read(user))
        sources = f"{user} (over {builtin_settings_path()})"
    return validated(PlanSettings, data, PlanSettingsError, sources)


def _read(path: Path) -> dict[str, Any]:
    return read_toml(path, PlanSettingsError, "it")


def _merged(base: dict[str, Any], over: dict[str, Any]) -> dict[str, Any]:
    """`over` laid on `base`, tables merged key by key."""
    out = dict(base)
    for key, value in over.items():
        if isinstance(value, dict) and isinstance(out.get(key), dict):
            out[key] = _merged(out[key], value)
        else:
            out[key] = value
    return out


def with_overrides(settings: PlanSettings, **values: Any) -> PlanSettings:
    """The settings with some figures replaced (from command options), checked like the file's.

    Values that are None are left as they are.

    Raises:
        PlanSettingsError: a value is out of range; the message names it as an option.
    """
    given = {k: v for k, v in values.items() if v is not None}
    if not given:
        return settings
    try:
        return PlanSettings.model_validate({**settings.model_dump(), **given})
    except ValidationError as exc:
        lines = [
            f"--{'-'.join(str(p) for p in e['loc']).replace('_', '-')}: "
            + e["msg"].removeprefix("Value error, ")
            for e in exc.errors()
        ]
        raise PlanSettingsError("\n".join(lines)) from None
