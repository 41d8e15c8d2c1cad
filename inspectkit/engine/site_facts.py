"""What every rule needs about one site, worked out once: `SiteFacts`, built by `facts_for`.

Only the latest reading of each component and quantity decides the present state;
earlier readings serve as history (baseline, previous reading, trend).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from inspectkit.engine.history import History, in_service, series
from inspectkit.engine.results import Result
from inspectkit.engine.schedule import SiteSchedule
from inspectkit.engine.trend import ElectrodeTrend
from inspectkit.model import Component, Quantity, Reading, Severity, SiteRecords
from inspectkit.profiles import Profile
from inspectkit.units import format_value


@dataclass(frozen=True)
class SiteFacts:
    """What every rule needs about one site, worked out once.

    Attributes:
        records: the site's records as of `today`.
        profile: the rule set the site is held to.
        today: the day judged.
        schedule: the site's schedule.
        trends: the electrode trends.
        components: components by id.
        latest: the latest reading of each (component, quantity) in service.
        history: every reading of each (component, quantity), oldest first.
    """

    records: SiteRecords
    profile: Profile
    today: date
    schedule: SiteSchedule
    trends: list[ElectrodeTrend]
    components: dict[str, Component]
    latest: dict[tuple[str, Quantity], Reading]
    history: dict[tuple[str, Quantity], list[Reading]]

    def result(self, severity: Severity, rule: str, message: str, **fields: object) -> Result:
        """A result about this site."""
        site = self.records.site
        return Result(severity, rule, site.id, site.name, message, **fields)  # type: ignore[arg-type]

    def about(self, reading: Reading) -> dict[str, object]:
        """The result fields that place a result on a reading and its component."""
        component = self.components.get(reading.component_id)
        return {
            "component_id": reading.component_id,
            "component_tag": component.tag if component else None,
            "reading_id": reading.id,
            "value": reading.value,
            "unit": reading.quantity.unit,
        }

    def tag(self, component_id: str | None) -> str:
        component = self.components.get(component_id or "")
        return component.tag if component else "site"


def facts_for(
    records: SiteRecords,
    profile: Profile,
    today: date,
    schedule: SiteSchedule,
    trends: list[ElectrodeTrend],
    history: History | None = None,
) -> SiteFacts:
    """Index a site's records (already cut to `today`) for the rules.

    `history` is `records.readings` grouped by `history.series`, if at hand.
    """
    components = {c.id: c for c in records.components}
    grouped = series(records.readings) if history is None else history
    history = {
        key: readings
        for key, readings in grouped.items()
        if key[0] in components and in_service(components[key[0]], today)
    }
    latest = {key: readings[-1] for key, readings in history.items()}
    return SiteFacts(records, profile, today, schedule, trends, components, latest, history)


def shown_value(reading: Reading) -> str:
    """A reading's value as every rule's sentence shows it (over-range marked)."""
    return format_value(reading.value, reading.quantity, reading.over_range, digits=3)


def reading_day(reading: Reading) -> str:
    """The day a reading was taken, as the sentences name it."""
    return reading.taken_at.date().isoformat()
