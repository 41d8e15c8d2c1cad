"""Finding the records a walkdown command names: by id or its start, by name, by tag."""

from __future__ import annotations

from typing import Any, NoReturn, TypeVar

from inspectkit.cli.common import fail
from inspectkit.model import (
    Component,
    Finding,
    Grade,
    Inspection,
    Inspector,
    Instrument,
    Record,
    Site,
)
from inspectkit.store import Store
from inspectkit.store.queries import find_site
from inspectkit.store.record_queries import (
    inspectors_named,
    instruments_by_serial,
    open_findings_of_component,
    records_with_id_prefix,
    site_inspections,
)
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.visit import walk_for

R = TypeVar("R", bound=Record)

#: Shortest start of an id accepted in place of the whole id.
MIN_PREFIX = 6

#: The option or argument a walkdown field is typed into, for messages.
OPTION_FOR = {
    "inspection": "--inspection",
    "component": "--tag",
    "quantity": "--quantity",
    "value": "VALUE",
    "method": "--method",
    "instrument_id": "--instrument",
    "joint_state": "--quantity",
    "soil": "--soil",
    "note": "--note",
    "taken_at": "--taken-at",
    "grade": "--grade",
    "text": "--text",
    "remedial_action": "--remedy",
    "due_by": "--due",
    "category": "--category",
    "photo": "PATH",
    "folder": "PATH",
    "site": "--site",
    "profile": "--site",
    "kind": "--kind",
    "date": "--date",
    "inspector_id": "--inspector",
    "weather": "--weather",
    "not_inspected": "--not-inspected",
    "accompanied_by": "--accompanied-by",
    "changes_since_last": "--changes",
    "notes": "--notes",
    "reconnected": "--reconnected",
    "reason": "--reason",
}


def refused(exc: WalkdownError) -> NoReturn:
    """Stop with exit 2, naming the option at fault and what to type instead."""
    if exc.field == "record":  # a rule on the whole record: its message names the fields
        fail(str(exc))
    # The model's message names its field already; the option says it for a person.
    message = str(exc).removeprefix(f"{exc.field}: ")
    fail(f"{OPTION_FOR.get(exc.field, exc.field)}: {message}")


def by_id(store: Store, model: type[R], text: str, option: str) -> R:
    """A record by its id, or by the start of it (at least MIN_PREFIX characters) if unique.

    Lists print ids shortened; any start that names one record is enough.
    """
    text = text.strip()
    record = store.get(model, text)
    if record is not None:
        return record
    if len(text) >= MIN_PREFIX:
        found = records_with_id_prefix(store, model, text)
        if len(found) == 1:
            return found[0]
        if found:
            fail(f"{option}: {text!r} starts {len(found)} ids; give more of it")
    fail(f"{option}: no {model.table} with id {text!r}")


def site(store: Store, text: str) -> Site:
    """A site by id, exact name, or the one name that starts with the text."""
    found = find_site(store, text)
    if found is None:
        fail(f"--site: no single site matches {text!r}; run `inspectkit sites` for the names")
    return found


def inspection(store: Store, text: str, option: str = "--inspection") -> Inspection:
    """The inspection a command works on."""
    return by_id(store, Inspection, text, option)


def visit_part(store: Store, text: str, tag: str) -> tuple[Inspection, Component]:
    """The inspection a command records in, and the component of its walk by tag."""
    visit = inspection(store, text)
    return visit, component_by_tag(store, visit.id, tag)


def component_by_tag(store: Store, inspection_id: str, tag: str) -> Component:
    """The component on the visit's walk with the tag painted on it (any case)."""
    try:
        stops = walk_for(store, inspection_id)
    except WalkdownError as exc:
        refused(exc)
    wanted = tag.strip().lower()
    for stop in stops:
        if stop.component.tag.lower() == wanted:
            return stop.component
    known = ", ".join(s.component.tag for s in stops[:12])
    more = " …" if len(stops) > 12 else ""
    fail(f"--tag: no component tagged {tag!r} in service on this site; tags: {known}{more}")


def instrument(store: Store, text: str) -> Instrument:
    """An instrument by serial number (any case) or id."""
    found = instruments_by_serial(store, text.strip())
    if len(found) == 1:
        return found[0]
    return _named_or_id(store, Instrument, found, text, "--instrument", "serial")


def inspector(store: Store, text: str) -> Inspector:
    """An inspector by name (any case) or id."""
    found = inspectors_named(store, text.strip())
    if len(found) == 1:
        return found[0]
    return _named_or_id(store, Inspector, found, text, "--inspector", "name")


def _named_or_id(
    store: Store, model: type[R], found: list[Any], text: str, option: str, by: str
) -> R:
    if len(found) > 1:
        fail(f"{option}: {len(found)} {model.table}s have the {by} {text!r}; give the id")
    record = store.get(model, text.strip())
    if record is None:
        fail(f"{option}: no {model.table} with the {by} or id {text!r}")
    return record


def earlier_open(store: Store, visit: Inspection, component: Component, text: str) -> str:
    """The id of the finding `--same-as` names: an id (or its start), or "open" for the
    component's one open finding from an earlier visit."""
    if text != "open":
        return by_id(store, Finding, text, "--same-as").id
    earlier = {
        i.id
        for i in site_inspections(store, visit.site_id)
        if (i.date, i.created_at) < (visit.date, visit.created_at)
    }
    found = [
        f
        for f in open_findings_of_component(store, component.id)
        if f.inspection_id in earlier and f.grade is not Grade.SOUND
    ]
    if len(found) != 1:
        many = "no open finding" if not found else f"{len(found)} open findings"
        fail(
            f"--same-as: {component.tag} has {many} from an earlier visit; "
            "give the id (`inspectkit findings` lists them)"
        )
    return found[0].id
