"""What goes in a round and in what order; time on site; the planning figures; drafts."""

from __future__ import annotations

from datetime import date, timedelta
from pathlib import Path
from typing import Any

import pytest
from engine_factories import SiteBuilder

from inspectkit.model import ComponentKind, Grade, Inspection, InspectionKind, InspectionState
from inspectkit.plan.calendar import WorkCalendar
from inspectkit.plan.drafts import create_drafts
from inspectkit.plan.geo import Point, PointError
from inspectkit.plan.planner import (
    Window,
    make_candidates,
    make_plan,
    plan_round,
    save_depot,
    saved_depot,
)
from inspectkit.plan.round import by_priority
from inspectkit.plan.settings import (
    PlanSettingsError,
    load_plan_settings,
    user_settings_path,
    with_overrides,
)
from inspectkit.plan.timing import onsite_minutes, travel_minutes
from inspectkit.profiles import Profile, load_profile
from inspectkit.store import Store

FIRST = date(2026, 3, 2)  # a Monday
WINDOW = Window(FIRST, 30)
DEPOT = Point(52.0, -1.0)


@pytest.fixture(scope="module")
def iec() -> Profile:
    return load_profile("iec-62305-3")


def _site(name: str, last: date, level: str = "III", **fields: Any) -> SiteBuilder:
    fields.setdefault("latitude", 52.1)
    fields.setdefault("longitude", -1.1)
    b = SiteBuilder(level, name=name, **fields)
    b.joint_with_electrode(1)
    b.joint_with_electrode(2)
    b.component(ComponentKind.AIR_TERMINAL, "AT-01")
    b.visit(last, InspectionKind.COMPLETE)
    return b


def test_due_and_overdue_sites_are_in_and_the_others_out(iec: Profile) -> None:
    # Level III: visual every 24 months, complete every 48 (IEC 62305-3 Table E.2, as quoted).
    overdue = _site("Overdue", date(2023, 12, 1))  # visual due 2025-12-01
    inside = _site("Inside", date(2024, 3, 20))  # visual due 2026-03-20, in the window
    later = _site("Later", date(2024, 6, 1))  # visual due 2026-06-01, after it
    found = make_candidates(
        [(b.records(), iec) for b in (overdue, inside, later)], WINDOW, load_plan_settings()
    )
    assert [c.site.name for c in found] == ["Overdue", "Inside"]
    assert found[0].overdue_days == (FIRST - date(2025, 12, 1)).days
    assert found[0].kinds == (InspectionKind.VISUAL,)
    assert found[1].overdue_days == 0
    assert found[1].due == date(2026, 3, 20)


def test_priority_overdue_first_then_explosive_critical_then_due_date(iec: Profile) -> None:
    sites = [
        _site("Plain soon", date(2024, 3, 5)),
        # Critical: complete every 12 months, due 2026-03-25 (IEC 62305-3 Table E.2, as quoted).
        _site("Critical later", date(2025, 3, 25), critical=True),
        # Explosion risk: visual every 6 months, due 2026-03-25 (Table E.2 note, as quoted).
        _site("Explosive later", date(2025, 9, 25), explosive_risk=True),
        _site("Overdue a little", date(2024, 2, 20)),
        _site("Overdue a lot", date(2023, 6, 1)),
    ]
    found = make_candidates([(b.records(), iec) for b in sites], WINDOW, load_plan_settings())
    assert [c.site.name for c in found] == [
        "Overdue a lot",
        "Overdue a little",
        "Explosive later",
        "Critical later",
        "Plain soon",
    ]


def test_complete_absorbs_visual_and_takes_longer(iec: Profile) -> None:
    settings = load_plan_settings()
    complete = _site("Four years", date(2022, 1, 10))  # complete due 2026-01-10
    visual = _site("Two years", date(2024, 1, 10))  # visual only
    found = {
        c.site.name: c
        for c in make_candidates([(b.records(), iec) for b in (complete, visual)], WINDOW, settings)
    }
    assert found["Four years"].kinds == (InspectionKind.COMPLETE,)
    assert found["Two years"].kinds == (InspectionKind.VISUAL,)
    assert found["Four years"].onsite_minutes > found["Two years"].onsite_minutes
    # Set-up plus each component once: 2 down conductors, 2 test joints, 2 electrodes, 1 terminal.
    m = settings.minutes[InspectionKind.VISUAL]
    assert (
        found["Two years"].onsite_minutes
        == settings.setup_minutes
        + 2 * (m[ComponentKind.DOWN_CONDUCTOR] + m[ComponentKind.TEST_JOINT])
        + 2 * m[ComponentKind.EARTH_ELECTRODE]
        + m[ComponentKind.AIR_TERMINAL]
    )


