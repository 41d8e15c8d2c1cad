"""The validator's rules, each on a small site built for it, through `check_site`."""

from __future__ import annotations

from datetime import date

import pytest

from inspectkit.engine.check import check_all, check_site
from inspectkit.engine.standing import worst_first
from inspectkit.model import ComponentKind, Grade, InspectionKind, Quantity, Severity
from inspectkit.profiles import ProfileError, load_profile
from tests.engine_factories import SiteBuilder

IEC = load_profile("iec-62305-3")
BS = load_profile("bs-6651-practice")
TODAY = date(2026, 6, 1)


def _by_rule(site, rule, profile=IEC, today=TODAY):
    return [r for r in check_site(site.records(), profile, today).results if r.rule == rule]


def _one_electrode(*values, start=2024):
    site = SiteBuilder("II")
    joint, electrode = site.joint_with_electrode(1)
    visits = []
    for offset, value in enumerate(values):
        visit = site.visit(date(start + offset, 3, 1))
        site.reading(visit, electrode, Quantity.EARTH_ISOLATED, value)
        visits.append(visit)
    return site, electrode, visits


def test_reading_above_the_limit_fails_with_an_actionable_sentence():
    site, electrode, _ = _one_electrode(14.2)
    (result,) = _by_rule(site, "limit")
    assert result.severity is Severity.FAIL
    assert result.component_tag == "E-01"
    assert result.value == 14.2 and result.limit == 10.0 and result.unit == "Ω"
    # IEC 62305-3 clause 5.4 (as quoted): 10 Ω recommended; our profile applies it per electrode.
    assert "14.2 Ω" in result.message and "10 Ω limit" in result.message
    assert "re-test" in result.message


def test_only_the_latest_reading_decides():
    site, _, _ = _one_electrode(14.2, 6.0)
    assert _by_rule(site, "limit") == []


def test_over_range_fails_a_lower_limit_and_is_inconclusive_above_it():
    site, electrode, visits = _one_electrode(5.0)
    later = site.visit(date(2026, 3, 1))
    site.reading(later, electrode, Quantity.EARTH_ISOLATED, 2000.0, over_range=True)
    (result,) = _by_rule(site, "limit")
    assert result.severity is Severity.FAIL and "> 2 kΩ" in result.message
    low = site.visit(date(2026, 4, 1))
    site.reading(low, electrode, Quantity.EARTH_ISOLATED, 2.0, over_range=True)
    (result,) = _by_rule(site, "limit")
    assert result.severity is Severity.WATCH and "higher range" in result.message


def test_per_electrode_limit_scales_with_the_number_of_electrodes():
    # BS 6651 practice (from memory of the old standard, docs/sources.md "BS 6651"):
    # each electrode ≤ 10 Ω × electrodes.
    site = SiteBuilder("II", profile="bs-6651-practice")
    electrodes = [site.joint_with_electrode(n)[1] for n in (1, 2, 3)]
    visit = site.visit(date(2026, 3, 1))
    for electrode, value in zip(electrodes, [25.0, 29.0, 31.0], strict=True):
        site.reading(visit, electrode, Quantity.EARTH_ISOLATED, value)
    (result,) = _by_rule(site, "limit", BS)
    assert result.component_tag == "E-03" and result.limit == 30.0


def test_continuity_and_bonding_limits():
    site = SiteBuilder("II")
    down = site.component(ComponentKind.DOWN_CONDUCTOR, "DC-01")
    bond = site.component(ComponentKind.BONDING, "B-01")
    visit = site.visit(date(2026, 3, 1))
    site.reading(visit, down, Quantity.CONTINUITY, 0.35)
    site.reading(visit, bond, Quantity.BONDING, 0.4)
    (result,) = _by_rule(site, "limit")
    assert result.component_tag == "DC-01" and result.limit == 0.2  # from memory (profile)


@pytest.mark.parametrize(
    ("values", "against"),
    [((4.0, 5.0, 6.5), "baseline"), ((4.0, 3.0, 4.6), "previous reading")],
)
def test_rise_on_baseline_or_previous_is_watch(values, against):
    site, _, _ = _one_electrode(*values, start=2023)
    (result,) = _by_rule(site, "rise")
    assert result.severity is Severity.WATCH
    assert against in result.message and "50 %" in result.message  # rise_fraction: our default


