"""Rules on what a visit left undone: tests missing from a complete inspection, components
neither graded nor marked not inspected, and those marked not inspected.
"""

from __future__ import annotations

from collections.abc import Iterator
from operator import attrgetter

from inspectkit.engine.history import (
    COMPLETE_KINDS,
    counts_as_done,
    in_service,
    open_not_inspected,
)
from inspectkit.engine.results import Result
from inspectkit.engine.site_facts import SiteFacts
from inspectkit.model import (
    Component,
    ComponentKind,
    Inspection,
    InspectionState,
    Quantity,
    Severity,
)

_tag = attrgetter("tag")


def _judged_complete(facts: SiteFacts) -> list[tuple[Inspection, bool]]:
    """The complete inspections whose gaps matter: the latest counted one, and any
    unfinished draft of one (True beside a draft)."""
    complete = sorted(
        (i for i in facts.records.inspections if i.kind in COMPLETE_KINDS), key=lambda i: i.date
    )
    done = [i for i in complete if counts_as_done(i)]
    drafts = [i for i in complete if i.state is InspectionState.DRAFT and not i.finished]
    return [(i, False) for i in done[-1:]] + [(i, True) for i in drafts]


def missing_tests(facts: SiteFacts) -> Iterator[Result]:
    """A complete inspection lacking an electrode's isolated reading or a conductor's continuity.

    Judged: the latest counted complete inspection, and any unfinished draft of one.
    Components it marked not inspected are left to `not_inspected`, which says why.
    """
    for inspection, draft in _judged_complete(facts):
        marked = {
            facts.tag(n.component_id)
            for n in facts.records.not_inspected
            if n.inspection_id == inspection.id
        }
        missing = {
            label: left
            for label, tags in _missing(facts, inspection).items()
            if (left := [t for t in tags if t not in marked])
        }
        if not missing:
            continue
        what = "; ".join(f"{label} for {', '.join(tags)}" for label, tags in missing.items())
        state, action = ("draft ", "before signing") if draft else ("", "at a return visit")
        yield facts.result(
            Severity.INCOMPLETE,
            "incomplete",
            f"The {state}complete inspection of {inspection.date.isoformat()} has no {what}: "
            f"take them {action}.",
            components=tuple(t for tags in missing.values() for t in tags),
        )


def _missing(facts: SiteFacts, inspection: Inspection) -> dict[str, list[str]]:
    """The tags of components a complete inspection should have tested and did not."""
    visit = inspection.id
    tested: dict[Quantity, set[str]] = {Quantity.EARTH_ISOLATED: set(), Quantity.CONTINUITY: set()}
    for reading in facts.records.readings:
        if reading.inspection_id == visit and reading.quantity in tested:
            tested[reading.quantity].add(reading.component_id)
    isolated, conducted = tested[Quantity.EARTH_ISOLATED], tested[Quantity.CONTINUITY]
    present = [c for c in facts.records.components if in_service(c, inspection.date)]
    children: dict[str, list[Component]] = {}
    for component in present:
        children.setdefault(component.parent_id or "", []).append(component)

    def measured(component: Component, ids: set[str]) -> bool:
        return component.id in ids or any(c.id in ids for c in children.get(component.id, ()))

    earth, continuity = [], []
    for component in sorted(present, key=_tag):
        if component.kind is ComponentKind.TEST_JOINT:
            if component.id in isolated:  # a reading on the joint stands for its electrodes
                continue
            electrodes = [
                c for c in children.get(component.id, []) if c.kind is ComponentKind.EARTH_ELECTRODE
            ]
            earth += (t.tag for t in electrodes or [component] if not measured(t, isolated))
        elif component.kind is ComponentKind.DOWN_CONDUCTOR and not measured(component, conducted):
            continuity.append(component.tag)
    missing = {}
    if earth:
        missing["isolated earth reading"] = earth
    if continuity:
        missing["continuity reading"] = continuity
    return missing


def ungraded_components(facts: SiteFacts) -> Iterator[Result]:
    """A complete inspection with components neither graded nor marked not inspected.

    Judged as `missing_tests` judges: the latest counted complete inspection and any
    unfinished draft of one. A complete inspection looks at every component.
    """
    for inspection, draft in _judged_complete(facts):
        seen = {f.component_id for f in facts.records.findings if f.inspection_id == inspection.id}
        seen |= {
            n.component_id for n in facts.records.not_inspected if n.inspection_id == inspection.id
        }
        left = [
            c.tag
            for c in sorted(facts.records.components, key=_tag)
            if c.id not in seen and in_service(c, inspection.date)
        ]
        if not left:
            continue
        state, action = ("draft ", "before signing") if draft else ("", "at a return visit")
        yield facts.result(
            Severity.INCOMPLETE,
            "ungraded",
            f"The {state}complete inspection of {inspection.date.isoformat()} neither graded "
            f"nor marked not inspected {len(left)} component(s): {', '.join(left)}; "
            f"inspect them {action}.",
            components=tuple(left),
        )


def not_inspected(facts: SiteFacts) -> Iterator[Result]:
    """Components the latest visit of each kind could not inspect: a return visit is owed.

    Only the site's latest visit that looked at the component counts: once a later
    visit grades it or reads it, the gap is closed.
    """
    for mark, day in open_not_inspected(facts.records, facts.today):
        component = facts.components[mark.component_id]
        yield facts.result(
            Severity.INCOMPLETE,
            "not-inspected",
            f"{component.tag} was not inspected on {day.isoformat()} ({mark.why}): "
            "inspect it at a return visit.",
            component_id=component.id,
            component_tag=component.tag,
        )
