"""The inspection schedule: intervals from the real profiles, triggers, calendar edge cases."""

from __future__ import annotations

from datetime import date

import pytest

from inspectkit.engine.schedule import DueKind, DueStatus, schedule_site
from inspectkit.model import ComponentKind, InspectionKind, Quantity
from inspectkit.profiles import load_profile
from tests.engine_factories import SiteBuilder

IEC = load_profile("iec-62305-3")
NFPA = load_profile("nfpa-780")


def _after_complete(profile, level, last=date(2020, 1, 15), **flags):
    site = SiteBuilder(level, **flags)
    site.visit(last, InspectionKind.COMPLETE)
    return schedule_site(site.records(), profile, date(2020, 2, 1))


# IEC 62305-3 Table E.2 (as quoted): levels I and II visual 1 year, complete 2 years,
# critical 1 year; levels III and IV visual 2 years, complete 4 years, critical 1 year.
@pytest.mark.parametrize(
    ("level", "visual_years", "complete_years"),
    [("I", 1, 2), ("II", 1, 2), ("III", 2, 4), ("IV", 2, 4)],
)
def test_iec_intervals_follow_table_e2(level, visual_years, complete_years):
    schedule = _after_complete(IEC, level)
    assert schedule.next_visual == date(2020 + visual_years, 1, 15)
    assert schedule.next_complete == date(2020 + complete_years, 1, 15)
    critical = _after_complete(IEC, level, critical=True)
    # IEC 62305-3 Table E.2 (as quoted): complete inspection of critical systems every year.
    assert critical.next_complete == date(2021, 1, 15)
    assert critical.next_visual == schedule.next_visual


@pytest.mark.parametrize("level", ["I", "II", "III", "IV"])
def test_iec_explosive_risk_takes_the_shorter_note_intervals(level):
    # IEC 62305-3 Table E.2, note (as quoted): explosion risk, visual every 6 months,
    # electrical testing every year.
    schedule = _after_complete(IEC, level, explosive_risk=True)
    assert schedule.next_visual == date(2020, 7, 15)
    assert schedule.next_complete == date(2021, 1, 15)
    assert "explosive risk" in schedule.interval_basis


@pytest.mark.parametrize("level", ["I", "II", "III", "IV"])
def test_nfpa_intervals_sit_inside_annex_d_ranges(level):
    # NFPA 780 Annex D (from memory): visual every year; complete every 3-5 years;
    # critical systems every 1-3 years.
    schedule = _after_complete(NFPA, level)
    assert schedule.next_visual == date(2021, 1, 15)
    assert date(2023, 1, 15) <= schedule.next_complete <= date(2025, 1, 15)
    critical = _after_complete(NFPA, level, critical=True)
    assert date(2021, 1, 15) <= critical.next_complete <= date(2023, 1, 15)


def test_site_with_no_inspections_is_due_now():
    today = date(2026, 12, 1)
    schedule = schedule_site(SiteBuilder().records(), IEC, today)
    assert schedule.status is DueStatus.DUE
    assert schedule.next_visual == schedule.next_complete == today
    assert all("no " in item.reason and "due now" in item.reason for item in schedule.due_items)
    assert schedule.last_visual is None and schedule.last_complete is None


def test_today_before_the_first_inspection_sees_no_visit():
    site = SiteBuilder()
    site.visit(date(2026, 6, 1))
    schedule = schedule_site(site.records(), IEC, date(2026, 5, 1))
    assert schedule.last_complete is None
    assert schedule.status is DueStatus.DUE


def test_leap_day_inspection_plus_twelve_months_is_28_february():
    # Calendar rule of dateutil.relativedelta: the day is clipped to the month's end.
    site = SiteBuilder("I")
    site.visit(date(2024, 2, 29), InspectionKind.COMPLETE)
    schedule = schedule_site(site.records(), IEC, date(2024, 3, 1))
    assert schedule.next_visual == date(2025, 2, 28)
    assert schedule.next_complete == date(2026, 2, 28)


def test_month_end_is_kept_within_the_month():
    site = SiteBuilder("I", explosive_risk=True)
    site.visit(date(2025, 8, 31), InspectionKind.COMPLETE)
    assert schedule_site(site.records(), IEC, date(2025, 9, 1)).next_visual == date(2026, 2, 28)


