"""A round an office can book: holidays, closed days, access rules, one road distance, breaks.

The public holidays are checked against the `holidays` library (the planner's own
source), and against dates named beside each test.
"""

from __future__ import annotations

import csv
from datetime import UTC, date, datetime, timedelta
from pathlib import Path
from typing import Any

import holidays
import pytest
from engine_factories import SiteBuilder
from hypothesis import given, settings
from hypothesis import strategies as st

from inspectkit.model import ComponentKind, InspectionKind
from inspectkit.plan.access import AccessError, parse_access
from inspectkit.plan.export import render_table, write_csv
from inspectkit.plan.geo import Point, haversine_km
from inspectkit.plan.planner import RoundPlan, Window, make_candidates, plan_round
from inspectkit.plan.settings import (
    PlanSettings,
    PlanSettingsError,
    load_plan_settings,
    with_overrides,
)
from inspectkit.profiles import Profile, load_profile

DEPOT = Point(52.80, -1.42)


@pytest.fixture(scope="module")
def iec() -> Profile:
    return load_profile("iec-62305-3")


def _settings(**values: Any) -> PlanSettings:
    return with_overrides(load_plan_settings(), time_zone="Europe/London", **values)


def _site(name: str, lat: float, lon: float, **fields: Any) -> SiteBuilder:
    """A level III site last inspected in full in 2022: its visual one is overdue in 2027."""
    b = SiteBuilder("III", name=name, latitude=lat, longitude=lon, **fields)
    b.joint_with_electrode(1)
    b.joint_with_electrode(2)
    b.component(ComponentKind.AIR_TERMINAL, "AT-01")
    b.visit(date(2024, 1, 10), InspectionKind.COMPLETE)
    return b


def _plan(
    iec: Profile, sites: list[SiteBuilder], window: Window, plan_settings: PlanSettings, **kw: Any
) -> RoundPlan:
    found = make_candidates([(b.records(), iec) for b in sites], window, plan_settings)
    return plan_round(found, window, DEPOT, plan_settings, **kw)


