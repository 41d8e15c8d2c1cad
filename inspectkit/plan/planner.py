"""A whole round: candidates from the store, a route from the depot, dated days with clock times."""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, replace
from datetime import date, datetime, timedelta

from inspectkit.engine.schedule import schedule_site
from inspectkit.model import SiteRecords
from inspectkit.plan.days import DaySplit, split_cycle, split_days
from inspectkit.plan.geo import Point, PointError, distance_matrix, format_point, parse_point
from inspectkit.plan.round import (
    Candidate,
    by_priority,
    defects_to_recheck,
    priority_key,
    reasons_for,
    return_visits,
    visit_kinds,
)
from inspectkit.plan.route import plan_route
from inspectkit.plan.settings import PlanSettings
from inspectkit.plan.timing import component_counts, onsite_minutes, travel_minutes
from inspectkit.profiles import Profile, ProfileError, load_profile
from inspectkit.store import Store
from inspectkit.store.queries import load_site_records, site_ids

#: Store setting holding the depot the rounds start from, as "LAT,LON".
DEPOT_SETTING = "plan.depot"


@dataclass(frozen=True)
class Window:
    """The days a round covers: `first` and the `days - 1` days after it."""

    first: date
    days: int

    @property
    def last(self) -> date:
        return self.first + timedelta(days=self.days - 1)


@dataclass(frozen=True)
class Visit:
    """One planned visit.

    Attributes:
        order: its place in the day, from 1.
        candidate: the site and what is done there.
        km, drive_minutes: from the previous stop or the depot.
        arrive, leave: clock times on the day.
    """

    order: int
    candidate: Candidate
    km: float
    drive_minutes: float
    arrive: datetime
    leave: datetime


@dataclass(frozen=True)
class PlannedDay:
    """One working day of the round.

    Attributes:
        day: the calendar date.
        visits: in driving order.
        home_km, home_minutes: the drive back to the depot.
        back: clock time back at the depot.
        too_long: one site whose round trip alone is longer than a working day.
    """

    day: date
    visits: tuple[Visit, ...]
    home_km: float
    home_minutes: float
    back: datetime
    too_long: bool

    @property
    def km(self) -> float:
        return sum(v.km for v in self.visits) + self.home_km


@dataclass(frozen=True)
class RoundPlan:
    """The round: days of visits, and the sites that could not be put on a day.

    Attributes:
        window: the days the round was asked for.
        depot: where every day starts and ends.
        settings: the figures it was planned with.
        days: working days in date order.
        no_position: candidates without coordinates, to be placed by hand.
        dropped: candidates the office took out.
        skipped: sites that could not be judged, with the reason.
    """

    window: Window
    depot: Point
    settings: PlanSettings
    days: tuple[PlannedDay, ...]
    no_position: tuple[Candidate, ...] = ()
    dropped: tuple[Candidate, ...] = ()
    skipped: tuple[tuple[str, str], ...] = ()

    @property
    def visits(self) -> list[tuple[PlannedDay, Visit]]:
        return [(d, v) for d in self.days for v in d.visits]

    @property
    def km(self) -> float:
        return sum(d.km for d in self.days)

    @property
    def past_window(self) -> list[PlannedDay]:
        """Days that fall after the window's last day: more work than days."""
        return [d for d in self.days if d.day > self.window.last]


def make_candidates(
    sites: Iterable[tuple[SiteRecords, Profile]], window: Window, settings: PlanSettings
) -> list[Candidate]:
    """The sites owing a visit in the window, most urgent first.

    Args:
        sites: each site's records (`SiteRecords`) with the profile it is held to.
        window: the round's days; the schedule is judged as of its first day.
        settings: minutes per component and per visit.
    """
    candidates = []
    for records, profile in sites:
        schedule = schedule_site(records, profile, window.first)
        defects = defects_to_recheck(records, window.first, window.last)
        returns = return_visits(records, window.first)
        reasons = reasons_for(schedule, defects, window.first, window.last) + tuple(returns)
        if not reasons:
            continue
        kinds = visit_kinds(schedule, window.last)
        counts = component_counts(records.components, window.first)
        candidates.append(
            Candidate(
                site=records.site,
                kinds=kinds,
                reasons=reasons,
                rechecks=tuple(f.id for f in defects),
                onsite_minutes=onsite_minutes(counts, kinds, settings, len(defects) + len(returns)),
            )
        )
    return by_priority(candidates)


