"""A planned round as a table per day, as JSON-ready data, as CSV and as iCalendar (RFC 5545)."""

from __future__ import annotations

import csv
from datetime import UTC, date, datetime, timedelta
from pathlib import Path
from typing import Any

from inspectkit.plan.calendar import WorkCalendar
from inspectkit.plan.planner import PlannedDay, RoundPlan, Visit
from inspectkit.plan.roads import estimate_label
from inspectkit.plan.round import Candidate

#: What the source column says of a road distance.
KNOWN, ESTIMATE = "known", "estimate"

#: Columns of the CSV file, one row per visit.
CSV_COLUMNS = (
    "date",
    "order",
    "site",
    "town",
    "kind",
    "arrive",
    "start",
    "leave",
    "onsite_min",
    "road_km",
    "road_km_source",
    "drive_min",
    "overdue_days",
    "due",
    "latitude",
    "longitude",
    "reason",
    "site_id",
)


def _hhmm(minutes: float) -> str:
    whole = round(minutes)
    return f"{whole // 60}:{whole % 60:02d}"


def _visit_row(day: PlannedDay, visit: Visit) -> dict[str, Any]:
    c = visit.candidate
    return {
        "date": day.day.isoformat(),
        "order": visit.order,
        "site": c.site.name,
        "town": c.site.town,
        "kind": c.kind_label,
        "arrive": visit.arrive.strftime("%H:%M"),
        "start": visit.start.strftime("%H:%M"),
        "leave": visit.leave.strftime("%H:%M"),
        "onsite_min": round(c.onsite_minutes),
        "road_km": round(visit.km, 1),
        "road_km_source": KNOWN if visit.known_road else ESTIMATE,
        "drive_min": round(visit.drive_minutes),
        "overdue_days": c.overdue_days,
        "due": c.due.isoformat(),
        "latitude": c.site.latitude,
        "longitude": c.site.longitude,
        "reason": c.reason_text,
        "site_id": c.site.id,
    }


def _candidate_row(c: Candidate) -> dict[str, Any]:
    return {
        "site": c.site.name,
        "site_id": c.site.id,
        "kind": c.kind_label,
        "onsite_min": round(c.onsite_minutes),
        "overdue_days": c.overdue_days,
        "due": c.due.isoformat(),
        "reason": c.reason_text,
    }


def plan_data(plan: RoundPlan) -> dict[str, Any]:
    """Everything in the plan as plain data, for `--json`."""
    return {
        "from": plan.window.first.isoformat(),
        "to": plan.window.last.isoformat(),
        "depot": {"latitude": plan.depot.lat, "longitude": plan.depot.lon},
        "hours_per_day": plan.settings.hours_per_day,
        "time_zone": plan.settings.zone,
        "road_km_estimate": estimate_label(plan.settings),
        "total_km": round(plan.km, 1),
        "days": [
            {
                "date": d.day.isoformat(),
                "too_long": d.too_long,
                "outside_window": d.outside_window,
                "past_window": d.day > plan.window.last,
                "moved": d.moved,
                "km": round(d.km, 1),
                "home_km": round(d.home_km, 1),
                "home_min": round(d.home_minutes),
                "break": None
                if d.break_start is None or d.break_end is None
                else {"start": f"{d.break_start:%H:%M}", "end": f"{d.break_end:%H:%M}"},
                "back": d.back.strftime("%H:%M"),
                "visits": [_visit_row(d, v) for v in d.visits],
            }
            for d in plan.days
        ],
        "no_position": [_candidate_row(c) for c in plan.no_position],
        "dropped": [_candidate_row(c) for c in plan.dropped],
        "unbookable": [{**_candidate_row(c), "why": why} for c, why in plan.unbookable],
        "waiting": [
            {"site": v.candidate.site.name, "why": w}
            for _, v in plan.visits
            for w in v.candidate.waiting
        ],
        "skipped": [{"site": name, "reason": why} for name, why in plan.skipped],
        "notes": list(plan.notes),
    }


