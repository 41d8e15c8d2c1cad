"""The validator's rules: each a small function that looks at one site and yields results.

Only the latest reading of each component and quantity decides the present state;
earlier readings serve as history (baseline, previous reading, trend). A reading
that proves nothing (doubtful, or taken with a lapsed instrument) never counts as
a pass. Every rule takes the same `SiteFacts`, built once per site by `facts_for`.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from datetime import date
from functools import cache
from operator import attrgetter

from inspectkit.engine.conformity import conformity
from inspectkit.engine.history import (
    COMPLETE_KINDS,
    History,
    calibration_lapsed,
    counts_as_done,
    electrode_count,
    first_found,
    in_service,
    open_not_inspected,
    series,
)
from inspectkit.engine.results import Result
from inspectkit.engine.schedule import (
    CounterRise,
    DueKind,
    DueStatus,
    SiteSchedule,
)
from inspectkit.engine.trend import ElectrodeTrend
from inspectkit.model import (
    Component,
    ComponentKind,
    Grade,
    Inspection,
    InspectionState,
    Quantity,
    Reading,
    Severity,
    SiteRecords,
)
from inspectkit.profiles import Profile
from inspectkit.units import format_value
from inspectkit.wording import counted, was_were

#: Quantities with an acceptance limit, and what to do when a reading is above it.
LIMIT_ACTIONS = {
    Quantity.EARTH_ISOLATED: "check the electrode and its connection, then re-test",
    Quantity.EARTH_COMBINED: "check the test joints and electrodes, then re-test the system",
    Quantity.CONTINUITY: "check the joints and fixings along the conductor, then re-test",
    Quantity.BONDING: "clean and tighten the bond, then re-test",
}


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


def _shown(reading: Reading) -> str:
    return format_value(reading.value, reading.quantity, reading.over_range, digits=3)


@cache
def _limit_text(limit: float, quantity: Quantity) -> str:
    """A limit as the messages show it; a profile has few, and thousands of readings meet them."""
    return format_value(limit, quantity, digits=3)


def _day(reading: Reading) -> str:
    return reading.taken_at.date().isoformat()


def reading_limits(facts: SiteFacts) -> Iterator[Result]:
    """The latest reading of each component above the profile's limit for its quantity."""
    count = electrode_count(facts.records, facts.today)
    limits = {q: facts.profile.limit_for(q, count) for q in LIMIT_ACTIONS}
    for (_, quantity), reading in facts.latest.items():
        limit = limits.get(quantity)
        bound = reading.value
        if limit is None or (not reading.over_range and bound is not None and bound <= limit):
            continue
        if calibration_lapsed(facts.records, reading):
            continue  # it proves nothing either way: `lapsed_calibration` asks for a retake
        about = {**facts.about(reading), "limit": limit}
        tag, shown = about["component_tag"], _shown(reading)
        limit_text = _limit_text(limit, quantity)
        if reading.over_range and bound is not None and bound < limit:
            yield facts.result(
                Severity.WATCH,
                "limit",
                f"{tag} {quantity.label} showed {shown}, which does not say whether it is "
                f"within the {limit_text} limit: re-test on a higher range.",
                **about,
            )
        elif reading.over_range or (bound is not None and bound > limit):
            yield facts.result(
                Severity.FAIL,
                "limit",
                f"{tag} {quantity.label} {shown} on {_day(reading)} is above the "
                f"{limit_text} limit: {LIMIT_ACTIONS[quantity]}.",
                **about,
            )


#: What to look at when a reading has risen, by quantity.
RISE_ACTIONS = {
    Quantity.EARTH_ISOLATED: "investigate the electrode and its connection",
    Quantity.EARTH_COMBINED: "check the test joints and electrodes before the limit is reached",
    Quantity.CONTINUITY: "check the joints and fixings along the conductor",
    Quantity.BONDING: "clean and tighten the bond",
}