@pytest.mark.parametrize(
    ("kind", "quantity", "values", "against"),
    [
        # The case: a down conductor's continuity from 79 to 180 mΩ (+128 %).
        (ComponentKind.DOWN_CONDUCTOR, Quantity.CONTINUITY, (0.079, 0.180), "baseline"),
        (ComponentKind.BONDING, Quantity.BONDING, (0.10, 0.11, 0.16), "baseline"),
        (ComponentKind.BONDING, Quantity.BONDING, (0.10, 0.06, 0.095), "previous reading"),
        (ComponentKind.TEST_JOINT, Quantity.EARTH_COMBINED, (2.0, 3.2), "baseline"),
    ],
)
def test_every_quantity_with_a_limit_rises_by_the_profile_s_own_step(
    kind, quantity, values, against
):
    site = SiteBuilder("II")
    part = site.component(kind, "P-01")
    for n, value in enumerate(values):
        site.reading(site.visit(date(2023 + n, 3, 1)), part, quantity, value)
    (result,) = _by_rule(site, "rise")
    # 50 % on baseline or previous: continuity_rise_fraction etc., our default in the profile.
    assert result.severity is Severity.WATCH and result.component_tag == "P-01"
    assert against in result.message and "more than the 50 % allowed" in result.message
    assert result.limit == pytest.approx(values[0 if against == "baseline" else -2] * 1.5)
    assert IEC.limits.rise_step(quantity) == 0.5
    # Within the limit it still passes: the rise is watched, not failed.
    assert _by_rule(site, "limit") == []


def test_a_profile_without_the_new_steps_uses_the_electrode_s():
    limits = IEC.limits.model_copy(
        update={"continuity_rise_fraction": None, "rise_fraction": 2.0}
    )
    assert limits.rise_step(Quantity.CONTINUITY) == 2.0
    assert IEC.limits.model_copy(update={"bonding_rise_fraction": 0.2}).rise_step(
        Quantity.BONDING
    ) == 0.2


def test_a_doubtful_latest_reading_says_nothing_of_a_rise():
    site = SiteBuilder("II")
    down = site.component(ComponentKind.DOWN_CONDUCTOR, "DC-01")
    site.reading(site.visit(date(2023, 3, 1)), down, Quantity.CONTINUITY, 0.05)
    site.reading(site.visit(date(2024, 3, 1)), down, Quantity.CONTINUITY, 0.15, unreliable=True)
    assert _by_rule(site, "rise") == []


def test_small_rise_is_no_result():
    site, _, _ = _one_electrode(4.0, 5.0, 5.9, start=2023)
    assert _by_rule(site, "rise") == []


def test_lapsed_instrument_readings_are_one_retake_per_instrument_and_visit():
    # A reading taken with an instrument past its calibration date proves nothing
    # (common practice): neither a pass nor a fail, to be taken again.
    site = SiteBuilder("II")
    electrodes = [site.joint_with_electrode(n)[1] for n in (1, 2, 3)]
    lapsed = site.instrument(calibration_due=date(2025, 12, 31))
    visit = site.visit(date(2026, 3, 1))
    for electrode, value in zip(electrodes, (3.0, 41.0, 2.5), strict=True):
        site.reading(visit, electrode, Quantity.EARTH_ISOLATED, value, instrument_id=lapsed.id)
    (result,) = _by_rule(site, "calibration")
    assert result.severity is Severity.RETAKE
    assert result.listed == ("E-01", "E-02", "E-03") and len(result.reading_ids) == 3
    assert result.message.startswith("3 readings of 2026-03-01 (E-01, E-02, E-03) were taken")
    assert "lapsed on 2025-12-31" in result.message and "retake them" in result.message
    # The 41 Ω reading is above the 10 Ω limit yet proves nothing: no fail for it.
    assert _by_rule(site, "limit") == []
    check = check_site(site.records(), IEC, TODAY)
    assert Severity.FAIL not in {r.severity for r in check.results}


def test_lapsed_instrument_on_two_visits_gives_two_results():
    site, electrode, _ = _one_electrode(4.0)
    joint = next(c for c in site.components if c.tag == "TJ-01")
    lapsed = site.instrument(calibration_due=date(2025, 12, 31))
    site.reading(
        site.visit(date(2026, 1, 10)), joint, Quantity.EARTH_COMBINED, 0.8, instrument_id=lapsed.id
    )
    site.reading(
        site.visit(date(2026, 3, 1)),
        electrode,
        Quantity.EARTH_ISOLATED,
        3.0,
        instrument_id=lapsed.id,
    )
    results = sorted(_by_rule(site, "calibration"), key=lambda r: r.message)
    assert [r.listed for r in results] == [("TJ-01",), ("E-01",)]
    assert results[0].message.startswith("1 reading of 2026-01-10 (TJ-01) was taken")
    assert "it proves nothing; retake it" in results[0].message


