"""Return visits (re-checks after the remedy is due, what was not inspected) and moving a visit."""

from __future__ import annotations

import csv
from datetime import UTC, date, datetime, timedelta
from pathlib import Path
from typing import Any

import pytest
from engine_factories import SiteBuilder
from hypothesis import given, settings
from hypothesis import strategies as st
from icalendar import Calendar
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import ComponentKind, Grade, InspectionKind
from inspectkit.plan.export import render_table, to_ical, visit_uid, write_csv
from inspectkit.plan.geo import Point
from inspectkit.plan.planner import RoundPlan, Window, make_candidates, plan_round, save_depot
from inspectkit.plan.settings import PlanSettings, load_plan_settings, with_overrides
from inspectkit.profiles import Profile, load_profile
from inspectkit.store import Store

DEPOT = Point(52.80, -1.42)
FIRST = date(2027, 1, 4)  # a Monday
WINDOW = Window(FIRST, 30)


@pytest.fixture(scope="module")
def iec() -> Profile:
    return load_profile("iec-62305-3")


def _settings(**values: Any) -> PlanSettings:
    return with_overrides(load_plan_settings(), time_zone="Europe/London", **values)


def _site(name: str, last: date, lat: float = 52.85, lon: float = -1.40, **kw: Any) -> SiteBuilder:
    """A level III site: visual every 24 months (IEC 62305-3 Table E.2, as quoted)."""
    b = SiteBuilder("III", name=name, latitude=lat, longitude=lon, **kw)
    b.joint_with_electrode(1)
    b.component(ComponentKind.AIR_TERMINAL, "AT-01")
    b.visit(last, InspectionKind.COMPLETE)
    return b


def _plan(iec: Profile, sites: list[SiteBuilder], **kw: Any) -> RoundPlan:
    plan_settings = kw.pop("plan_settings", _settings())
    found = make_candidates([(b.records(), iec) for b in sites], WINDOW, plan_settings)
    return plan_round(found, WINDOW, DEPOT, plan_settings, **kw)


def test_a_recheck_is_booked_on_or_after_the_remedy_date(iec: Profile) -> None:
    b = _site("Repaired", date(2026, 6, 1))  # nothing else due until 2028
    b.finding(
        b.inspections[0],
        None,
        Grade.DEFECT,
        "bond missing",
        remedial_action="fit bond",
        due_by=date(2027, 1, 20),
    )
    plan = _plan(iec, [b])
    ((day, visit),) = plan.visits
    assert visit.candidate.kind_label == "re-check"
    assert day.day >= date(2027, 1, 20)
    assert day.day == date(2027, 1, 20)  # a Wednesday, the first day it may be done
    assert "re-check on or after 2027-01-20 (remedy due): fit bond" in render_table(plan)


@given(st.lists(st.integers(0, 25), min_size=1, max_size=8))
@settings(max_examples=25, deadline=None)
def test_every_recheck_comes_after_its_remedy_date(offsets: list[int]) -> None:
    iec = load_profile("iec-62305-3")
    sites = []
    for i, k in enumerate(offsets):
        b = _site(f"R{i}", date(2026, 6, 1), lat=52.8 + i / 50, lon=-1.4 - i / 50)
        b.finding(
            b.inspections[0], None, Grade.DEFECT, f"defect {i}", due_by=FIRST + timedelta(days=k)
        )
        sites.append(b)
    plan = _plan(iec, sites)
    assert len(plan.visits) + len(plan.unbookable) == len(offsets)
    for day, visit in plan.visits:
        k = int(visit.candidate.site.name[1:])
        assert day.day >= FIRST + timedelta(days=offsets[k])


def test_a_recheck_due_after_the_next_inspection_waits_and_says_why(iec: Profile) -> None:
    b = _site("Busy", date(2023, 1, 14))  # visual due 2025-01-14 ... overdue now
    b.visit(date(2025, 1, 15), InspectionKind.VISUAL)  # next visual due 2027-01-15
    b.finding(
        b.inspections[-1],
        None,
        Grade.DEFECT,
        "clamp loose",
        remedial_action="tighten clamp",
        due_by=date(2027, 1, 25),
    )
    plan = _plan(iec, [b])
    ((day, visit),) = plan.visits
    assert visit.candidate.rechecks == ()
    due = visit.candidate.due  # the visual inspection's, from the schedule
    assert date(2027, 1, 13) <= due <= date(2027, 1, 15)
    assert day.day <= due
    (why,) = visit.candidate.waiting
    assert "tighten clamp" in why and "2027-01-25" in why and due.isoformat() in why
    assert f"note: {why}" in render_table(plan)


def test_components_not_inspected_get_a_short_return_visit(iec: Profile) -> None:
    plan_settings = _settings()
    b = _site("Missed roof", date(2026, 10, 1))
    b.inspections[-1] = b.inspections[-1].model_copy(
        update={"not_inspected": "east roof: no access, ladder locked"}
    )
    done = _site("Seen later", date(2026, 9, 1), lat=52.7)
    done.inspections[-1] = done.inspections[-1].model_copy(update={"not_inspected": "AT-01"})
    done.visit(date(2026, 11, 1), InspectionKind.VISUAL)  # a later visit looked again
    plan = _plan(iec, [b, done], plan_settings=plan_settings)
    ((_, visit),) = plan.visits
    c = visit.candidate
    assert c.site.name == "Missed roof"
    assert c.kind_label == "return visit"
    assert c.onsite_minutes == plan_settings.setup_minutes + plan_settings.return_minutes
    assert "return: not inspected on 2026-10-01: east roof: no access, ladder locked" in (
        c.reason_text
    )


