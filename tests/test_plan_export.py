"""The round written out: table, CSV, iCalendar parsed back, and the `plan` command."""

from __future__ import annotations

import csv
import json
from datetime import UTC, date, datetime, timedelta
from pathlib import Path
from zoneinfo import ZoneInfo

import pytest
from engine_factories import SiteBuilder
from icalendar import Calendar
from typer.testing import CliRunner, Result

from inspectkit.cli import app
from inspectkit.model import ComponentKind, InspectionKind
from inspectkit.plan.export import CSV_COLUMNS, render_table, to_ical, visit_uid, write_csv
from inspectkit.plan.geo import Point
from inspectkit.plan.planner import RoundPlan, Window, make_plan
from inspectkit.plan.settings import load_plan_settings, with_overrides
from inspectkit.store import Store

runner = CliRunner()
FIRST = date(2026, 3, 2)
STAMP = datetime(2026, 3, 1, 12, tzinfo=UTC)
FIRST_2027 = date(2027, 1, 4)


def fill_round_db(store: Store) -> None:
    """Five sites around 52 N 1 W due in March 2026, and one with no position."""
    for i in range(6):
        where = {} if i == 5 else {"latitude": 52 + i / 10, "longitude": -1 - i / 10}
        b = SiteBuilder("III", name=f"Hall {i}", town="Emberton", address=f"{i} Mill Lane", **where)
        for n in range(1, 3 + i):
            b.joint_with_electrode(n)
        b.component(ComponentKind.SPD, "SPD-1")
        b.visit(date(2022 + i % 2, 2, 1), InspectionKind.COMPLETE)
        r = b.records()
        store.save_all([r.site, *r.components, *r.inspections])


@pytest.fixture
def plan(store: Store) -> RoundPlan:
    fill_round_db(store)
    return make_plan(store, Window(FIRST, 30), load_plan_settings(), Point(52.0, -1.0))


def test_ics_parses_back_with_one_event_per_visit(plan: RoundPlan) -> None:
    # RFC 5545: one VEVENT per visit, UID and DTSTAMP present, DTEND after DTSTART.
    cal = Calendar.from_ical(to_ical(plan, STAMP))
    events = [e for e in cal.walk("VEVENT") if str(e["SUMMARY"]) != "Break"]
    assert len(events) == len(plan.visits) == 5
    by_uid = {str(e["UID"]): e for e in events}
    for day, visit in plan.visits:
        event = by_uid[visit_uid(visit.candidate.site.id, day.day)]
        assert event.decoded("DTSTART") == visit.start
        assert event.decoded("DTEND") == visit.leave
        assert event.decoded("DTEND") > event.decoded("DTSTART")
        assert visit.candidate.site.name in str(event["SUMMARY"])
        assert "Mill Lane" in str(event["LOCATION"])
        assert visit.candidate.reasons[0].text in str(event["DESCRIPTION"])
        geo = event["GEO"]
        assert (geo.latitude, geo.longitude) == pytest.approx(visit.candidate.point)
    assert str(cal["VERSION"]) == "2.0"


def test_first_visit_of_a_day_starts_at_the_day_start_plus_the_drive(plan: RoundPlan) -> None:
    for day in plan.days:
        first = day.visits[0]
        expected = datetime.combine(
            day.day, plan.settings.day_start, tzinfo=ZoneInfo(plan.settings.zone)
        ) + timedelta(minutes=round(first.drive_minutes))
        assert first.arrive == expected


def test_uid_is_stable_across_replanning(store: Store, plan: RoundPlan) -> None:
    again = make_plan(store, Window(FIRST, 30), load_plan_settings(), Point(52.0, -1.0))
    uids = lambda p: sorted(visit_uid(v.candidate.site.id, d.day) for d, v in p.visits)  # noqa: E731
    assert uids(again) == uids(plan)


def test_csv_has_a_row_per_visit(plan: RoundPlan, tmp_path: Path) -> None:
    path = write_csv(plan, tmp_path / "round.csv")
    with path.open(encoding="utf-8") as f:
        rows = list(csv.DictReader(f))
    assert tuple(rows[0]) == CSV_COLUMNS
    assert [(r["date"], r["site"]) for r in rows] == [
        (d.day.isoformat(), v.candidate.site.name) for d, v in plan.visits
    ]


def test_table_shows_each_day_and_the_site_without_position(plan: RoundPlan) -> None:
    text = render_table(plan)
    for day in plan.days:
        assert day.day.isoformat() in text
    assert "No position on record" in text
    assert "Hall 5" in text
    assert "back at the depot" in text


@pytest.fixture
def demo_db(db_path: Path) -> Path:
    with Store.open(db_path) as store:
        fill_round_db(store)
    return db_path


def _plan(db: Path, *args: str) -> Result:
    return runner.invoke(app, ["plan", "--db", str(db), *args])


def test_plan_command_writes_ics_and_json(demo_db: Path, tmp_path: Path) -> None:
    ics = tmp_path / "round.ics"
    result = _plan(
        demo_db,
        "--from",
        "2026-03-02",
        "--days",
        "30",
        "--start",
        "52.0,-1.0",
        "--ics",
        str(ics),
        "--json",
    )
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    visits = [v for d in data["days"] for v in d["visits"]]
    assert len(visits) == 5
    assert [c["site"] for c in data["no_position"]] == ["Hall 5"]
    events = Calendar.from_ical(ics.read_bytes()).walk("VEVENT")
    assert len([e for e in events if str(e["SUMMARY"]) != "Break"]) == 5