def _days_off(plan: RoundPlan) -> list[str]:
    """Holidays and closed days in the window that fall on a working weekday."""
    calendar = WorkCalendar(plan.settings)
    out = []
    day = plan.window.first
    while day <= plan.window.last:
        why = calendar.closed_why(day)
        if why is not None and day.weekday() in plan.settings.weekday_numbers:
            out.append(f"{day:%a %Y-%m-%d} ({why})")
        day += timedelta(days=1)
    return out


def _heading(plan: RoundPlan) -> list[str]:
    s = plan.settings
    brk = (
        f", a {s.break_minutes:g}-minute break starting by "
        f"{_hhmm(s.day_start.hour * 60 + s.day_start.minute + s.break_by_hours * 60)}"
        if s.break_minutes
        else ""
    )
    lines = [
        f"Round {plan.window.first.isoformat()} to {plan.window.last.isoformat()}: "
        f"{len(plan.visits)} visits on {len(plan.days)} days, {plan.km:.0f} road km",
        f"  {estimate_label(s)} ('est'), or from the table of known roads ('known')",
        f"  days of {s.hours_per_day:g} h from {s.day_start.strftime('%H:%M')}{brk}; "
        f"times in {s.zone}",
    ]
    off = _days_off(plan)
    if off:
        lines.append(f"  not booked: {'; '.join(off)}")
    return lines


def _day_lines(plan: RoundPlan, d: PlannedDay) -> list[str]:
    flags = []
    if d.too_long:
        flags.append("TOO LONG FOR ONE DAY")
    if d.outside_window:
        flags.append("A VISIT MISSES ITS ACCESS WINDOW")
    if d.moved:
        flags.append("changed by hand")
    if d.day > plan.window.last:
        flags.append("past the window")
    note = f"  [{'; '.join(flags)}]" if flags else ""
    width = max(len("back at the depot"), *(len(v.candidate.site.name) for v in d.visits))
    kinds = max(len("kind"), *(len(v.candidate.kind_label) for v in d.visits))
    pad = f"  {'':>2}  {'':<{width}}  {'':<{kinds}}  {'':>7}  "
    lines = [
        "",
        f"{d.day.strftime('%a %Y-%m-%d')}  {d.km:.0f} road km{note}",
        f"  {'#':>2}  {'site':<{width}}  {'kind':<{kinds}}  {'on site':>7}  "
        f"{'road km':<15}  {'drive':>5}  {'arrive':<5}  {'start':<5}  {'leave':<5}",
    ]
    brk = d.break_start
    for v in d.visits:
        if brk is not None and brk < v.start:
            lines.append(_break_line(pad, d))
            brk = None
        c = v.candidate
        source = "known" if v.known_road else "est"
        late = f"  overdue {c.overdue_days} d" if c.overdue_days else ""
        miss = "  OUTSIDE ACCESS WINDOW" if not v.fits else ""
        lines.append(
            f"  {v.order:>2}  {c.site.name:<{width}}  {c.kind_label:<{kinds}}  "
            f"{_hhmm(c.onsite_minutes):>7}  {v.km:>6.1f} km {source:<5}  "
            f"{_hhmm(v.drive_minutes):>5}  {v.arrive:%H:%M}  {v.start:%H:%M}  "
            f"{v.leave:%H:%M}{late}{miss}"
        )
        lines += [f"      why: {r.text}" for r in c.reasons]
        lines += [f"      note: {w}" for w in c.waiting]
    if brk is not None:
        lines.append(_break_line(pad, d))
    lines.append(
        f"  {'':>2}  {'back at the depot':<{width}}  {'':<{kinds}}  {'':>7}  "
        f"{d.home_km:>6.1f} km {'known' if d.home_known else 'est':<5}  "
        f"{_hhmm(d.home_minutes):>5}  {d.back:%H:%M}"
    )
    return lines


def _break_line(pad: str, d: PlannedDay) -> str:
    assert d.break_start is not None and d.break_end is not None
    return f"{pad}{'break':<15}  {'':>5}  {'':<5}  {d.break_start:%H:%M}  {d.break_end:%H:%M}"