def test_calibration_holds_on_its_due_date():
    site, electrode, _ = _one_electrode(4.0)
    due = site.instrument(calibration_due=date(2026, 3, 1))
    site.reading(
        site.visit(date(2026, 3, 1)), electrode, Quantity.EARTH_ISOLATED, 3.0, instrument_id=due.id
    )
    assert _by_rule(site, "calibration") == []


def test_retake_is_worse_than_incomplete_and_milder_than_fail():
    ranks = [s.rank for s in (Severity.INCOMPLETE, Severity.RETAKE, Severity.FAIL)]
    assert ranks == sorted(ranks) and len(set(ranks)) == 3


def test_every_severity_has_one_word_and_a_meaning():
    from inspectkit.engine.results import SEVERITY_WORDS

    assert set(SEVERITY_WORDS) == set(Severity)
    words = [w.word for w in SEVERITY_WORDS.values()]
    assert len(set(words)) == len(words)
    assert all(w.meaning.endswith(".") for w in SEVERITY_WORDS.values())


def test_doubtful_latest_reading_is_watch():
    site, electrode, _ = _one_electrode(4.0)
    site.reading(
        site.visit(date(2026, 3, 1)), electrode, Quantity.EARTH_ISOLATED, 3.0, unreliable=True
    )
    (result,) = _by_rule(site, "unreliable")
    assert result.severity is Severity.WATCH


def _counter(*values, kinds=None):
    site = SiteBuilder("II")
    down = site.component(ComponentKind.DOWN_CONDUCTOR, "DC-01")
    counter = site.component(ComponentKind.STRIKE_COUNTER, "SC-01", down)
    for n, value in enumerate(values):
        kind = (kinds or {}).get(n, InspectionKind.VISUAL)
        site.reading(
            site.visit(date(2026, 1 + 2 * n, 10), kind), counter, Quantity.STRIKE_COUNT, value
        )
    return site


def test_counter_rise_owes_a_post_strike_inspection():
    site = _counter(2, 3)
    (soon,) = _by_rule(site, "strike-counter", today=date(2026, 3, 20))
    assert soon.severity is Severity.WATCH and soon.due == date(2026, 4, 9)
    assert "SC-01 rose from 2 to 3" in soon.message
    (late,) = _by_rule(site, "strike-counter", today=date(2026, 5, 1))
    assert late.severity is Severity.OVERDUE and "22 days overdue" in late.message


def test_counter_going_back_is_watch():
    site = _counter(7, 0)
    (result,) = _by_rule(site, "strike-counter")
    assert result.severity is Severity.WATCH and "reset or replaced" in result.message


def test_incomplete_complete_inspection_lists_what_is_missing():
    site = SiteBuilder("II")
    pairs = [site.joint_with_electrode(n) for n in (1, 2, 3)]
    visit = site.visit(date(2026, 3, 1))
    site.reading(visit, pairs[0][1], Quantity.EARTH_ISOLATED, 4.0)
    site.reading(visit, pairs[1][0], Quantity.EARTH_ISOLATED, 4.0)  # on the joint: accepted
    down_1 = next(c for c in site.components if c.tag == "DC-01")
    site.reading(visit, down_1, Quantity.CONTINUITY, 0.05)
    (result,) = _by_rule(site, "incomplete")
    assert result.severity is Severity.INCOMPLETE
    assert "isolated earth reading for E-03" in result.message
    assert "continuity reading for DC-02, DC-03" in result.message


