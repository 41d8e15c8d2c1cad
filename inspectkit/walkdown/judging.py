"""A reading judged as the inspector types it: pass or fail against the site's profile,
through the engine's rules, and set beside the last visit's.

A `SiteContext` holds what judging needs about the site, read once for a whole walk, so
that judging a reading typed on the roof asks the store for one series only.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, field

from inspectkit.engine import rules
from inspectkit.engine.check import check_site
from inspectkit.engine.history import electrode_count
from inspectkit.engine.reading_rules import LIMIT_ACTIONS
from inspectkit.engine.results import SEVERITY_WORDS, Result
from inspectkit.model import (
    Component,
    ComponentKind,
    Inspection,
    Instrument,
    Quantity,
    Reading,
    Severity,
    Site,
    SiteRecords,
)
from inspectkit.profiles import Profile, ProfileError, load_profile
from inspectkit.store import Store
from inspectkit.store.record_queries import site_components, site_inspections
from inspectkit.store.visit_queries import earlier_series
from inspectkit.units import format_value
from inspectkit.walkdown.errors import WalkdownError


@dataclass(frozen=True)
class ReadingOutcome:
    """A saved reading and what it means, in words the screen shows beside the field.

    Attributes:
        reading: The reading as saved.
        severity: The worst the engine's rules found for it (`ok` when none applies).
        verdict: `PASS 3.9 Ω ≤ 10 Ω`, `FAIL 14 Ω > 10 Ω`, or the value alone when no
            limit applies (soil resistivity, counters).
        limit: The profile's acceptance limit, in the quantity's unit, or None.
        messages: The engine's sentences about this reading, worst first.
        previous: The same component's last reading of this quantity from an earlier
            visit, or None.
        comparison: `+12 % on 2025-06-03` against `previous`, or "" when there is none.
    """

    reading: Reading
    severity: Severity
    verdict: str
    limit: float | None
    messages: tuple[str, ...] = ()
    previous: Reading | None = None
    comparison: str = ""

    @property
    def passed(self) -> bool | None:
        """True or False against a limit; None where the profile sets no limit."""
        if self.limit is None:
            return None
        return self.severity is not Severity.FAIL


@dataclass(frozen=True)
class SiteContext:
    """What judging a reading needs about its site, read once for a whole walk.

    Earlier visits do not change while the site is walked, so their readings are read
    once per component and quantity, when first needed; the visit being walked is
    always read afresh. The screen reads a new context when it comes back into view.

    Attributes:
        site: The site.
        profile: The rule set it is held to.
        components: All its components, retired ones too (history refers to them).
        visits: The site's inspections when the context was read.
    """

    site: Site
    profile: Profile
    components: tuple[Component, ...]
    visits: tuple[Inspection, ...] = ()
    _earlier: dict[tuple[str, Quantity, str], list[Reading]] = field(
        default_factory=dict, repr=False, compare=False
    )
    _instruments: dict[str, Instrument | None] = field(
        default_factory=dict, repr=False, compare=False
    )

    def earlier_readings(
        self, store: Store, component_id: str, quantity: Quantity, inspection_id: str
    ) -> list[Reading]:
        """The component's readings of a quantity from the site's other visits."""
        key = (component_id, quantity, inspection_id)
        if key not in self._earlier:
            self._earlier[key] = earlier_series(
                store, self.site.id, component_id, quantity, inspection_id
            )
        return self._earlier[key]

    def instrument(self, store: Store, instrument_id: str) -> Instrument | None:
        if instrument_id not in self._instruments:
            self._instruments[instrument_id] = store.get(Instrument, instrument_id)
        return self._instruments[instrument_id]

    def part(self, component_id: str) -> Component:
        """One of the site's components.

        Raises:
            WalkdownError: no component of this site has that id.
        """
        for component in self.components:
            if component.id == component_id:
                return component
        raise WalkdownError("component", f"no component {component_id} on this site")


def site_context(store: Store, site_id: str) -> SiteContext:
    """Read a site, its profile and its components for a walk.

    Raises:
        WalkdownError: no such site, or it names a profile that cannot be loaded.
    """
    site = store.get(Site, site_id)
    if site is None:
        raise WalkdownError("site", f"no site with id {site_id}; pick a site from the list")
    try:
        profile = load_profile(site.profile)
    except ProfileError as exc:
        raise WalkdownError("profile", str(exc)) from None
    components = tuple(site_components(store, site_id))
    visits = tuple(site_inspections(store, site_id, oldest_first=True))
    return SiteContext(site, profile, components, visits)


#: The engine's rules that speak about one reading or its series; the site-wide ones
#: (missing tests, open defects, the schedule) are not run for one reading.
_SERIES = rules.SERIES_RULES


def judge_reading(
    store: Store, inspection: Inspection, reading: Reading, context: SiteContext
) -> ReadingOutcome:
    """Pass or fail against the site's profile, through the engine's rules, and the last visit."""
    profile = context.profile
    records = _records_for(store, context, inspection, reading)
    today = max(inspection.date, reading.taken_at.date())
    found = _about(check_site(records, profile, today, _SERIES).results, reading)
    if any(r.reading_id is None for r in found):
        # A result on the series as a whole (a counter's rise, a trend) belongs to
        # this reading only if it is not there without it.
        before = records.model_copy(
            update={"readings": [r for r in records.readings if r.id != reading.id]}
        )
        known = {
            (r.rule, r.message)
            for r in _about(check_site(before, profile, today, _SERIES).results, reading)
        }
        found = [r for r in found if r.reading_id is not None or (r.rule, r.message) not in known]
    severity = found[0].severity if found else Severity.OK
    limit = (
        profile.limit_for(reading.quantity, electrode_count(records, today))
        if reading.quantity in LIMIT_ACTIONS
        else None
    )
    previous = _previous(records, inspection, reading)
    return ReadingOutcome(
        reading=reading,
        severity=severity,
        verdict=_verdict(reading, limit, severity),
        limit=limit,
        messages=tuple(r.message for r in found),
        previous=previous,
        comparison=_comparison(reading, previous, records),
    )


def _about(results: Iterable[Result], reading: Reading) -> list[Result]:
    """The results on this reading or on its series, worst first."""
    return [
        r
        for r in results
        if r.covers(reading.id)
        or (r.component_id == reading.component_id and r.reading_id is None and not r.reading_ids)
    ]


def _records_for(
    store: Store, context: SiteContext, inspection: Inspection, reading: Reading
) -> SiteRecords:
    """What the rules need to judge one reading: the site, the visits and that one series."""
    inspections = [v for v in context.visits if v.id != inspection.id] + [inspection]
    inspections.sort(key=lambda v: (v.date, v.created_at))
    earlier = context.earlier_readings(store, reading.component_id, reading.quantity, inspection.id)
    readings = sorted([*earlier, reading], key=lambda r: r.taken_at)
    instruments = {
        i.id: i
        for i in (context.instrument(store, r.instrument_id) for r in readings if r.instrument_id)
        if i is not None
    }
    return SiteRecords(
        site=context.site,
        # The component, and the electrodes: some profiles scale a limit by their number.
        components=[
            c
            for c in context.components
            if c.id == reading.component_id or c.kind is ComponentKind.EARTH_ELECTRODE
        ],
        inspections=inspections,
        readings=readings,
        instruments=instruments,
    )


def _previous(records: SiteRecords, inspection: Inspection, reading: Reading) -> Reading | None:
    """The last reading of the same series from an earlier visit."""
    dates = {i.id: i.date for i in records.inspections}
    earlier = [
        r
        for r in records.readings
        if r.inspection_id != inspection.id
        and dates.get(r.inspection_id, inspection.date) <= inspection.date
        and r.id != reading.id
    ]
    return max(earlier, key=lambda r: (dates[r.inspection_id], r.taken_at), default=None)


def _verdict(reading: Reading, limit: float | None, severity: Severity) -> str:
    """`PASS 3.9 Ω ≤ 10 Ω`: the verdict word first, so it reads without its colour.

    A reading marked doubtful says so after the comparison (`WATCH 3.9 Ω ≤ 10 Ω, doubtful`).
    """
    doubt = ", doubtful" if reading.unreliable else ""
    return _compared(reading, limit, severity) + doubt


def _compared(reading: Reading, limit: float | None, severity: Severity) -> str:
    shown = format_value(reading.value, reading.quantity, reading.over_range)
    if limit is None:
        return shown if severity is Severity.OK else f"{_WORD[severity]} {shown}"
    bound = format_value(limit, reading.quantity)
    word = _WORD[severity]
    if reading.value is not None and reading.value <= limit:
        if reading.over_range:
            return f"{word} {shown}, limit {bound}"
        return f"{word} {shown} ≤ {bound}"
    return f"{word} {shown} > {bound}"


_WORD = {s: w.shout for s, w in SEVERITY_WORDS.items()}


def _comparison(reading: Reading, previous: Reading | None, records: SiteRecords) -> str:
    """`+12 % on 2025-06-03` (counts: `+3 on …`); over-range on either side is said in words."""
    if previous is None:
        return ""
    day = next(
        (i.date for i in records.inspections if i.id == previous.inspection_id),
        previous.taken_at.date(),
    ).isoformat()
    if previous.over_range or previous.value is None:
        was = format_value(previous.value, previous.quantity, previous.over_range)
        return f"was {was} on {day}"
    if reading.over_range or reading.value is None:
        return f"was {format_value(previous.value, previous.quantity)} on {day}"
    if reading.quantity is Quantity.STRIKE_COUNT:
        return f"{reading.value - previous.value:+g} on {day}"
    if previous.value == 0:
        return f"was {format_value(previous.value, previous.quantity)} on {day}"
    change = (reading.value - previous.value) / previous.value * 100
    return f"{change:+.0f} % on {day}"
