"""A planned round as a table per day, as JSON-ready data, as CSV and as iCalendar (RFC 5545)."""

from __future__ import annotations

import csv
from datetime import date, datetime
from pathlib import Path
from typing import Any

from inspectkit.plan.planner import PlannedDay, RoundPlan, Visit
from inspectkit.plan.round import Candidate

#: Columns of the CSV file, one row per visit.
CSV_COLUMNS = (
    "date",
    "order",
    "site",
    "town",
    "kind",
    "arrive",
    "leave",
    "onsite_min",
    "drive_km",
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
        "leave": visit.leave.strftime("%H:%M"),
        "onsite_min": round(c.onsite_minutes),
        "drive_km": round(visit.km, 1),
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
        "total_km": round(plan.km, 1),
        "days": [
            {
                "date": d.day.isoformat(),
                "too_long": d.too_long,
                "past_window": d.day > plan.window.last,
                "km": round(d.km, 1),
                "home_km": round(d.home_km, 1),
                "home_min": round(d.home_minutes),
                "back": d.back.strftime("%H:%M"),
                "visits": [_visit_row(d, v) for v in d.visits],
            }
            for d in plan.days
        ],
        "no_position": [_candidate_row(c) for c in plan.no_position],
        "dropped": [_candidate_row(c) for c in plan.dropped],
        "skipped": [{"site": name, "reason": why} for name, why in plan.skipped],
    }


def render_table(plan: RoundPlan) -> str:
    """The round as text, a table per day with a running clock."""
    lines = [
        f"Round {plan.window.first.isoformat()} to {plan.window.last.isoformat()}: "
        f"{len(plan.visits)} visits on {len(plan.days)} days, {plan.km:.0f} km "
        f"(great-circle; ×{plan.settings.road_factor:g} on the road), "
        f"days of {plan.settings.hours_per_day:g} h from "
        f"{plan.settings.day_start.strftime('%H:%M')}"
    ]
    if not plan.days:
        lines.append("Nothing with a position is due in this window.")
    for d in plan.days:
        flags = []
        if d.too_long:
            flags.append("TOO LONG FOR ONE DAY")
        if d.day > plan.window.last:
            flags.append("past the window")
        note = f"  [{'; '.join(flags)}]" if flags else ""
        lines += ["", f"{d.day.strftime('%a %Y-%m-%d')}  {d.km:.0f} km{note}"]
        width = max(len(v.candidate.site.name) for v in d.visits)
        kinds = max(len("kind"), *(len(v.candidate.kind_label) for v in d.visits))
        lines.append(
            f"  {'#':>2}  {'site':<{width}}  {'kind':<{kinds}}  {'on site':>7}  "
            f"{'travel':>13}  {'arrive':>6}  {'leave':>5}"
        )
        for v in d.visits:
            c = v.candidate
            late = f"  overdue {c.overdue_days} d" if c.overdue_days else ""
            lines.append(
                f"  {v.order:>2}  {c.site.name:<{width}}  {c.kind_label:<{kinds}}  "
                f"{_hhmm(c.onsite_minutes):>7}  {v.km:>5.1f} km {_hhmm(v.drive_minutes):>4}  "
                f"{v.arrive.strftime('%H:%M'):>6}  {v.leave.strftime('%H:%M'):>5}{late}"
            )
        lines.append(
            f"  {'':>2}  {'back at the depot':<{width}}  {'':<{kinds}}  {'':>7}  "
            f"{d.home_km:>5.1f} km {_hhmm(d.home_minutes):>4}  {d.back.strftime('%H:%M'):>6}"
        )
    for title, group in (
        ("No position on record: place these by hand", plan.no_position),
        ("Dropped from this round", plan.dropped),
    ):
        if group:
            lines += ["", f"{title}:"]
            lines += [f"  {c.site.name}: {c.kind_label}, due {c.due.isoformat()}" for c in group]
    if plan.skipped:
        lines += ["", "Not judged:"]
        lines += [f"  {name}: {why}" for name, why in plan.skipped]
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


def to_ical(plan: RoundPlan, stamp: datetime) -> bytes:
    """An RFC 5545 calendar with one event per visit.

    Times are floating local times (no time zone), as the day start is a local
    clock time wherever the round is driven.

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
        event.add("dtstart", visit.arrive)
        event.add("dtend", visit.leave)
        event.add("summary", f"{c.site.name}: {c.kind_label} inspection")
        location = ", ".join(p for p in (c.site.address, c.site.town) if p) or c.site.name
        event.add("location", location)
        event.add(
            "description",
            "\n".join(
                [f"Site: {c.site.name}", f"Kind: {c.kind_label}"]
                + [f"- {r.text}" for r in c.reasons]
            ),
        )
        if c.point is not None:
            event.add("geo", (c.point.lat, c.point.lon))
        cal.add_component(event)
    return cal.to_ical()


def write_ics(plan: RoundPlan, path: Path, stamp: datetime) -> Path:
    path.write_bytes(to_ical(plan, stamp))
    return path