def test_earlier_visits_readings_do_not_complete_the_latest_one():
    # IEC 62305-3 Annex E: a complete inspection includes the tests, so each complete
    # visit must hold its own readings; ours judges the latest counted one.
    site = SiteBuilder("II")
    (_, first), (joint, second) = (site.joint_with_electrode(n) for n in (1, 2))
    downs = [c for c in site.components if c.kind is ComponentKind.DOWN_CONDUCTOR]
    earlier, latest = site.visit(date(2025, 3, 1)), site.visit(date(2026, 3, 1))
    for electrode in (first, second):
        site.reading(earlier, electrode, Quantity.EARTH_ISOLATED, 4.0)
    for down in downs:
        site.reading(earlier, down, Quantity.CONTINUITY, 0.05)
    site.reading(latest, second, Quantity.EARTH_ISOLATED, 4.0)
    site.reading(latest, joint, Quantity.CONTINUITY, 0.05)  # at the conductor's test joint
    (result,) = _by_rule(site, "incomplete")
    assert "of 2026-03-01" in result.message
    assert "isolated earth reading for E-01;" in result.message
    assert "continuity reading for DC-01:" in result.message


def test_draft_complete_inspection_is_judged_too():
    site = SiteBuilder("II")
    site.joint_with_electrode(1, down=False)
    site.visit(date(2026, 3, 1), signed=False)
    (result,) = _by_rule(site, "incomplete")
    assert "draft" in result.message and "before signing" in result.message


def test_retired_components_are_not_required():
    site = SiteBuilder("II")
    joint, electrode = site.joint_with_electrode(1, down=False)
    site.component(ComponentKind.TEST_JOINT, "TJ-09", retired_on=date(2025, 1, 1))
    site.reading(site.visit(date(2026, 3, 1)), electrode, Quantity.EARTH_ISOLATED, 4.0)
    assert _by_rule(site, "incomplete") == []


def test_open_defects_are_carried_forward_with_their_age():
    site = SiteBuilder("II")
    down = site.component(ComponentKind.DOWN_CONDUCTOR, "DC-01")
    first = site.visit(date(2025, 6, 1), InspectionKind.VISUAL)
    site.finding(first, down, Grade.DEFECT, "fixing missing", due_by=date(2025, 9, 1))
    site.finding(first, None, Grade.NEEDS_ATTENTION, "label faded")
    site.finding(first, down, Grade.SOUND, "")
    fixed = site.finding(first, down, Grade.DEFECT, "clamp loose")
    later = site.visit(date(2025, 10, 1), InspectionKind.VISUAL)
    site.findings[-1] = fixed.model_copy(update={"resolved_by": later.id})
    results = _by_rule(site, "carried-defect")
    assert [r.severity for r in results] == [Severity.OVERDUE, Severity.WATCH]
    assert "open since 2025-06-01 (365 days)" in results[0].message
    assert "the remedy was due by 2025-09-01" in results[0].message
    assert results[1].component_tag is None


def test_a_defect_graded_today_fails_today_with_its_remedy_date_as_advice():
    site = SiteBuilder("II")
    electrode = site.joint_with_electrode(1)[1]
    visit = site.visit(TODAY)
    site.finding(
        visit, electrode, Grade.DEFECT, "open circuit at the clamp", due_by=date(2026, 7, 1)
    )
    site.finding(
        visit, site.components[0], Grade.NEEDS_ATTENTION, "label faded", due_by=date(2026, 7, 1)
    )
    defect, attention = _by_rule(site, "carried-defect")
    assert defect.severity is Severity.FAIL and defect.due == date(2026, 7, 1)
    assert "found 2026-06-01; remedy advised by 2026-07-01" in defect.message
    assert attention.severity is Severity.WATCH
    # A month on it still fails (not yet overdue); after its date, carried, it is overdue.
    (still,) = [
        r
        for r in _by_rule(site, "carried-defect", today=date(2026, 7, 1))
        if r.component_tag == "E-01"
    ]
    assert still.severity is Severity.FAIL and "(30 days)" in still.message
    late = _by_rule(site, "carried-defect", today=date(2026, 7, 2))
    assert {r.severity for r in late} == {Severity.OVERDUE}


def test_one_day_open_is_singular():
    site = SiteBuilder("II")
    visit = site.visit(date(2026, 5, 31), InspectionKind.VISUAL)
    site.finding(visit, None, Grade.DEFECT, "bond broken")
    (result,) = _by_rule(site, "carried-defect")
    assert "(1 day)" in result.message


def test_resolution_after_today_is_not_yet_known():
    site = SiteBuilder("II")
    first = site.visit(date(2025, 6, 1), InspectionKind.VISUAL)
    finding = site.finding(first, None, Grade.DEFECT, "bond broken")
    later = site.visit(date(2026, 9, 1), InspectionKind.VISUAL)
    site.findings[-1] = finding.model_copy(update={"resolved_by": later.id})
    assert len(_by_rule(site, "carried-defect")) == 1
    assert _by_rule(site, "carried-defect", today=date(2026, 10, 1)) == []


