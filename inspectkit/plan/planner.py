"""A whole round: candidates from the store, a route from the depot, dated days with clock times."""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, replace
from datetime import UTC, date, datetime, timedelta
from zoneinfo import ZoneInfo

from inspectkit.engine.schedule import schedule_site
from inspectkit.model import SiteRecords
from inspectkit.plan.access import Access, AccessError, parse_access
from inspectkit.plan.booking import HORIZON_DAYS, RoutedSites, book_dates
from inspectkit.plan.calendar import WorkCalendar
from inspectkit.plan.days import (
    DaySplit,
    Roads,
)
from inspectkit.plan.geo import Point, PointError, format_point, parse_point
from inspectkit.plan.round import (
    Candidate,
    by_priority,
    defects_to_recheck,
    held_back,
    reasons_for,
    return_visits,
    visit_kinds,
)
from inspectkit.plan.settings import PlanSettings
from inspectkit.plan.timing import component_counts, onsite_minutes
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
        km, drive_minutes: the road from the previous stop or the depot, and its time.
        known_road: `km` comes from the table of known roads, not the estimate.
        arrive: when the crew gets there.
        start, leave: the visit itself, in the plan's time zone.
        fits: the visit lies inside the site's access window.
    """

    order: int
    candidate: Candidate
    km: float
    drive_minutes: float
    known_road: bool
    arrive: datetime
    start: datetime
    leave: datetime
    fits: bool = True


@dataclass(frozen=True)
class PlannedDay:
    """One working day of the round.

    Attributes:
        day: the calendar date.
        visits: in driving order.
        home_km, home_minutes: the drive back to the depot.
        back: clock time back at the depot.
        too_long: one site whose round trip alone is longer than a working day.
        break_start, break_end: the day's break, if it has one.
        outside_window: a visit cannot fit its site's access window.
        moved: a visit was moved onto or off this day by hand.
        home_known: the road home comes from the table of known roads.
    """

    day: date
    visits: tuple[Visit, ...]
    home_km: float
    home_minutes: float
    back: datetime
    too_long: bool
    break_start: datetime | None = None
    break_end: datetime | None = None
    outside_window: bool = False
    moved: bool = False
    home_known: bool = False

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
        unbookable: candidates with no day they can be visited on, with the reason.
        notes: things the office should know about the plan (unknown roads, moves refused).
    """

    window: Window
    depot: Point
    settings: PlanSettings
    days: tuple[PlannedDay, ...]
    no_position: tuple[Candidate, ...] = ()
    dropped: tuple[Candidate, ...] = ()
    skipped: tuple[tuple[str, str], ...] = ()
    unbookable: tuple[tuple[Candidate, str], ...] = ()
    notes: tuple[str, ...] = ()

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
        defects, waiting = held_back(
            schedule, defects_to_recheck(records, window.first, window.last), window.last
        )
        returns = return_visits(records, window.first)
        reasons = reasons_for(schedule, defects, window.first, window.last, returns)
        if not reasons:
            continue
        kinds = visit_kinds(schedule, window.last)
        counts = component_counts(records.components, window.first)
        minutes = onsite_minutes(counts, kinds, settings, len(defects))
        if returns and not kinds:
            minutes += settings.return_minutes
        candidates.append(
            Candidate(
                site=records.site,
                kinds=kinds,
                reasons=reasons,
                rechecks=tuple(f.id for f in defects),
                onsite_minutes=minutes,
                earliest=max((f.due_by for f in defects if f.due_by), default=None),
                waiting=tuple(waiting),
            )
        )
    return by_priority(candidates)


def _access_of(c: Candidate, calendar: WorkCalendar) -> Access | str:
    """The site's access rule, or why it cannot be booked on any day."""
    try:
        access = parse_access(c.site.access)
    except AccessError as exc:
        return f"{exc}; fix the site's access"
    unknown = calendar.unknown_periods(access)
    if unknown:
        return (
            f"access {access.text!r} names {', '.join(unknown)}, which is not in "
            "[periods] of plan.toml; add it"
        )
    office = calendar.settings.weekday_numbers
    if access.weekdays is not None and not access.weekdays & office:
        return (
            f"access {access.text!r} allows none of the working days "
            f"({', '.join(calendar.settings.working_days)}); add its days to working_days "
            "in plan.toml or book it by hand"
        )
    return access