def test_plan_command_saved_depot_drop_pin_and_drafts(demo_db: Path) -> None:
    saved = _plan(demo_db, "--save-depot", "52.0,-1.0")
    assert saved.exit_code == 0, saved.output
    result = _plan(
        demo_db,
        "--from",
        "2026-03-02",
        "--drop",
        "Hall 1",
        "--pin",
        "Hall 4",
        "--create-drafts",
        "--json",
    )
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert data["depot"] == {"latitude": 52.0, "longitude": -1.0}
    assert [c["site"] for c in data["dropped"]] == ["Hall 1"]
    assert "Hall 4" in [v["site"] for v in data["days"][0]["visits"]]
    assert data["drafts_created"] == 4


@pytest.mark.parametrize(
    ("args", "words"),
    [
        (["--from", "2 March"], "--from"),
        (["--days", "0"], "--days"),
        (["--start", "52"], "--start"),
        (["--start", "52,-1", "--hours-per-day", "25"], "--hours-per-day"),
        (["--start", "52,-1", "--speed", "0"], "--speed"),
        (["--start", "52,-1", "--drop", "Nowhere"], "--drop"),
        ([], "--save-depot"),
    ],
)
def test_plan_command_bad_input_exits_2_and_says_why(
    demo_db: Path, args: list[str], words: str
) -> None:
    result = _plan(demo_db, *args)
    assert result.exit_code == 2
    assert words in result.output


def _zoned_plan(store: Store, zone: str, first: date) -> RoundPlan:
    fill_round_db(store)
    settings = with_overrides(load_plan_settings(), time_zone=zone)
    return make_plan(store, Window(first, 30), settings, Point(52.0, -1.0))


@pytest.mark.parametrize(
    ("zone", "first", "utc_offset_hours"),
    [
        # Offsets from the IANA time zone database: London keeps GMT (UTC+0) in
        # January and BST (UTC+1) in July; New York keeps EST (UTC-5) in January.
        ("Europe/London", date(2027, 1, 4), 0),
        ("Europe/London", date(2027, 7, 5), 1),
        ("America/New_York", date(2027, 1, 4), -5),
    ],
)
def test_ics_events_carry_their_zone_and_the_right_instants(
    store: Store, tmp_path: Path, zone: str, first: date, utc_offset_hours: int
) -> None:
    plan = _zoned_plan(store, zone, first)
    rows = list(csv.DictReader(write_csv(plan, tmp_path / "r.csv").open(encoding="utf-8")))
    cal = Calendar.from_ical(to_ical(plan, STAMP))
    assert [str(tz["TZID"]) for tz in cal.walk("VTIMEZONE")] == [zone]
    # The VTIMEZONE's own rules, as a calendar without a zone database reads them.
    written = cal.walk("VTIMEZONE")[0].to_tz()
    events = {str(e["UID"]): e for e in cal.walk("VEVENT")}
    for (day, visit), row in zip(plan.visits, rows, strict=True):
        event = events[visit_uid(visit.candidate.site.id, day.day)]
        assert event["DTSTART"].params["TZID"] == zone
        # The wall-clock time in the CSV, less the zone's offset, is the instant.
        wall = datetime.combine(day.day, datetime.strptime(row["start"], "%H:%M").time())
        expected = (wall - timedelta(hours=utc_offset_hours)).replace(tzinfo=UTC)
        assert event.decoded("DTSTART").astimezone(UTC) == expected
        assert wall.replace(tzinfo=written).utcoffset() == timedelta(hours=utc_offset_hours)
    breaks = [e for e in events.values() if str(e["SUMMARY"]) == "Break"]
    assert len(breaks) == sum(d.break_start is not None for d in plan.days)


def test_the_same_round_in_two_zones_is_five_hours_apart(store: Store) -> None:
    # London GMT (UTC+0) and New York EST (UTC-5) in January (IANA tz database).
    london = Calendar.from_ical(to_ical(_zoned_plan(store, "Europe/London", FIRST_2027), STAMP))
    again = Store.memory()
    york = Calendar.from_ical(to_ical(_zoned_plan(again, "America/New_York", FIRST_2027), STAMP))
    starts = lambda cal: sorted(  # noqa: E731
        (str(e["SUMMARY"]), e.decoded("DTSTART")) for e in cal.walk("VEVENT")
    )
    for (a_name, a), (b_name, b) in zip(starts(london), starts(york), strict=True):
        assert a_name == b_name
        assert a.replace(tzinfo=None) == b.replace(tzinfo=None)  # same clock times
        assert b - a == timedelta(hours=5)


def test_ics_in_utc_writes_utc_times(store: Store) -> None:
    plan = _zoned_plan(store, "UTC", FIRST_2027)
    text = to_ical(plan, STAMP).decode()
    assert "BEGIN:VTIMEZONE" not in text
    assert "TZID" not in text
    for line in (ln for ln in text.splitlines() if ln.startswith("DTSTART")):
        assert line.endswith("Z")