def _ring(n: int) -> list[SiteBuilder]:
    """N sites spread round the depot, each a short day's work or so."""
    return [
        _site(f"Site {i:02d}", DEPOT.lat + 0.2 * ((i % 5) - 2) / 2, DEPOT.lon + 0.1 * (i // 5))
        for i in range(n)
    ]


# ------------------------------------------------------------------ working days


def test_new_years_day_and_a_closed_day_are_never_booked(iec: Profile) -> None:
    # England's bank holidays 2027: New Year's Day falls on Friday 1 January
    # (holidays library, GB/ENG; the UK government's list of bank holidays).
    england = holidays.country_holidays("GB", subdiv="ENG", years=2027)
    assert date(2027, 1, 1) in england
    plan = _plan(iec, _ring(1), Window(date(2027, 1, 1), 31), _settings(closed_days=["2027-01-04"]))
    # Friday 1st: holiday; 2nd-3rd: weekend; Monday 4th: our closed day.
    assert [d.day for d in plan.days] == [date(2027, 1, 5)]
    assert "public holiday: New Year's Day" in render_table(plan)


def test_region_decides_the_holidays(iec: Profile) -> None:
    # Scotland keeps 2 January; in 2027 it is a Saturday, so Monday 4 January is the
    # bank holiday there, not in England (holidays library, GB/SCT).
    assert date(2027, 1, 4) in holidays.country_holidays("GB", subdiv="SCT", years=2027)
    assert date(2027, 1, 4) not in holidays.country_holidays("GB", subdiv="ENG", years=2027)
    window = Window(date(2027, 1, 1), 31)
    england = _plan(iec, _ring(1), window, _settings())
    scotland = _plan(iec, _ring(1), window, _settings(holiday_region="SCT"))
    assert [d.day for d in england.days] == [date(2027, 1, 4)]
    assert [d.day for d in scotland.days] == [date(2027, 1, 5)]


@given(st.integers(0, 40), st.integers(3, 14))
@settings(max_examples=25, deadline=None)
def test_no_day_of_a_long_round_is_a_holiday_or_closed(start: int, count: int) -> None:
    iec = load_profile("iec-62305-3")
    first = date(2026, 12, 1) + timedelta(days=start)
    closed = [
        (first + timedelta(days=3)).isoformat(),
        f"{first + timedelta(days=8)}..{first + timedelta(days=10)}",
    ]
    plan_settings = _settings(hours_per_day=2, closed_days=closed)
    plan = _plan(iec, _ring(count), Window(first, 30), plan_settings)
    source = holidays.country_holidays("GB", subdiv="ENG", years=range(2026, 2029))
    shut = {first + timedelta(days=k) for k in (3, 8, 9, 10)}
    assert len(plan.visits) == count
    for d in plan.days:
        assert d.day not in source
        assert d.day not in shut
        assert d.day.weekday() < 5
    assert len({d.day for d in plan.days}) == len(plan.days)


def test_christmas_2026_is_skipped(iec: Profile) -> None:
    # England 2026: Christmas Day Friday 25 December, Boxing Day (Saturday) moved to
    # Monday 28 December (holidays library, GB/ENG).
    source = holidays.country_holidays("GB", subdiv="ENG", years=2026)
    assert {date(2026, 12, 25), date(2026, 12, 28)} <= set(source)
    plan = _plan(iec, _ring(8), Window(date(2026, 12, 24), 30), _settings(hours_per_day=2))
    booked = [d.day for d in plan.days]
    assert booked[:3] == [date(2026, 12, 24), date(2026, 12, 29), date(2026, 12, 30)]


def test_an_unknown_country_or_region_is_named() -> None:
    with pytest.raises(PlanSettingsError, match="holiday_country"):
        _settings(holiday_country="XX")
    with pytest.raises(PlanSettingsError, match="holiday_region.*ENG"):
        _settings(holiday_region="Mercia")


# ------------------------------------------------------------------ access rules


@pytest.mark.parametrize(
    ("text", "weekdays", "window"),
    [
        ("weekdays 08:00-15:00", {0, 1, 2, 3, 4}, ("08:00", "15:00")),
        ("Saturdays only", {5}, None),
        ("tue, thu 9:30 – 12:00", {1, 3}, ("09:30", "12:00")),
        ("fri-mon", {4, 5, 6, 0}, None),
    ],
)
def test_access_rules_read(text: str, weekdays: set[int], window: tuple[str, str] | None) -> None:
    access = parse_access(text)
    assert access.weekdays == frozenset(weekdays)
    opened = None if access.opens is None else (f"{access.opens:%H:%M}", f"{access.closes:%H:%M}")
    assert opened == window


@pytest.mark.parametrize(
    ("text", "words"),
    [("weekdays 15:00-08:00", "closes before"), ("every other day", "'every'"), ("not", "not")],
)
def test_bad_access_rules_say_how_to_write_them(text: str, words: str) -> None:
    with pytest.raises(AccessError, match=words):
        parse_access(text)


def test_visits_fit_their_access_windows_and_days(iec: Profile) -> None:
    sites = [
        _site("Late opener", DEPOT.lat + 0.1, DEPOT.lon, access="weekdays 10:30-14:00"),
        _site("Early closer", DEPOT.lat - 0.1, DEPOT.lon, access="mon-fri 08:00-10:30"),
        _site("Tue Thu", DEPOT.lat, DEPOT.lon + 0.15, access="tue, thu"),
        _site("Plain", DEPOT.lat, DEPOT.lon - 0.15),
    ]
    plan = _plan(iec, sites, Window(date(2027, 1, 4), 30), _settings())
    at = {v.candidate.site.name: (d, v) for d, v in plan.visits}
    assert set(at) == {"Late opener", "Early closer", "Tue Thu", "Plain"}
    day, late = at["Late opener"]
    assert late.start.time() >= datetime.strptime("10:30", "%H:%M").time()
    assert late.leave.time() <= datetime.strptime("14:00", "%H:%M").time()
    _, early = at["Early closer"]
    assert early.leave.time() <= datetime.strptime("10:30", "%H:%M").time()
    assert at["Tue Thu"][0].day.weekday() in (1, 3)
    assert all(v.fits for _, v in plan.visits)


def test_the_crew_waits_for_a_site_to_open(iec: Profile) -> None:
    site = _site("Late opener", DEPOT.lat + 0.05, DEPOT.lon, access="weekdays 10:30-14:00")
    plan = _plan(iec, [site], Window(date(2027, 1, 4), 30), _settings())
    ((day, visit),) = plan.visits
    assert visit.arrive < visit.start == datetime.combine(day.day, visit.start.timetz())
    assert f"{visit.start:%H:%M}" == "10:30"


def test_a_period_and_a_span_keep_visits_out(iec: Profile) -> None:
    plan_settings = _settings(periods={"school_term": ["2027-01-05..2027-02-12"]})
    sites = [
        _site("School", DEPOT.lat + 0.1, DEPOT.lon, access="not in school term"),
        _site("Works", DEPOT.lat - 0.1, DEPOT.lon, access="not 2027-01-04..2027-01-08"),
    ]
    plan = _plan(iec, sites, Window(date(2027, 1, 5), 30), plan_settings)
    at = {v.candidate.site.name: d.day for d, v in plan.visits}
    assert at["School"] == date(2027, 2, 15)
    assert at["Works"] == date(2027, 1, 11)


def test_a_site_with_no_usable_day_is_listed_with_the_reason(iec: Profile) -> None:
    sites = [
        _site("Weekend only", DEPOT.lat, DEPOT.lon + 0.1, access="sat"),
        _site("Unknown period", DEPOT.lat, DEPOT.lon - 0.1, access="not harvest"),
        _site("Typo", DEPOT.lat + 0.1, DEPOT.lon, access="wekdays"),
    ]
    plan = _plan(iec, sites, Window(date(2027, 1, 4), 30), _settings())
    assert plan.visits == []
    why = {c.site.name: text for c, text in plan.unbookable}
    assert "none of the working days" in why["Weekend only"]
    assert "harvest" in why["Unknown period"] and "[periods]" in why["Unknown period"]
    assert "'wekdays'" in why["Typo"]
    assert "No day it can be booked on" in render_table(plan)


# ------------------------------------------------------------------ one distance


def test_the_distance_shown_is_the_one_timed(iec: Profile, tmp_path: Path) -> None:
    plan_settings = _settings(road_factor=1.4, speed_kmh=60, hours_per_day=3)
    plan = _plan(iec, _ring(6), Window(date(2027, 1, 4), 30), plan_settings)
    rows = list(csv.DictReader(write_csv(plan, tmp_path / "r.csv").open(encoding="utf-8")))
    text = render_table(plan)
    assert "great-circle × 1.4" in text
    here = {d.day: DEPOT for d in plan.days}
    for (day, visit), row in zip(plan.visits, rows, strict=True):
        point = visit.candidate.point
        assert point is not None
        # Estimated road distance: great-circle (haversine) × road factor.
        assert visit.km == pytest.approx(haversine_km(here[day.day], point) * 1.4)
        assert visit.drive_minutes == pytest.approx(visit.km / 60 * 60)
        assert float(row["road_km"]) == round(visit.km, 1)
        assert row["road_km_source"] == "estimate"
        assert int(row["drive_min"]) == round(visit.km)
        assert f"{visit.km:6.1f} km est" in text
        here[day.day] = point
    for d in plan.days:
        assert d.home_minutes == pytest.approx(d.home_km)


def test_a_known_road_replaces_the_estimate(iec: Profile, tmp_path: Path) -> None:
    roads = [
        {"a": "depot", "b": "Near", "km": 7.5, "minutes": 20},
        {"a": "near", "b": "Far", "km": 30.0},
        {"a": "depot", "b": "Nowhere", "km": 3.0},
    ]
    plan_settings = _settings(roads=roads, speed_kmh=45)
    sites = [_site("Near", DEPOT.lat + 0.03, DEPOT.lon), _site("Far", DEPOT.lat + 0.25, DEPOT.lon)]
    plan = _plan(iec, sites, Window(date(2027, 1, 4), 30), plan_settings)
    (day,) = plan.days
    legs = {v.candidate.site.name: v for v in day.visits}
    order = [v.candidate.site.name for v in day.visits]
    first = legs[order[0]]
    if order[0] == "Near":
        assert (first.km, first.drive_minutes, first.known_road) == (7.5, 20, True)
        second = legs["Far"]
        assert (second.km, second.known_road) == (30.0, True)
        assert second.drive_minutes == pytest.approx(30.0 / 45 * 60)
    else:
        assert (day.home_km, day.home_minutes, day.home_known) == (7.5, 20, True)
    rows = list(csv.DictReader(write_csv(plan, tmp_path / "r.csv").open(encoding="utf-8")))
    assert [r["road_km_source"] for r in rows if r["site"] == "Far"] == ["known"] or order[
        0
    ] == "Far"
    assert any("Nowhere" in n for n in plan.notes)


# ------------------------------------------------------------------ breaks


@given(st.lists(st.tuples(st.floats(-0.4, 0.4), st.floats(-0.6, 0.6)), min_size=1, max_size=12))
@settings(max_examples=30, deadline=None)
def test_the_break_never_splits_a_visit_and_starts_in_time(
    offsets: list[tuple[float, float]],
) -> None:
    iec = load_profile("iec-62305-3")
    plan_settings = _settings(break_minutes=30, break_by_hours=4.5)
    sites = [_site(f"S{i}", DEPOT.lat + a, DEPOT.lon + b) for i, (a, b) in enumerate(offsets)]
    plan = _plan(iec, sites, Window(date(2027, 1, 4), 60), plan_settings)
    for d in plan.days:
        start = datetime.combine(d.day, plan_settings.day_start, tzinfo=d.back.tzinfo)
        latest = start + timedelta(hours=4.5)
        if d.back <= latest:
            assert d.break_start is None
            continue
        assert d.break_start is not None and d.break_end is not None
        assert d.break_end - d.break_start == timedelta(minutes=30)
        assert d.break_start <= latest + timedelta(minutes=1)  # whole minutes
        for v in d.visits:
            assert d.break_end <= v.start or d.break_start >= v.leave
        if not d.too_long:
            worked = (d.back - start - timedelta(minutes=30)).total_seconds() / 60
            assert worked <= plan_settings.hours_per_day * 60 + 1


def test_break_shows_in_the_day_table(iec: Profile) -> None:
    plan = _plan(iec, _ring(6), Window(date(2027, 1, 4), 30), _settings(break_by_hours=3))
    with_break = [d for d in plan.days if d.break_start is not None]
    assert with_break
    text = render_table(plan)
    for d in with_break:
        assert d.break_start is not None and d.break_end is not None
        assert (
            f"break{'':<10}  {'':>5}  {'':<5}  {d.break_start:%H:%M}  {d.break_end:%H:%M}" in text
        )


def test_a_day_that_ends_before_the_latest_start_has_no_break(iec: Profile) -> None:
    plan = _plan(iec, _ring(1), Window(date(2027, 1, 4), 30), _settings(break_by_hours=8))
    assert [d.break_start for d in plan.days] == [None]
    assert datetime(2027, 1, 4, 16, tzinfo=UTC) > plan.days[0].back


# ------------------------------------------------------------------ settings and store


def test_user_file_sets_periods_closed_days_and_roads(tmp_path: Path) -> None:
    path = tmp_path / "plan.toml"
    path.write_text(
        'closed_days = [2027-01-04, "2027-08-02..2027-08-13"]\n'
        '[periods]\n"School term" = ["2027-01-05..2027-02-12"]\n'
        '[[roads]]\na = "depot"\nb = "Hall"\nkm = 4.5\n',
        encoding="utf-8",
    )
    loaded = load_plan_settings(path)
    assert [(s.first, s.last) for s in loaded.closed_days] == [
        (date(2027, 1, 4), date(2027, 1, 4)),
        (date(2027, 8, 2), date(2027, 8, 13)),
    ]
    assert list(loaded.periods) == ["school_term"]
    assert loaded.roads[0].km == 4.5 and loaded.roads[0].minutes is None


def test_saving_the_holiday_calendar_keeps_the_rest_of_the_file(tmp_path: Path) -> None:
    from inspectkit.plan.settings import save_plan_values

    path = tmp_path / "plan.toml"
    path.write_text("# my figures\nspeed_kmh = 60  # motorway\n[minutes.visual]\nspd = 5\n")
    saved = save_plan_values({"holiday_country": "DE", "holiday_region": "BY"}, path)
    assert (saved.holiday_country, saved.holiday_region, saved.speed_kmh) == ("DE", "BY", 60)
    text = path.read_text()
    assert "# my figures" in text and "spd = 5" in text
    assert text.index('holiday_country = "DE"') < text.index("[minutes.visual]")
    again = save_plan_values({"holiday_region": "BE"}, path)
    assert again.holiday_region == "BE" and text.count("holiday_region") == 1
    before = path.read_text()
    with pytest.raises(PlanSettingsError, match="holiday_region"):
        save_plan_values({"holiday_region": "Atlantis"}, path)
    assert path.read_text() == before


def test_a_database_before_access_rules_migrates_with_empty_access(tmp_path: Path) -> None:
    import sqlite_utils
    from test_store import save_in_old_schema

    from inspectkit.model import Site
    from inspectkit.store import Store
    from inspectkit.store.opening import apply_migrations
    from inspectkit.store.schema import MIGRATIONS, SCHEMA_VERSION

    path = tmp_path / "old.sqlite"
    db = sqlite_utils.Database(path)
    apply_migrations(db, upto=[m.__name__ for m in MIGRATIONS].index("_site_access"))
    assert "access" not in {c.name for c in db["site"].columns}
    site = Site(name="Old Hall", protection_level="II")
    save_in_old_schema(db, site)
    db.close()
    with Store.open(path) as store:
        assert store.schema_version() == SCHEMA_VERSION
        assert store.get(Site, site.id).access == ""
        assert store.verify_audit() == [], "the new column is logged, not taken for an edit"
        store.save(store.get(Site, site.id).model_copy(update={"access": "tue, thu"}))
        assert store.get(Site, site.id).access == "tue, thu"
        assert store.verify_audit() == []


def test_the_time_zone_defaults_to_the_systems(monkeypatch: pytest.MonkeyPatch) -> None:
    from inspectkit.plan.settings import system_zone

    monkeypatch.setenv("TZ", "America/New_York")
    system_zone.cache_clear()
    try:
        assert load_plan_settings().time_zone == ""
        assert load_plan_settings().zone == "America/New_York"
        assert _settings().zone == "Europe/London"
        monkeypatch.setenv("TZ", "Nowhere/Special")
        system_zone.cache_clear()
        assert load_plan_settings().zone == "UTC"
    finally:
        system_zone.cache_clear()


@given(
    st.lists(
        st.tuples(
            st.floats(-0.3, 0.3),
            st.floats(-0.5, 0.5),
            st.sampled_from(["", "weekdays", "tue, thu", "mon-wed", "fri"]),
            st.integers(7, 12),
            st.integers(2, 8),
        ),
        min_size=1,
        max_size=10,
    )
)
@settings(max_examples=30, deadline=None)
def test_every_visit_keeps_its_sites_access(
    sites: list[tuple[float, float, str, int, int]],
) -> None:
    iec = load_profile("iec-62305-3")
    builders = [
        _site(f"A{i}", DEPOT.lat + a, DEPOT.lon + b, access=f"{days} {h:02d}:00-{h + span:02d}:00")
        for i, (a, b, days, h, span) in enumerate(sites)
    ]
    plan = _plan(iec, builders, Window(date(2027, 1, 4), 30), _settings())
    assert len(plan.visits) + len(plan.unbookable) == len(sites)
    rules = {b.site.id: parse_access(b.site.access) for b in builders}
    for day, visit in plan.visits:
        access = rules[visit.candidate.site.id]
        if access.weekdays is not None:
            assert day.day.weekday() in access.weekdays
        if visit.fits:
            assert access.opens is not None and access.closes is not None
            assert visit.start.time() >= access.opens and visit.leave.time() <= access.closes
        else:
            assert day.outside_window and len(day.visits) == 1