def plan_round(
    candidates: Iterable[Candidate],
    window: Window,
    depot: Point,
    settings: PlanSettings,
    *,
    dropped: Iterable[str] = (),
    pinned: Iterable[str] = (),
    moved: Mapping[str, date] | None = None,
) -> RoundPlan:
    """Route the candidates from the depot and cut the route into dated working days.

    The route is one closed tour (shortest found by road distance), cut into days
    that each start and end at the depot, fit the working day and the sites' access
    windows, and hold the break; a site too long for any day is given one alone and
    flagged. Each day is a loop of its own, so the days can be put in any order at no
    cost in driving: they are dated most urgent first, each on the first date its
    sites can all be visited that is not a holiday or closed day, and not before a
    remedy it re-checks is due.

    Args:
        candidates: the sites owing a visit.
        window: the round's days; no day is booked before `window.first`.
        depot: where each day starts and ends.
        settings: speeds, roads, day length, break, calendar, day start.
        dropped: site ids the office took out of the round.
        pinned: site ids the office wants first, whatever their priority.
        moved: site ids moved by hand to a date, after the rest is planned.
    """
    calendar = WorkCalendar(settings)
    dropped_ids, pinned_ids = set(dropped), set(pinned)
    kept: list[tuple[Candidate, Access]] = []
    out, no_position, unbookable = [], [], []
    names: dict[str, str] = {}
    for c in candidates:
        c = replace(c, pinned=c.site.id in pinned_ids)
        names[c.site.id] = c.site.name
        access = _access_of(c, calendar)
        if c.site.id in dropped_ids:
            out.append(c)
        elif c.point is None:
            no_position.append(c)
        elif isinstance(access, str):
            unbookable.append((c, access))
        else:
            kept.append((c, access))
    routed = RoutedSites(
        [c for c, _ in kept], [a for _, a in kept], window.first, window.days, depot, calendar
    )
    splits = routed.cut()
    dates = book_dates(
        splits,
        window.first,
        lambda s: max(routed.sites[g.node - 1].earliest or window.first for g in s.legs),
        lambda s: [routed.accesses[g.node - 1] for g in s.legs],
        calendar,
    )
    booked: dict[date, DaySplit] = {}
    for split, day in zip(splits, dates, strict=True):
        if day is None:
            unbookable += [(routed.sites[g.node - 1], _no_day_why(window)) for g in split.legs]
        else:
            booked[day] = split
    touched: set[date] = set()
    for site_id, target in (moved or {}).items():
        booked, touched = routed.move(booked, site_id, target, touched, names.get(site_id, ""))
    days = tuple(
        _dated(booked[d], d, routed.sites, routed.roads, settings, d in touched)
        for d in sorted(booked)
    )
    return RoundPlan(
        window,
        depot,
        settings,
        days,
        tuple(by_priority(no_position)),
        tuple(by_priority(out)),
        unbookable=tuple(unbookable),
        notes=tuple(routed.notes),
    )


def _no_day_why(window: Window) -> str:
    return (
        f"no day from {window.first.isoformat()} within {HORIZON_DAYS} days on which the "
        "office works and the site can be visited"
    )


def _dated(
    split: DaySplit,
    day: date,
    kept: list[Candidate],
    roads: Roads,
    settings: PlanSettings,
    moved: bool,
) -> PlannedDay:
    start = datetime.combine(day, settings.day_start, tzinfo=ZoneInfo(settings.zone))

    def clock(minutes: float) -> datetime:
        # Whole minutes, counted on the UTC timeline so a clock change is kept.
        return (start.astimezone(UTC) + timedelta(minutes=round(minutes))).astimezone(start.tzinfo)

    visits = tuple(
        Visit(
            n,
            kept[leg.node - 1],
            leg.km,
            leg.drive,
            (prev, leg.node) in roads.known,
            clock(leg.arrive),
            clock(leg.start),
            clock(leg.leave),
            leg.fits,
        )
        for n, (prev, leg) in enumerate(
            zip([0, *(g.node for g in split.legs)], split.legs, strict=False), start=1
        )
    )
    brk = split.break_at
    return PlannedDay(
        day,
        visits,
        split.home_km,
        split.home_drive,
        clock(split.minutes),
        split.too_long,
        None if brk is None else clock(brk),
        None if brk is None else clock(brk + split.break_minutes),
        split.outside_window,
        moved,
        (split.legs[-1].node, 0) in roads.known,
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
    moved: Mapping[str, date] | None = None,
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
    plan = plan_round(
        candidates, window, depot, settings, dropped=dropped, pinned=pinned, moved=moved
    )
    return replace(plan, skipped=tuple(skipped))