# ------------------------------------------------------------------ moving a visit


def _four(iec: Profile) -> list[SiteBuilder]:
    return [_site(f"Hall {i}", date(2024, 1, 10), lat=52.8 + i / 20, lon=-1.3) for i in range(4)]


def test_moving_a_visit_retimes_both_days(iec: Profile, tmp_path: Path) -> None:
    plan_settings = _settings(hours_per_day=2)
    sites = _four(iec)
    before = _plan(iec, sites, plan_settings=plan_settings)
    assert len(before.days) >= 2
    source, target = before.days[0], before.days[1]
    moving = source.visits[-1].candidate.site
    after = _plan(iec, sites, plan_settings=plan_settings, moved={moving.id: target.day})
    days = {d.day: d for d in after.days}
    names = [v.candidate.site.name for v in days[target.day].visits]
    assert moving.name in names
    assert days[target.day].moved
    left = days.get(source.day)
    assert left is None or moving.name not in [v.candidate.site.name for v in left.visits]
    assert len(after.visits) == len(before.visits)
    for d in after.days:
        clock = datetime.combine(d.day, plan_settings.day_start, tzinfo=d.back.tzinfo)
        for v in d.visits:
            # Each visit starts after the drive from the stop before (whole minutes).
            assert abs((v.arrive - clock).total_seconds() / 60 - v.drive_minutes) <= 1
            clock = v.leave
    rows = list(csv.DictReader(write_csv(after, tmp_path / "r.csv").open(encoding="utf-8")))
    assert target.day.isoformat() in [r["date"] for r in rows if r["site"] == moving.name]
    events = {
        str(e["UID"]): e
        for e in Calendar.from_ical(to_ical(after, datetime.now(UTC))).walk("VEVENT")
    }
    moved_visit = next(v for v in days[target.day].visits if v.candidate.site.id == moving.id)
    event = events[visit_uid(moving.id, target.day)]
    assert event.decoded("DTSTART") == moved_visit.start


@pytest.mark.parametrize(
    ("target", "words"),
    [
        # Monday 31 May 2027 is England's Spring Bank Holiday (holidays library, GB/ENG).
        (date(2027, 5, 31), "Spring Bank Holiday"),
        (date(2027, 1, 16), "Saturday"),
        (date(2026, 12, 30), "before the round's first day"),
        (date(2027, 1, 12), "before the remedy it re-checks is due, 2027-01-14"),
    ],
)
def test_a_move_to_a_day_it_cannot_be_made_is_refused_with_a_note(
    iec: Profile, target: date, words: str
) -> None:
    b = _site("Hall", date(2026, 6, 1))
    b.finding(b.inspections[0], None, Grade.DEFECT, "bond missing", due_by=date(2027, 1, 14))
    plan = _plan(iec, [b], moved={b.site.id: target})
    assert [d.day for d in plan.days] == [date(2027, 1, 14)]
    assert not plan.days[0].moved
    assert any(words in n for n in plan.notes)


def test_plan_command_moves_a_visit(tmp_path: Path, iec: Profile) -> None:
    db = tmp_path / "round.sqlite"
    with Store.open(db) as store:
        for b in _four(iec):
            r = b.records()
            store.save_all([r.site, *r.components, *r.inspections])
        save_depot(store, DEPOT)
    runner = CliRunner()
    ics = tmp_path / "round.ics"
    result = runner.invoke(
        app,
        [
            "plan",
            "--db",
            str(db),
            "--from",
            "2027-01-04",
            "--move",
            "Hall 2=2027-01-13",
            "--ics",
            str(ics),
        ],
    )
    assert result.exit_code == 0, result.output
    assert "Wed 2027-01-13" in result.output and "changed by hand" in result.output
    uids = [str(e["UID"]) for e in Calendar.from_ical(ics.read_bytes()).walk("VEVENT")]
    assert any(u.endswith("-20270113@inspectkit") and not u.startswith("break") for u in uids)
    bad = runner.invoke(app, ["plan", "--db", str(db), "--move", "Hall 2 on Friday"])
    assert bad.exit_code == 2 and "--move" in bad.output


def test_moving_a_site_that_is_on_no_day_says_so(iec: Profile) -> None:
    placed = _site("Hall", date(2024, 1, 10))
    dropped = _site("Dropped", date(2024, 1, 10), lat=52.9)
    plan = _plan(
        iec,
        [placed, dropped],
        dropped=[dropped.site.id],
        moved={dropped.site.id: date(2027, 1, 12)},
    )
    assert [c.site.name for c in plan.dropped] == ["Dropped"]
    assert "Dropped is on no day of this round; nothing moved" in plan.notes
    assert all(not d.moved for d in plan.days)