@dataclass(frozen=True)
class _Series:
    """The readings of one component and quantity that count for a rise, oldest first."""

    facts: SiteFacts
    component_id: str
    tag: str
    quantity: Quantity
    values: list[float]
    days: list[str]
    reading_ids: list[str]

    def rise(self) -> Result | None:
        """`watch` when the last value is up by more than the profile's step on the first
        (the baseline) or on the one before it; the baseline is named first."""
        step = self.facts.profile.limits.rise_step(self.quantity)
        if len(self.values) < 2:
            return None
        last = self.values[-1]
        what = "electrode" if self.quantity is Quantity.EARTH_ISOLATED else self.quantity.label
        for name, at in (("baseline", 0), ("previous reading", -2)):
            earlier = self.values[at]
            if earlier and last > earlier * (1 + step):
                shown = [format_value(v, self.quantity, digits=3) for v in (last, earlier)]
                return self.facts.result(
                    Severity.WATCH,
                    "rise",
                    f"{self.tag} {what} {shown[0]} on {self.days[-1]} is "
                    f"{100 * (last / earlier - 1):.0f} % above its {name} of {shown[1]} "
                    f"({self.days[at]}), more than the {100 * step:.0f} % allowed: "
                    f"{RISE_ACTIONS[self.quantity]}.",
                    component_id=self.component_id,
                    component_tag=self.tag,
                    reading_id=self.reading_ids[-1],
                    value=last,
                    limit=earlier * (1 + step),
                    unit=self.quantity.unit,
                )
        return None


def electrode_rises(facts: SiteFacts) -> Iterator[Result]:
    """An electrode's isolated reading up by more than the allowed step on baseline or previous."""
    for trend in facts.trends:  # the trend has already sorted out the readings that count
        found = _Series(
            facts,
            trend.component_id,
            trend.component_tag,
            Quantity.EARTH_ISOLATED,
            list(trend.values),
            [str(day) for day in trend.days],
            list(trend.reading_ids),
        ).rise()
        if found is not None:
            yield found


def series_rises(facts: SiteFacts) -> Iterator[Result]:
    """The whole system's, a conductor's or a bond's latest reading up by more than the
    profile's step on its baseline or previous reading, as for an electrode.

    Counted as for a trend: readings that prove nothing (doubtful, over-range, taken
    with a lapsed instrument) are left out, and a latest reading of that sort says
    nothing of a rise.
    """
    for (component_id, quantity), readings in facts.history.items():
        if quantity not in RISE_ACTIONS or quantity is Quantity.EARTH_ISOLATED:
            continue
        counted = [r for r in readings if _proves(facts, r)]
        if len(counted) < 2 or counted[-1] is not readings[-1]:
            continue
        found = _Series(
            facts,
            component_id,
            facts.tag(component_id),
            quantity,
            [r.value for r in counted if r.value is not None],
            [_day(r) for r in counted],
            [r.id for r in counted],
        ).rise()
        if found is not None:
            yield found


def _proves(facts: SiteFacts, reading: Reading) -> bool:
    """A reading that can show a rise: a number, not doubted, from a calibrated instrument."""
    return (
        reading.value is not None
        and not reading.over_range
        and not reading.unreliable
        and not calibration_lapsed(facts.records, reading)
    )


def lapsed_calibration(facts: SiteFacts) -> Iterator[Result]:
    """Latest readings taken with an instrument whose calibration had lapsed: retake them.

    They prove nothing, so they are neither a pass nor a fail: one result per instrument
    and visit lists them, so that a lapsed tester is one thing to put right, not a
    failure per electrode.
    """
    groups: dict[tuple[str, str], list[Reading]] = {}
    for reading in facts.latest.values():
        if calibration_lapsed(facts.records, reading):
            key = (reading.instrument_id or "", reading.inspection_id)
            groups.setdefault(key, []).append(reading)
    for (instrument_id, _), readings in sorted(groups.items(), key=lambda g: _day(g[1][0])):
        instrument = facts.records.instruments[instrument_id]
        due = instrument.calibration_due
        readings.sort(key=lambda r: facts.tag(r.component_id))
        tags = tuple(facts.tag(r.component_id) for r in readings)
        yield facts.result(
            Severity.RETAKE,
            "calibration",
            f"{counted(len(readings), 'reading')} of {_day(readings[0])} "
            f"({', '.join(tags)}) {was_were(len(readings))} taken with "
            f"the {instrument.description}, serial {instrument.serial}, whose calibration "
            f"lapsed on {due.isoformat() if due else '?'}: "
            f"{'it proves' if len(readings) == 1 else 'they prove'} nothing; retake "
            f"{'it' if len(readings) == 1 else 'them'} with a calibrated instrument.",
            component_id=readings[0].component_id if len(readings) == 1 else None,
            component_tag=tags[0] if len(readings) == 1 else None,
            reading_ids=tuple(r.id for r in readings),
            listed=tags,
        )


