"""Planning figures: time on site, roads, the working day and calendar, and their files.

The shipped `templates/plan.toml` holds defaults; a user's own `plan.toml` in the
config folder overrides them key by key, so a contractor changes one figure without
copying the rest. Every figure is checked on load and a bad one named with its file
and key.
"""

from __future__ import annotations

import json
import os
import re
from datetime import time
from functools import cache
from pathlib import Path
from typing import Any
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator, model_validator

from inspectkit.model import ComponentKind, InspectionKind
from inspectkit.paths import templates_dir, user_config_dir
from inspectkit.plan.access import AccessError, DaySpan, parse_span
from inspectkit.tomlfile import read_toml, validated

#: Inspection kinds a round plans time for; others are not visits the office books.
TIMED_KINDS = (InspectionKind.VISUAL, InspectionKind.COMPLETE, InspectionKind.POST_STRIKE)
WEEKDAYS = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")


class PlanSettingsError(ValueError):
    """A planning file is unreadable or holds a figure that cannot be used."""


#: The name that stands for the depot in the table of known roads.
DEPOT_PLACE = "depot"


class KnownRoad(BaseModel):
    """A road distance (and perhaps a driving time) the office knows between two places.

    Places are site names, or `depot`; the road is taken to be the same both ways.
    """

    model_config = ConfigDict(extra="forbid", frozen=True)

    #: One end: a site's name or "depot".
    a: str = Field(min_length=1)
    #: The other end.
    b: str = Field(min_length=1)
    #: Road distance in km.
    km: float = Field(gt=0, le=2000)
    #: Driving time in minutes; from `km` and the average speed when not given.
    minutes: float | None = Field(default=None, gt=0, le=1440)


@cache
def system_zone() -> str:
    """The system's IANA time zone name (TZ, then /etc/localtime), UTC when neither says."""
    name = os.environ.get("TZ", "").lstrip(":")
    if not name:
        try:
            target = str(Path("/etc/localtime").resolve())
        except OSError:
            target = ""
        name = target.partition("zoneinfo/")[2]
    try:
        ZoneInfo(name)
    except (ZoneInfoNotFoundError, ValueError):
        return "UTC"
    return name


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
    #: Minutes for a short return visit to components not inspected last time, on
    #: top of the set-up.
    return_minutes: float = Field(default=30, ge=0, le=600)
    #: Country whose public holidays are not worked (ISO 3166 code, as the holidays
    #: library knows it); empty for none.
    holiday_country: str = ""
    #: Region within that country (e.g. ENG for England in GB); empty for the
    #: holidays kept nationwide.
    holiday_region: str = ""
    #: The office's own closed days: YYYY-MM-DD, or YYYY-MM-DD..YYYY-MM-DD spans.
    closed_days: tuple[DaySpan, ...] = ()
    #: Named spans of days that a site's access rule can refer to (`not school_term`).
    periods: dict[str, tuple[DaySpan, ...]] = Field(default_factory=dict)
    #: Length of the break in a working day, minutes; 0 for none.
    break_minutes: float = Field(default=0, ge=0, le=180)
    #: Latest start of the break, in hours after the day starts; a day that runs
    #: no longer than this has none.
    break_by_hours: float = Field(default=5, gt=0, le=24)
    #: IANA time zone the day's clock times are in; empty for the system's.
    time_zone: str = ""
    #: Road distances (and times) known between places, used instead of the estimate.
    roads: tuple[KnownRoad, ...] = ()

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

    @field_validator("closed_days", mode="before")
    @classmethod
    def _closed(cls, value: Any) -> Any:
        return _spans(value, "closed_days")

    @field_validator("periods", mode="before")
    @classmethod
    def _periods(cls, value: Any) -> Any:
        if not isinstance(value, dict):
            return value
        return {
            str(name).strip().lower().replace(" ", "_"): _spans(days, f"periods.{name}")
            for name, days in value.items()
        }

    @field_validator("time_zone")
    @classmethod
    def _zone(cls, value: str) -> str:
        if not value.strip():
            return ""
        try:
            ZoneInfo(value.strip())
        except (ZoneInfoNotFoundError, ValueError):
            raise ValueError(
                f"{value!r} is not a time zone; use an IANA name such as Europe/London, "
                "or leave it empty for the system's"
            ) from None
        return value.strip()

    @model_validator(mode="after")
    def _holiday_calendar(self) -> PlanSettings:
        if not self.holiday_country:
            if self.holiday_region:
                raise ValueError("holiday_region is set but holiday_country is empty; set both")
            return self
        import holidays

        country = self.holiday_country.upper()
        try:
            regions = holidays.country_holidays(country).subdivisions
        except NotImplementedError:
            raise ValueError(
                f"holiday_country: {self.holiday_country!r} is not a country the holidays "
                "library knows; use an ISO 3166 code such as GB, DE or US"
            ) from None
        if self.holiday_region and self.holiday_region.upper() not in regions:
            raise ValueError(
                f"holiday_region: {self.holiday_region!r} is not a region of {country}; "
                f"use one of {', '.join(regions)} or leave it empty"
            )
        return self

    @property
    def zone(self) -> str:
        """The time zone the plan's clock times are in."""
        return self.time_zone or system_zone()

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


def _spans(value: Any, field: str) -> Any:
    """Day spans from a list of "YYYY-MM-DD[..YYYY-MM-DD]" strings (or dates)."""
    if isinstance(value, str):
        value = [value]
    if not isinstance(value, list | tuple):
        return value
    out = []
    for item in value:
        if isinstance(item, DaySpan):
            out.append(item)
            continue
        if isinstance(item, dict) and {"first", "last"} <= item.keys():
            item = f"{item['first']}..{item['last']}"
        try:
            out.append(parse_span(str(item), field))
        except AccessError as exc:
            raise ValueError(str(exc).removeprefix(f"{field}: ")) from None
    return tuple(out)


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


def save_plan_values(values: dict[str, str], user_file: Path | None = None) -> PlanSettings:
    """Set top-level keys in the user's `plan.toml`, keeping the rest of it as written.

    A key's line is replaced where the file has one, otherwise added before the first
    table; the file is made if there is none. The result is loaded and checked first:
    a wrong value raises and leaves the file as it was.

    Raises:
        PlanSettingsError: a value the settings refuse (file and key named).
    """
    path = user_settings_path() if user_file is None else user_file
    old = path.read_text(encoding="utf-8") if path.is_file() else ""
    lines = old.splitlines()
    for key, value in values.items():
        line = f"{key} = {json.dumps(value)}"
        at = next((i for i, t in enumerate(lines) if re.match(rf"\s*{key}\s*=", t)), None)
        if at is None:
            at = next((i for i, t in enumerate(lines) if t.lstrip().startswith("[")), len(lines))
            lines.insert(at, line)
        else:
            lines[at] = line
    new = "\n".join(lines) + "\n"
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(new, encoding="utf-8")
    try:
        return load_plan_settings(path)
    except PlanSettingsError:
        if old:
            path.write_text(old, encoding="utf-8")
        else:
            path.unlink()
        raise


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
