"""The demo's January round from its own depot: what an office would book as it stands."""

from __future__ import annotations

from datetime import date, time

import holidays
import pytest

from inspectkit.model import Finding
from inspectkit.plan.export import render_table
from inspectkit.plan.planner import RoundPlan, Window, make_plan, saved_depot
from inspectkit.plan.settings import load_plan_settings, with_overrides
from inspectkit.store import Store

generate = pytest.importorskip("inspectkit.demo.generate")

ANCHOR = date(2026, 12, 2)
JANUARY = Window(date(2027, 1, 1), 31)


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> tuple[RoundPlan, list[Finding]]:
    path = generate.build_demo(tmp_path_factory.mktemp("demo") / "demo.sqlite", anchor=ANCHOR)
    settings = with_overrides(load_plan_settings(), time_zone="Europe/London")
    with Store.open(path) as store:
        assert saved_depot(store) is not None, "the demo saves its depot"
        return make_plan(store, JANUARY, settings), store.select(Finding)


def _visit(plan: RoundPlan, town: str):  # type: ignore[no-untyped-def]
    return next((d, v) for d, v in plan.visits if v.candidate.site.town == town)


def test_the_demo_january_round_skips_new_years_day_and_weekends(demo) -> None:  # type: ignore[no-untyped-def]
    plan, _ = demo
    england = holidays.country_holidays("GB", subdiv="ENG", years=2027)
    assert plan.visits
    for d in plan.days:
        assert d.day not in england and d.day.weekday() < 5
    assert date(2027, 1, 1) not in [d.day for d in plan.days]
    assert "public holiday: New Year's Day" in render_table(plan)


@pytest.mark.parametrize(
    ("town", "weekdays", "opens", "closes"),
    [
        # The scenario's access rules (demo_db/scenario.toml).
        ("Brackenholt", {0, 1, 2, 3}, time(10), time(16)),
        ("Coldharrow", {0, 1, 2, 3, 4}, time(8), time(14)),
        ("Hartle Cross", {1, 3}, None, None),
        ("Tollbeck", {0, 1, 2, 3, 4}, time(9), time(13)),
    ],
)
def test_the_demo_sites_are_visited_inside_their_access(  # type: ignore[no-untyped-def]
    demo, town: str, weekdays: set[int], opens: time | None, closes: time | None
) -> None:
    plan, _ = demo
    day, visit = _visit(plan, town)
    assert day.day.weekday() in weekdays
    if opens is not None and closes is not None:
        assert opens <= visit.start.time() and visit.leave.time() <= closes


def test_demo_rechecks_come_on_or_after_their_remedy_dates(demo) -> None:  # type: ignore[no-untyped-def]
    plan, findings = demo
    due = {f.id: f.due_by for f in findings}
    checked = 0
    for day, visit in plan.visits:
        for finding_id in visit.candidate.rechecks:
            assert due[finding_id] is not None and day.day >= due[finding_id]
            checked += 1
    assert checked


def test_the_demo_site_without_position_is_left_for_placing_by_hand(demo) -> None:  # type: ignore[no-untyped-def]
    plan, _ = demo
    (unplaced,) = plan.no_position
    assert "return visit" in unplaced.kind_label
    # The demo marks Pellow's DC-02 (covered) and E-03 (no access) as not inspected.
    returns = sorted(r.text.split(",")[0] for r in unplaced.reasons if r.what == "return")
    assert returns == ["return for DC-02", "return for E-03"]


def test_demo_days_do_not_exceed_the_working_day(demo) -> None:  # type: ignore[no-untyped-def]
    plan, _ = demo
    for d in plan.days:
        if d.too_long:
            assert len(d.visits) == 1
            continue
        day_start = plan.settings.day_start
        start = d.visits[0].arrive.replace(hour=day_start.hour, minute=day_start.minute)
        worked = (d.back - start).total_seconds() / 3600
        worked -= 0 if d.break_start is None else plan.settings.break_minutes / 60
        assert worked <= plan.settings.hours_per_day + 1 / 60


def test_demo_day_list_is_written(demo) -> None:  # type: ignore[no-untyped-def]
    plan, _ = demo
    text = render_table(plan)
    for d in plan.days:
        assert f"{d.day:%a %Y-%m-%d}" in text
    assert "break" in text and "road km" in text