def doubtful_readings(facts: SiteFacts) -> Iterator[Result]:
    """Latest readings the inspector marked doubtful: they do not count as a pass."""
    for reading in facts.latest.values():
        if reading.unreliable:
            yield facts.result(
                Severity.WATCH,
                "unreliable",
                f"{facts.tag(reading.component_id)} {reading.quantity.label} {_shown(reading)} "
                f"of {_day(reading)} is marked doubtful: re-test it at the next visit.",
                **facts.about(reading),
            )


def strike_counters(facts: SiteFacts) -> Iterator[Result]:
    """A counter that rose owes a post-strike inspection; one that went back needs explaining."""
    for item in facts.schedule.due_items:
        if item.kind is not DueKind.POST_STRIKE:
            continue
        late = item.status is DueStatus.OVERDUE
        when = f"{item.overdue_days} days overdue" if late else f"due by {item.due.isoformat()}"
        yield facts.result(
            Severity.OVERDUE if late else Severity.WATCH,
            "strike-counter",
            f"{item.reason.split(' + ')[0]}: a post-strike inspection of that down conductor, "
            f"its joints, electrode and SPDs is {when}.",
            component_id=item.component_id,
            component_tag=facts.tag(item.component_id),
            due=item.due,
        )
    last_change: dict[str, CounterRise] = {}
    for change in facts.schedule.counter_changes:
        last_change[change.component_id] = change
    for change in last_change.values():
        if change.rose or change.component_id not in facts.components:
            continue
        yield facts.result(
            Severity.WATCH,
            "strike-counter",
            f"{facts.tag(change.component_id)} went back from {change.before} to "
            f"{change.after} on {change.found_on.isoformat()}: record whether the counter "
            "was reset or replaced.",
            component_id=change.component_id,
            component_tag=facts.tag(change.component_id),
            value=float(change.after),
            unit=Quantity.STRIKE_COUNT.unit,
        )


def _judged_complete(facts: SiteFacts) -> list[tuple[Inspection, bool]]:
    """The complete inspections whose gaps matter: the latest counted one, and any
    unfinished draft of one (True beside a draft)."""
    complete = sorted(
        (i for i in facts.records.inspections if i.kind in COMPLETE_KINDS), key=lambda i: i.date
    )
    done = [i for i in complete if counts_as_done(i)]
    drafts = [i for i in complete if i.state is InspectionState.DRAFT and not i.finished]
    return [(i, False) for i in done[-1:]] + [(i, True) for i in drafts]


def missing_tests(facts: SiteFacts) -> Iterator[Result]:
    """A complete inspection lacking an electrode's isolated reading or a conductor's continuity.

    Judged: the latest counted complete inspection, and any unfinished draft of one.
    Components it marked not inspected are left to `not_inspected`, which says why.
    """
    for inspection, draft in _judged_complete(facts):
        marked = {
            facts.tag(n.component_id)
            for n in facts.records.not_inspected
            if n.inspection_id == inspection.id
        }
        missing = {
            label: left
            for label, tags in _missing(facts, inspection).items()
            if (left := [t for t in tags if t not in marked])
        }
        if not missing:
            continue
        what = "; ".join(f"{label} for {', '.join(tags)}" for label, tags in missing.items())
        state, action = ("draft ", "before signing") if draft else ("", "at a return visit")
        yield facts.result(
            Severity.INCOMPLETE,
            "incomplete",
            f"The {state}complete inspection of {inspection.date.isoformat()} has no {what}: "
            f"take them {action}.",
            components=tuple(t for tags in missing.values() for t in tags),
        )