def test_complete_counts_as_visual_but_visual_not_as_complete():
    site = SiteBuilder("II")
    site.visit(date(2022, 5, 1), InspectionKind.COMPLETE)
    site.visit(date(2023, 5, 1), InspectionKind.VISUAL)
    schedule = schedule_site(site.records(), IEC, date(2023, 6, 1))
    assert schedule.last_visual == date(2023, 5, 1)
    assert schedule.last_complete == date(2022, 5, 1)
    assert schedule.next_complete == date(2024, 5, 1)


def test_post_strike_visit_does_not_restart_routine_intervals():
    site = SiteBuilder("II")
    site.visit(date(2022, 5, 1), InspectionKind.COMPLETE)
    site.visit(date(2022, 9, 1), InspectionKind.POST_STRIKE)
    schedule = schedule_site(site.records(), IEC, date(2022, 10, 1))
    assert schedule.last_visual == date(2022, 5, 1)
    assert schedule.last_post_strike == date(2022, 9, 1)


def test_unfinished_draft_does_not_count():
    site = SiteBuilder("II")
    site.visit(date(2022, 5, 1), InspectionKind.COMPLETE, signed=False)
    assert schedule_site(site.records(), IEC, date(2022, 6, 1)).last_complete is None


@pytest.mark.parametrize(
    ("today", "status", "late"),
    [
        (date(2025, 11, 29), DueStatus.OK, 0),  # 61 days before
        (date(2025, 12, 1), DueStatus.DUE_SOON, 0),  # 59 days before, window 60 (our default)
        (date(2026, 1, 29), DueStatus.DUE, 0),
        (date(2026, 2, 8), DueStatus.OVERDUE, 10),
    ],
)
def test_status_by_distance_to_due_date(today, status, late):
    site = SiteBuilder("I")
    site.visit(date(2024, 1, 29), InspectionKind.COMPLETE)
    site.visit(date(2025, 1, 29), InspectionKind.VISUAL)
    schedule = schedule_site(site.records(), IEC, today)
    assert schedule.next_visual == date(2026, 1, 29) == schedule.next_complete
    assert schedule.status is status
    assert schedule.overdue_days == late


def test_due_soon_window_can_be_given():
    site = SiteBuilder("I")
    site.visit(date(2024, 1, 29), InspectionKind.COMPLETE)
    schedule = schedule_site(site.records(), IEC, date(2025, 1, 1), due_soon_days=30)
    assert schedule.status is DueStatus.DUE_SOON


def _counter_site():
    site = SiteBuilder("II")
    down = site.component(ComponentKind.DOWN_CONDUCTOR, "DC-01")
    counter = site.component(ComponentKind.STRIKE_COUNTER, "SC-01", down)
    first = site.visit(date(2025, 1, 10), InspectionKind.COMPLETE)
    site.reading(first, counter, Quantity.STRIKE_COUNT, 3)
    second = site.visit(date(2025, 7, 1), InspectionKind.VISUAL)
    site.reading(second, counter, Quantity.STRIKE_COUNT, 5)
    return site


def test_counter_rise_calls_for_post_strike_inspection():
    site = _counter_site()
    schedule = schedule_site(site.records(), IEC, date(2025, 7, 10))
    strike = next(i for i in schedule.due_items if i.kind is DueKind.POST_STRIKE)
    assert strike.due == date(2025, 7, 31)  # 30 days after the visit (profile's post_strike_days)
    assert strike.status is DueStatus.DUE_SOON
    assert "SC-01 rose from 3 to 5" in strike.reason
    late = schedule_site(site.records(), IEC, date(2025, 8, 5))
    assert late.due_items[0].kind is DueKind.POST_STRIKE
    assert late.status is DueStatus.OVERDUE and late.overdue_days == 5


def test_post_strike_visit_settles_the_rise():
    site = _counter_site()
    site.visit(date(2025, 7, 20), InspectionKind.POST_STRIKE)
    schedule = schedule_site(site.records(), IEC, date(2025, 8, 5))
    assert not [i for i in schedule.due_items if i.kind is DueKind.POST_STRIKE]


def test_alteration_after_last_complete_calls_for_an_inspection():
    site = SiteBuilder("III", altered_on=date(2025, 3, 1))
    site.visit(date(2024, 6, 1), InspectionKind.COMPLETE)
    schedule = schedule_site(site.records(), IEC, date(2025, 4, 15))
    item = schedule.due_items[0]
    assert item.kind is DueKind.ALTERATION
    assert item.due == date(2025, 3, 31)
    assert item.status is DueStatus.OVERDUE and schedule.overdue_days == 15