def test_open_defect_due_for_recheck_brings_a_site_in(iec: Profile) -> None:
    b = _site("Defect", date(2025, 9, 1))
    visit = b.inspections[0]
    b.finding(
        visit,
        None,
        Grade.DEFECT,
        "bond missing",
        remedial_action="fit bond",
        due_by=date(2026, 3, 15),
    )
    b.finding(visit, None, Grade.DEFECT, "later one", due_by=date(2026, 6, 1))
    b.finding(visit, None, Grade.DEFECT, "put right", due_by=date(2026, 1, 1), resolved_by=visit.id)
    (found,) = make_candidates([(b.records(), iec)], WINDOW, load_plan_settings())
    assert found.kinds == ()
    assert found.kind_label == "re-check"
    assert len(found.rechecks) == 1
    assert "fit bond" in found.reason_text
    settings = load_plan_settings()
    assert found.onsite_minutes == settings.setup_minutes + settings.recheck_minutes


def test_post_strike_due_is_in_the_round(iec: Profile) -> None:
    from inspectkit.model import Quantity

    b = _site("Struck", date(2025, 6, 1))
    counter = b.component(ComponentKind.STRIKE_COUNTER, "SC-01")
    b.reading(b.inspections[0], counter, Quantity.STRIKE_COUNT, 3)
    later = b.visit(date(2026, 2, 20), InspectionKind.VISUAL)
    b.reading(later, counter, Quantity.STRIKE_COUNT, 5)
    (found,) = make_candidates([(b.records(), iec)], WINDOW, load_plan_settings())
    assert found.kinds == (InspectionKind.POST_STRIKE,)
    assert any(r.what == "post_strike" for r in found.reasons)


def test_sites_without_coordinates_are_listed_apart(iec: Profile) -> None:
    lost = _site("No position", date(2023, 1, 1), latitude=None, longitude=None)
    placed = _site("Placed", date(2023, 1, 1))
    settings = load_plan_settings()
    found = make_candidates([(b.records(), iec) for b in (lost, placed)], WINDOW, settings)
    plan = plan_round(found, WINDOW, DEPOT, settings)
    assert [c.site.name for c in plan.no_position] == ["No position"]
    assert [v.candidate.site.name for _, v in plan.visits] == ["Placed"]


def test_dropped_sites_are_out_and_pinned_ones_go_first(iec: Profile) -> None:
    settings = with_overrides(load_plan_settings(), hours_per_day=3)
    sites = [
        _site(f"Site {i}", date(2023, 1 + i, 1), latitude=52 + i / 10, longitude=-1.0)
        for i in range(4)
    ]
    found = make_candidates([(b.records(), iec) for b in sites], WINDOW, settings)
    last = found[-1].site
    plan = plan_round(found, WINDOW, DEPOT, settings, dropped=[found[0].site.id], pinned=[last.id])
    assert [c.site.name for c in plan.dropped] == [found[0].site.name]
    assert last.id in [v.candidate.site.id for v in plan.days[0].visits]
    assert plan.days[0].day == FIRST
    assert len(plan.visits) == 3


def test_days_are_dated_on_working_days_most_urgent_first(iec: Profile) -> None:
    settings = with_overrides(load_plan_settings(), hours_per_day=2.5)
    sites = [
        _site(f"Site {i}", date(2023, 1 + i, 1), latitude=52 + i / 20, longitude=-1.0 + i / 20)
        for i in range(6)
    ]
    found = make_candidates(
        [(b.records(), iec) for b in sites], Window(date(2026, 3, 6), 30), settings
    )
    plan = plan_round(found, Window(date(2026, 3, 6), 30), DEPOT, settings)
    assert [d.day.weekday() for d in plan.days] == [4, 0, 1, 2, 3, 4][: len(plan.days)]
    urgency = [max(v.candidate.overdue_days for v in d.visits) for d in plan.days]
    assert urgency == sorted(urgency, reverse=True)
    for d in plan.days:
        assert d.too_long or (d.back - d.visits[0].arrive).total_seconds() / 60 <= 150


def test_working_days_skip_the_weekend() -> None:
    calendar = WorkCalendar(load_plan_settings())
    days = [date(2026, 3, 6) + timedelta(days=k) for k in range(5)]
    assert [d for d in days if calendar.closed_why(d) is None] == [
        date(2026, 3, 6),
        date(2026, 3, 9),
        date(2026, 3, 10),
    ]
    assert calendar.closed_why(date(2026, 3, 7)) == "Saturday: not a working day"