def _missing(facts: SiteFacts, inspection: Inspection) -> dict[str, list[str]]:
    """The tags of components a complete inspection should have tested and did not."""
    visit = inspection.id
    tested: dict[Quantity, set[str]] = {Quantity.EARTH_ISOLATED: set(), Quantity.CONTINUITY: set()}
    for reading in facts.records.readings:
        if reading.inspection_id == visit and reading.quantity in tested:
            tested[reading.quantity].add(reading.component_id)
    isolated, conducted = tested[Quantity.EARTH_ISOLATED], tested[Quantity.CONTINUITY]
    present = [c for c in facts.records.components if in_service(c, inspection.date)]
    children: dict[str, list[Component]] = {}
    for component in present:
        children.setdefault(component.parent_id or "", []).append(component)

    def measured(component: Component, ids: set[str]) -> bool:
        return component.id in ids or any(c.id in ids for c in children.get(component.id, ()))

    earth, continuity = [], []
    for component in sorted(present, key=_tag):
        if component.kind is ComponentKind.TEST_JOINT:
            if component.id in isolated:  # a reading on the joint stands for its electrodes
                continue
            electrodes = [
                c for c in children.get(component.id, []) if c.kind is ComponentKind.EARTH_ELECTRODE
            ]
            earth += (t.tag for t in electrodes or [component] if not measured(t, isolated))
        elif component.kind is ComponentKind.DOWN_CONDUCTOR and not measured(component, conducted):
            continuity.append(component.tag)
    missing = {}
    if earth:
        missing["isolated earth reading"] = earth
    if continuity:
        missing["continuity reading"] = continuity
    return missing


_tag = attrgetter("tag")


def ungraded_components(facts: SiteFacts) -> Iterator[Result]:
    """A complete inspection with components neither graded nor marked not inspected.

    Judged as `missing_tests` judges: the latest counted complete inspection and any
    unfinished draft of one. A complete inspection looks at every component.
    """
    for inspection, draft in _judged_complete(facts):
        seen = {f.component_id for f in facts.records.findings if f.inspection_id == inspection.id}
        seen |= {
            n.component_id for n in facts.records.not_inspected if n.inspection_id == inspection.id
        }
        left = [
            c.tag
            for c in sorted(facts.records.components, key=_tag)
            if c.id not in seen and in_service(c, inspection.date)
        ]
        if not left:
            continue
        state, action = ("draft ", "before signing") if draft else ("", "at a return visit")
        yield facts.result(
            Severity.INCOMPLETE,
            "ungraded",
            f"The {state}complete inspection of {inspection.date.isoformat()} neither graded "
            f"nor marked not inspected {len(left)} component(s): {', '.join(left)}; "
            f"inspect them {action}.",
            components=tuple(left),
        )


def not_inspected(facts: SiteFacts) -> Iterator[Result]:
    """Components the latest visit of each kind could not inspect: a return visit is owed.

    Only the site's latest visit that looked at the component counts: once a later
    visit grades it or reads it, the gap is closed.
    """
    for mark, day in open_not_inspected(facts.records, facts.today):
        component = facts.components[mark.component_id]
        yield facts.result(
            Severity.INCOMPLETE,
            "not-inspected",
            f"{component.tag} was not inspected on {day.isoformat()} ({mark.why}): "
            "inspect it at a return visit.",
            component_id=component.id,
            component_tag=component.tag,
        )