def render_table(plan: RoundPlan) -> str:
    """The round as text, a table per day with a running clock, its break and why each visit."""
    lines = _heading(plan)
    if not plan.days:
        lines.append("Nothing with a position is due in this window.")
    for d in plan.days:
        lines += _day_lines(plan, d)
    for title, group in (
        ("No position on record: place these by hand", plan.no_position),
        ("Dropped from this round", plan.dropped),
    ):
        if group:
            lines += ["", f"{title}:"]
            lines += [f"  {c.site.name}: {c.kind_label}, due {c.due.isoformat()}" for c in group]
    if plan.unbookable:
        lines += ["", "No day it can be booked on:"]
        lines += [f"  {c.site.name}: {why}" for c, why in plan.unbookable]
    if plan.skipped:
        lines += ["", "Not judged:"]
        lines += [f"  {name}: {why}" for name, why in plan.skipped]
    if plan.notes:
        lines += ["", "Notes:"]
        lines += [f"  {n}" for n in plan.notes]
    return "\n".join(lines)


def write_csv(plan: RoundPlan, path: Path) -> Path:
    """One row per visit, in day and driving order."""
    with path.open("w", newline="", encoding="utf-8") as out:
        writer = csv.DictWriter(out, fieldnames=CSV_COLUMNS)
        writer.writeheader()
        for day, visit in plan.visits:
            writer.writerow(_visit_row(day, visit))
    return path


def visit_uid(site_id: str, day: date) -> str:
    """Stable per site and day, so a re-planned round updates events rather than doubling them."""
    return f"{site_id}-{day.strftime('%Y%m%d')}@inspectkit"


def break_uid(day: date) -> str:
    """Stable per day, like a visit's."""
    return f"break-{day.strftime('%Y%m%d')}@inspectkit"


def to_ical(plan: RoundPlan, stamp: datetime) -> bytes:
    """An RFC 5545 calendar with one event per visit and one per break.

    Times carry the plan's time zone: a TZID with its VTIMEZONE (RFC 5545 §3.6.5),
    or UTC times when the zone is UTC, so a calendar kept in another zone shows the
    same instants.

    Args:
        plan: the round.
        stamp: DTSTAMP, when the calendar was made (UTC).
    """
    from icalendar import Calendar, Event

    cal = Calendar()
    cal.add("prodid", "-//inspectkit//round plan//EN")
    cal.add("version", "2.0")
    cal.add("calscale", "GREGORIAN")
    for day, visit in plan.visits:
        c = visit.candidate
        event = Event()
        event.add("uid", visit_uid(c.site.id, day.day))
        event.add("dtstamp", stamp)
        event.add("dtstart", _instant(visit.start))
        event.add("dtend", _instant(visit.leave))
        event.add("summary", f"{c.site.name}: {c.kind_label} inspection")
        location = ", ".join(p for p in (c.site.address, c.site.town) if p) or c.site.name
        event.add("location", location)
        event.add(
            "description",
            "\n".join(
                [f"Site: {c.site.name}", f"Kind: {c.kind_label}"]
                + [f"- {r.text}" for r in c.reasons]
                + [f"- {w}" for w in c.waiting]
            ),
        )
        if c.point is not None:
            event.add("geo", (c.point.lat, c.point.lon))
        cal.add_component(event)
    for day in plan.days:
        if day.break_start is None or day.break_end is None:
            continue
        event = Event()
        event.add("uid", break_uid(day.day))
        event.add("dtstamp", stamp)
        event.add("dtstart", _instant(day.break_start))
        event.add("dtend", _instant(day.break_end))
        event.add("summary", "Break")
        event.add("transp", "OPAQUE")
        cal.add_component(event)
    if plan.days:
        # The zone's rules for the years the round spans, not the library's 1970-2038.
        first, last = plan.days[0].day, plan.days[-1].day
        cal.add_missing_timezones(date(first.year - 1, 1, 1), date(last.year + 1, 12, 31))
    return cal.to_ical()


def _instant(moment: datetime) -> datetime:
    """UTC written as UTC (a Z time); any other zone keeps its TZID."""
    key = getattr(moment.tzinfo, "key", "")
    return moment.astimezone(UTC) if key in ("UTC", "Etc/UTC") else moment


def write_ics(plan: RoundPlan, path: Path, stamp: datetime) -> Path:
    path.write_bytes(to_ical(plan, stamp))
    return path
