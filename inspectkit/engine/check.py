"""Everything the engine says about a site as of a day: results, schedule and trends together."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from datetime import date

from inspectkit.engine.history import as_of, series
from inspectkit.engine.results import SEVERITY_WORDS, Result
from inspectkit.engine.rules import RULES
from inspectkit.engine.schedule import SiteSchedule, schedule_site
from inspectkit.engine.site_facts import SiteFacts, facts_for
from inspectkit.engine.trend import ElectrodeTrend, electrode_trends
from inspectkit.model import Severity, SiteRecords
from inspectkit.profiles import Profile, ProfileError


@dataclass(frozen=True)
class SiteCheck:
    """One site's check.

    Attributes:
        site_id, site_name: the site.
        results: what needs knowing or doing, worst first.
        schedule: the site's inspection schedule.
        trends: one per electrode with isolated readings.
        worst: the worst severity among the results (ok when there are none).
        summary: one line for people, e.g. "2 fail, 1 watch; next complete due 2027-03-01".
    """

    site_id: str
    site_name: str
    results: tuple[Result, ...]
    schedule: SiteSchedule
    trends: tuple[ElectrodeTrend, ...]
    worst: Severity
    summary: str

    @property
    def needs_action(self) -> bool:
        """Something fails or is overdue: what makes `inspectkit check` exit 1."""
        return self.worst.rank >= Severity.FAIL.rank


def check_site(
    records: SiteRecords,
    profile: Profile,
    today: date,
    rules: Sequence[Callable[[SiteFacts], Iterable[Result]]] = RULES,
) -> SiteCheck:
    """Run the rules (every one unless told), the schedule and the trends over one site.

    Args:
        rules: which rules to run; the walkdown runs only `SERIES_RULES`, since it
            judges one reading as it is typed, not the whole site.
    """
    records = as_of(records, today)
    history = series(records.readings)
    schedule = schedule_site(records, profile, today, history=history)
    trends = electrode_trends(records, profile, today, schedule.next_complete, history)
    facts = facts_for(records, profile, today, schedule, trends, history)
    results = sorted((r for rule in rules for r in rule(facts)), key=Result.sort_key)
    worst = results[0].severity if results else Severity.OK
    return SiteCheck(
        site_id=records.site.id,
        site_name=records.site.name,
        results=tuple(results),
        schedule=schedule,
        trends=tuple(trends),
        worst=worst,
        summary=_summary(results, schedule),
    )


def check_all(
    sites: Iterable[SiteRecords], profiles: Mapping[str, Profile], today: date
) -> Iterator[SiteCheck]:
    """Check many sites, each against the profile it names, one at a time (lazily).

    Raises:
        ProfileError: a site names a profile that is not in `profiles`.
    """
    for records in sites:
        profile = profiles.get(records.site.profile)
        if profile is None:
            known = ", ".join(sorted(profiles)) or "none"
            raise ProfileError(
                f"site {records.site.name!r} names profile {records.site.profile!r}, which does "
                f"not exist; known profiles: {known}. Add the profile file or change the site."
            )
        yield check_site(records, profile, today)


def _summary(results: list[Result], schedule: SiteSchedule) -> str:
    counts: dict[Severity, int] = {}
    for result in results:
        counts[result.severity] = counts.get(result.severity, 0) + 1
    found = (
        ", ".join(
            f"{counts[s]} {SEVERITY_WORDS[s].word}" for s in sorted(counts, key=lambda s: -s.rank)
        )
        or "all clear"
    )
    nxt = schedule.next_due
    when = f"{nxt.overdue_days} days overdue" if nxt.overdue_days else f"due {nxt.due.isoformat()}"
    return f"{found}; next: {nxt.kind.value.replace('_', '-')} inspection {when}"