def test_travel_time_is_distance_times_road_factor_over_speed() -> None:
    settings = with_overrides(load_plan_settings(), speed_kmh=60, road_factor=1.5)
    assert travel_minutes(40, settings) == pytest.approx(60)


def test_onsite_time_adds_each_inspection_done() -> None:
    settings = load_plan_settings()
    counts = {ComponentKind.TEST_JOINT: 4}
    both = onsite_minutes(counts, [InspectionKind.VISUAL, InspectionKind.POST_STRIKE], settings)
    visual = onsite_minutes(counts, [InspectionKind.VISUAL], settings)
    assert (
        both - visual == 4 * settings.minutes[InspectionKind.POST_STRIKE][ComponentKind.TEST_JOINT]
    )


def test_user_plan_file_overrides_key_by_key() -> None:
    path = user_settings_path()
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("speed_kmh = 70\n[minutes.complete]\ntest_joint = 20\n", encoding="utf-8")
    settings = load_plan_settings()
    assert settings.speed_kmh == 70
    assert settings.minutes[InspectionKind.COMPLETE][ComponentKind.TEST_JOINT] == 20
    assert settings.minutes[InspectionKind.COMPLETE][ComponentKind.SPD] == 8
    assert settings.road_factor == 1.3


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("road_factor = 0.5\n", "road_factor"),
        ('day_start = "8 o\'clock"\n', "HH:MM"),
        ('working_days = ["mon", "funday"]\n', "funday"),
        ("[minutes.visual]\nspd = -1\n", "minutes"),
        ("speed_kmh = \n", "not valid TOML"),
        ('closed_days = ["1 May"]\n', "closed_days"),
        ('closed_days = ["2027-05-09..2027-05-01"]\n', "ends before it starts"),
        ('time_zone = "Mars/Olympus"\n', "time_zone"),
        ('holiday_country = "XX"\n', "holiday_country"),
        ("break_minutes = -5\n", "break_minutes"),
        ('[periods]\nschool_term = ["next term"]\n', "periods"),
        ('[[roads]]\na = "depot"\nb = "Hall"\nkm = 0\n', "roads"),
    ],
)
def test_bad_user_plan_file_names_file_and_key(tmp_path: Path, text: str, words: str) -> None:
    path = tmp_path / "plan.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(PlanSettingsError, match=str(path).replace("\\", "\\\\")) as caught:
        load_plan_settings(path)
    assert words in str(caught.value)


def test_overrides_are_checked_like_the_file() -> None:
    with pytest.raises(PlanSettingsError, match="--hours-per-day"):
        with_overrides(load_plan_settings(), hours_per_day=30)


def test_depot_is_kept_in_the_store(store: Store) -> None:
    assert saved_depot(store) is None
    save_depot(store, Point(51.25, -0.75))
    assert saved_depot(store) == Point(51.25, -0.75)
    with pytest.raises(PointError, match="--start"):
        make_plan(Store.memory(), WINDOW, load_plan_settings())


def _stored(store: Store, *builders: SiteBuilder) -> None:
    for b in builders:
        r = b.records()
        store.save_all([r.site, *r.components, *r.inspections, *r.readings, *r.findings])


def test_drafts_for_planned_visits_once_only(store: Store) -> None:
    _stored(store, _site("Alpha", date(2023, 1, 1)), _site("Beta", date(2022, 1, 1), latitude=52.2))
    plan = make_plan(store, WINDOW, load_plan_settings(), DEPOT)
    made = create_drafts(store, plan)
    assert sorted((i.kind, i.date) for i in made) == sorted(
        (v.candidate.kinds[0], d.day) for d, v in plan.visits
    )
    assert all(i.state is InspectionState.DRAFT and i.date >= FIRST for i in made)
    assert create_drafts(store, plan) == []
    assert len(store.select(Inspection, "state = 'draft'")) == 2


def test_a_site_with_an_unknown_profile_is_reported_not_planned(store: Store) -> None:
    _stored(
        store,
        _site("Odd", date(2023, 1, 1), profile="no-such-rules"),
        _site("Even", date(2023, 1, 1)),
    )
    plan = make_plan(store, WINDOW, load_plan_settings(), DEPOT)
    assert [name for name, _ in plan.skipped] == ["Odd"]
    assert "no-such-rules" in plan.skipped[0][1]
    assert [v.candidate.site.name for _, v in plan.visits] == ["Even"]


def test_by_priority_is_stable_on_names(iec: Profile) -> None:
    sites = [_site(n, date(2023, 1, 1)) for n in ("b", "A", "c")]
    found = make_candidates([(b.records(), iec) for b in sites], WINDOW, load_plan_settings())
    assert [c.site.name for c in by_priority(reversed(found))] == ["A", "b", "c"]