def plan_round(
    candidates: Iterable[Candidate],
    window: Window,
    depot: Point,
    settings: PlanSettings,
    *,
    dropped: Iterable[str] = (),
    pinned: Iterable[str] = (),
) -> RoundPlan:
    """Route the candidates from the depot and cut the route into dated working days.

    The route is one closed tour (shortest found), cut into days that each start and
    end at the depot; a site too long for any day is given one alone and flagged.
    Each day is a loop of its own, so the days can be put in any order at no cost in
    driving: they are dated most urgent first, by the most urgent visit each holds.

    Args:
        candidates: the sites owing a visit.
        window: the round's days; the first working day on or after `window.first`
            is the first day of the round.
        depot: where each day starts and ends.
        settings: speeds, day length, working weekdays, day start.
        dropped: site ids the office took out of the round.
        pinned: site ids the office wants first, whatever their priority.
    """
    dropped_ids, pinned_ids = set(dropped), set(pinned)
    kept, out, no_position = [], [], []
    for c in candidates:
        c = replace(c, pinned=c.site.id in pinned_ids)
        if c.site.id in dropped_ids:
            out.append(c)
        elif c.point is None:
            no_position.append(c)
        else:
            kept.append(c)
    dist = distance_matrix([depot] + [c.point for c in kept])  # type: ignore[misc]
    day_minutes = settings.hours_per_day * 60

    def drive(km: float) -> float:
        return travel_minutes(km, settings)

    def onsite(node: int) -> float:
        return kept[node - 1].onsite_minutes

    # A site too long for a day with nothing else gets a day of its own; routing it
    # with the others would only cut the days either side of it short.
    alone = [n for n in range(1, len(dist)) if 2 * drive(dist[0][n]) + onsite(n) > day_minutes]
    routed = [0] + [n for n in range(1, len(dist)) if n not in set(alone)]
    tour = plan_route([[dist[i][j] for j in routed] for i in routed])
    splits = split_cycle([routed[i] for i in tour[1:]], onsite, dist, day_minutes, drive)
    splits += [d for n in alone for d in split_days([n], onsite, dist, day_minutes, drive)]
    splits.sort(key=lambda s: min(priority_key(kept[leg.node - 1]) for leg in s.legs))
    dates = working_days(window.first, len(splits), settings)
    days = tuple(
        _dated(split, day, kept, settings) for split, day in zip(splits, dates, strict=True)
    )
    return RoundPlan(
        window, depot, settings, days, tuple(by_priority(no_position)), tuple(by_priority(out))
    )


def working_days(first: date, count: int, settings: PlanSettings) -> list[date]:
    """The first `count` working days from `first` on."""
    days: list[date] = []
    day = first
    while len(days) < count:
        if day.weekday() in settings.weekday_numbers:
            days.append(day)
        day += timedelta(days=1)
    return days


def _dated(split: DaySplit, day: date, kept: list[Candidate], settings: PlanSettings) -> PlannedDay:
    start = datetime.combine(day, settings.day_start)

    def clock(minutes: float) -> datetime:
        return start + timedelta(minutes=round(minutes))

    visits = tuple(
        Visit(n, kept[leg.node - 1], leg.km, leg.drive, clock(leg.arrive), clock(leg.leave))
        for n, leg in enumerate(split.legs, start=1)
    )
    return PlannedDay(
        day, visits, split.home_km, split.home_drive, clock(split.minutes), split.too_long
    )


# ------------------------------------------------------------------ the store's side


def load_candidates(
    store: Store, window: Window, settings: PlanSettings
) -> tuple[list[Candidate], list[tuple[str, str]]]:
    """Every site's candidate visit, and the sites whose profile cannot be loaded.

    Returns:
        the candidates, most urgent first; (site name, reason) for the sites skipped.
    """
    profiles: dict[str, Profile | str] = {}
    judged = []
    skipped = []
    for site_id in site_ids(store):
        records = load_site_records(store, site_id)
        name = records.site.profile
        if name not in profiles:
            try:
                profiles[name] = load_profile(name)
            except ProfileError as exc:
                profiles[name] = str(exc)
        profile = profiles[name]
        if isinstance(profile, str):
            skipped.append((records.site.name, profile))
        else:
            judged.append((records, profile))
    return make_candidates(judged, window, settings), skipped


def saved_depot(store: Store) -> Point | None:
    """The depot kept in the store, if one was saved.

    Raises:
        PointError: the stored text is not a position (it names the setting to fix).
    """
    text = store.get_setting(DEPOT_SETTING)
    return None if text is None else parse_point(text, DEPOT_SETTING)


def save_depot(store: Store, depot: Point) -> None:
    """Keep the depot in the store so later rounds start from it."""
    store.set_setting(DEPOT_SETTING, format_point(depot))


def make_plan(
    store: Store,
    window: Window,
    settings: PlanSettings,
    depot: Point | None = None,
    *,
    dropped: Iterable[str] = (),
    pinned: Iterable[str] = (),
) -> RoundPlan:
    """Plan a round from the store's records.

    Args:
        depot: the start point; the saved depot when None.

    Raises:
        PointError: no depot given and none saved, or the saved one is unreadable.
    """
    depot = depot or saved_depot(store)
    if depot is None:
        raise PointError(
            "--start: no start point; give --start LAT,LON or save a depot with "
            "--save-depot LAT,LON"
        )
    candidates, skipped = load_candidates(store, window, settings)
    plan = plan_round(candidates, window, depot, settings, dropped=dropped, pinned=pinned)
    return replace(plan, skipped=tuple(skipped))
