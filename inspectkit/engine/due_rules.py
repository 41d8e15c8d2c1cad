"""Rules on what the site owes: a post-strike inspection, a repair, the next scheduled visit."""

from __future__ import annotations

from collections.abc import Iterator

from inspectkit.engine.history import first_found
from inspectkit.engine.results import Result
from inspectkit.engine.schedule import CounterRise, DueKind, DueStatus
from inspectkit.engine.site_facts import SiteFacts
from inspectkit.model import Grade, Quantity, Severity
from inspectkit.wording import counted


def strike_counters(facts: SiteFacts) -> Iterator[Result]:
    """A counter that rose owes a post-strike inspection; one that went back needs explaining."""
    for item in facts.schedule.due_items:
        if item.kind is not DueKind.POST_STRIKE:
            continue
        late = item.status is DueStatus.OVERDUE
        when = f"{item.overdue_days} days overdue" if late else f"due by {item.due.isoformat()}"
        yield facts.result(
            Severity.OVERDUE if late else Severity.WATCH,
            "strike-counter",
            f"{item.reason.split(' + ')[0]}: a post-strike inspection of that down conductor, "
            f"its joints, electrode and SPDs is {when}.",
            component_id=item.component_id,
            component_tag=facts.tag(item.component_id),
            due=item.due,
        )
    last_change: dict[str, CounterRise] = {}
    for change in facts.schedule.counter_changes:
        last_change[change.component_id] = change
    for change in last_change.values():
        if change.rose or change.component_id not in facts.components:
            continue
        yield facts.result(
            Severity.WATCH,
            "strike-counter",
            f"{facts.tag(change.component_id)} went back from {change.before} to "
            f"{change.after} on {change.found_on.isoformat()}: record whether the counter "
            "was reset or replaced.",
            component_id=change.component_id,
            component_tag=facts.tag(change.component_id),
            value=float(change.after),
            unit=Quantity.STRIKE_COUNT.unit,
        )


def open_defects(facts: SiteFacts) -> Iterator[Result]:
    """Defects and items needing attention not yet put right, with how long they have been open.

    A defect fails from the day it is graded: its remedy date is advice on how soon to
    put it right, not a period of grace. Anything carried from an earlier visit past
    its remedy date is overdue; an item needing attention is to watch until then.
    """
    found_on = {i.id: i.date for i in facts.records.inspections}
    by_id = {f.id: f for f in facts.records.findings}
    for finding in facts.records.findings:
        if finding.grade is Grade.SOUND or finding.resolved_by is not None:
            continue
        since = found_on.get(finding.inspection_id)
        if since is None:
            continue
        first = first_found(finding, by_id, found_on)  # a repeat: when the fault was first seen
        days = (facts.today - first).days
        due_by = finding.due_by
        late = due_by is not None and due_by < facts.today and since < facts.today
        if late:
            severity = Severity.OVERDUE
        elif finding.grade is Grade.DEFECT:
            severity = Severity.FAIL
        else:
            severity = Severity.WATCH
        if due_by is None:
            due = ""
        elif late:
            due = f"; the remedy was due by {due_by.isoformat()}"
        else:
            due = f"; remedy advised by {due_by.isoformat()}"
        age = (
            f"found {since.isoformat()}"
            if days == 0
            else f"open since {first.isoformat()} ({counted(days, 'day')})"
        )
        if first < since:
            age += f", still present on {since.isoformat()}"
        action = finding.remedial_action.strip().rstrip(".") or "put it right"
        yield facts.result(
            severity,
            "carried-defect",
            f"{facts.tag(finding.component_id)}: {finding.grade.value.replace('_', ' ')} "
            f'"{finding.text.strip()}" {age}{due}: {action} and record the repair.',
            component_id=finding.component_id,
            component_tag=facts.tag(finding.component_id) if finding.component_id else None,
            due=due_by,
        )


def schedule_items(facts: SiteFacts) -> Iterator[Result]:
    """Routine and alteration inspections that are due soon, due today or overdue."""
    severity = {
        DueStatus.OVERDUE: Severity.OVERDUE,
        DueStatus.DUE: Severity.WATCH,
        DueStatus.DUE_SOON: Severity.WATCH,
    }
    for item in facts.schedule.due_items:
        if item.kind is DueKind.POST_STRIKE or item.status not in severity:
            continue
        name = (
            "inspection after alteration"
            if item.kind is DueKind.ALTERATION
            else (f"{item.kind.value} inspection")
        )
        when = {
            DueStatus.OVERDUE: f"{item.overdue_days} days overdue",
            DueStatus.DUE: "due today",
            DueStatus.DUE_SOON: f"due by {item.due.isoformat()}",
        }[item.status]
        yield facts.result(
            severity[item.status],
            "schedule",
            f"The {name} is {when} ({item.reason} [{facts.schedule.interval_basis}]): "
            "book the visit.",
            due=item.due,
        )