def test_overdue_site_and_drifting_electrode_through_check_site():
    site = SiteBuilder("III")
    _, electrode = site.joint_with_electrode(1)
    for n, value in enumerate([6.0, 6.8, 7.6, 8.4]):
        visit = site.visit(date(2020 + n, 5, 1))
        site.reading(visit, electrode, Quantity.EARTH_ISOLATED, value)
        site.reading(visit, site.components[0], Quantity.CONTINUITY, 0.05)
    site.grade_all(visit)
    check = check_site(site.records(), IEC, TODAY)
    assert check.worst is Severity.OVERDUE and check.needs_action
    (schedule,) = [r for r in check.results if r.rule == "schedule"]
    assert "visual inspection is" in schedule.message and "days overdue" in schedule.message
    (trend,) = [r for r in check.results if r.rule == "trend"]
    assert trend.severity is Severity.WATCH and trend.due is not None
    assert trend.value == pytest.approx(8.4) and trend.limit == 10.0 and trend.unit == "Ω"
    assert check.results[0].severity is Severity.OVERDUE
    assert check.summary.startswith("1 overdue, 1 watch; next: visual inspection")


def test_site_with_no_inspections_is_due_now_and_says_so():
    site = SiteBuilder("II")
    site.joint_with_electrode(1)
    check = check_site(site.records(), IEC, TODAY)
    assert [r.rule for r in check.results] == ["schedule", "schedule"]
    assert all("no " in r.message and "due today" in r.message for r in check.results)
    assert check.worst is Severity.WATCH


def test_today_before_the_first_inspection_judges_nothing_recorded_later():
    site, _, _ = _one_electrode(40.0, start=2026)
    check = check_site(site.records(), IEC, date(2025, 1, 1))
    assert [r.rule for r in check.results] == ["schedule", "schedule"]
    assert check.trends == ()


def test_readings_on_the_same_day_the_later_one_decides():
    site = SiteBuilder("II")
    _, electrode = site.joint_with_electrode(1, down=False)
    visit = site.visit(date(2026, 3, 1))
    site.reading(visit, electrode, Quantity.EARTH_ISOLATED, 14.0, hour=9)
    site.reading(
        visit, electrode, Quantity.EARTH_ISOLATED, 4.0, hour=11
    )  # after remaking the joint
    assert _by_rule(site, "limit") == []


def test_clean_site_is_ok():
    site, _, (visit,) = _one_electrode(4.0, start=2026)
    site.components = [c for c in site.components if c.kind is not ComponentKind.DOWN_CONDUCTOR]
    site.grade_all(visit)
    check = check_site(site.records(), IEC, date(2026, 3, 2))
    assert check.results == () and check.worst is Severity.OK
    assert check.summary.startswith("all clear")


def test_check_all_refuses_an_unknown_profile_and_orders_worst_first():
    bad = SiteBuilder("II", profile="no-such")
    with pytest.raises(ProfileError, match="no-such"):
        list(check_all([bad.records()], {"iec-62305-3": IEC}, TODAY))
    clean, _, _ = _one_electrode(4.0, start=2026)
    failing, _, _ = _one_electrode(40.0, start=2026)
    checks = worst_first(
        check_all([clean.records(), failing.records()], {"iec-62305-3": IEC}, date(2026, 3, 2))
    )
    assert checks[0].worst is Severity.FAIL


def test_a_repeat_defect_closes_the_earlier_and_carries_the_faults_age():
    site = SiteBuilder("II")
    terminal = site.component(ComponentKind.AIR_TERMINAL, "AT-05")
    first = site.visit(date(2024, 1, 27), InspectionKind.COMPLETE)
    old = site.finding(first, terminal, Grade.DEFECT, "bent over", due_by=date(2024, 3, 27))
    later = site.visit(date(2026, 5, 1), InspectionKind.VISUAL)
    site.findings[-1] = old.model_copy(update={"resolved_by": later.id})
    new = site.finding(later, terminal, Grade.DEFECT, "still bent over", due_by=date(2026, 7, 1))
    site.findings[-1] = new.model_copy(update={"same_as_id": old.id})
    (result,) = _by_rule(site, "carried-defect")  # one fault, listed once
    assert result.severity is Severity.FAIL
    assert "open since 2024-01-27 (856 days), still present on 2026-05-01" in result.message