def open_defects(facts: SiteFacts) -> Iterator[Result]:
    """Defects and items needing attention not yet put right, with how long they have been open.

    A defect fails from the day it is graded: its remedy date is advice on how soon to
    put it right, not a period of grace. Anything carried from an earlier visit past
    its remedy date is overdue; an item needing attention is to watch until then.
    """
    found_on = {i.id: i.date for i in facts.records.inspections}
    by_id = {f.id: f for f in facts.records.findings}
    for finding in facts.records.findings:
        if finding.grade is Grade.SOUND or finding.resolved_by is not None:
            continue
        since = found_on.get(finding.inspection_id)
        if since is None:
            continue
        first = first_found(finding, by_id, found_on)  # a repeat: when the fault was first seen
        days = (facts.today - first).days
        due_by = finding.due_by
        late = due_by is not None and due_by < facts.today and since < facts.today
        if late:
            severity = Severity.OVERDUE
        elif finding.grade is Grade.DEFECT:
            severity = Severity.FAIL
        else:
            severity = Severity.WATCH
        if due_by is None:
            due = ""
        elif late:
            due = f"; the remedy was due by {due_by.isoformat()}"
        else:
            due = f"; remedy advised by {due_by.isoformat()}"
        age = (
            f"found {since.isoformat()}"
            if days == 0
            else f"open since {first.isoformat()} ({counted(days, 'day')})"
        )
        if first < since:
            age += f", still present on {since.isoformat()}"
        action = finding.remedial_action.strip().rstrip(".") or "put it right"
        yield facts.result(
            severity,
            "carried-defect",
            f"{facts.tag(finding.component_id)}: {finding.grade.value.replace('_', ' ')} "
            f'"{finding.text.strip()}" {age}{due}: {action} and record the repair.',
            component_id=finding.component_id,
            component_tag=facts.tag(finding.component_id) if finding.component_id else None,
            due=due_by,
        )


def schedule_items(facts: SiteFacts) -> Iterator[Result]:
    """Routine and alteration inspections that are due soon, due today or overdue."""
    severity = {
        DueStatus.OVERDUE: Severity.OVERDUE,
        DueStatus.DUE: Severity.WATCH,
        DueStatus.DUE_SOON: Severity.WATCH,
    }
    for item in facts.schedule.due_items:
        if item.kind is DueKind.POST_STRIKE or item.status not in severity:
            continue
        name = (
            "inspection after alteration"
            if item.kind is DueKind.ALTERATION
            else (f"{item.kind.value} inspection")
        )
        when = {
            DueStatus.OVERDUE: f"{item.overdue_days} days overdue",
            DueStatus.DUE: "due today",
            DueStatus.DUE_SOON: f"due by {item.due.isoformat()}",
        }[item.status]
        yield facts.result(
            severity[item.status],
            "schedule",
            f"The {name} is {when} ({item.reason} [{facts.schedule.interval_basis}]): "
            "book the visit.",
            due=item.due,
        )


def drifting_electrodes(facts: SiteFacts) -> Iterator[Result]:
    """Electrodes forecast to pass their limit before the next complete inspection: act now.

    An electrode whose fitted line is already above the limit while its latest reading
    is still within it is to watch as well; one whose latest reading is above the limit
    fails by `reading_limits` and gets no forecast here.
    """
    for trend in facts.trends:
        latest = facts.latest.get((trend.component_id, Quantity.EARTH_ISOLATED))
        if latest is None or (
            latest.value is not None and trend.limit and latest.value > trend.limit
        ):
            continue
        if trend.above_since is not None:
            message = (
                f"{trend.component_tag} electrode's fitted line is {trend.note}, though its "
                f"latest reading {_shown(latest)} is within it: plan remedial work now."
            )
        elif trend.before_next_complete:
            message = (
                f"{trend.component_tag} electrode is rising {trend.note}: plan remedial work "
                "before then."
            )
        else:
            continue
        yield facts.result(
            Severity.WATCH,
            "trend",
            message,
            component_id=trend.component_id,
            component_tag=trend.component_tag,
            value=trend.fitted_last,
            limit=trend.limit,
            unit=Quantity.EARTH_ISOLATED.unit,
            due=trend.crossing,
        )


#: Every rule, in the order their results are gathered (output is sorted afterwards).
RULES: tuple[Callable[[SiteFacts], Iterable[Result]], ...] = (
    reading_limits,
    electrode_rises,
    series_rises,
    lapsed_calibration,
    doubtful_readings,
    strike_counters,
    missing_tests,
    ungraded_components,
    not_inspected,
    open_defects,
    schedule_items,
    drifting_electrodes,
    conformity,
)

#: The rules that speak about one reading or its series, not the site as a whole:
#: what a reading is judged by the moment it is typed.
SERIES_RULES: tuple[Callable[[SiteFacts], Iterable[Result]], ...] = (
    reading_limits,
    electrode_rises,
    series_rises,
    lapsed_calibration,
    doubtful_readings,
    strike_counters,
    drifting_electrodes,
)
