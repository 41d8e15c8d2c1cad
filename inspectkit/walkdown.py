"""The walkdown without a screen: the walking order, and each entry saved the moment it is made.

The walkdown screen calls these functions and nothing else, so a command or a
test does exactly what the screen does. Each function saves at once in its own
transaction: what an inspector was told is saved survives a crash or a flat
battery on the roof.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from datetime import date, datetime, timedelta
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from inspectkit import intake
from inspectkit.earthing_values import Traverse
from inspectkit.engine import rules
from inspectkit.engine.check import check_site
from inspectkit.engine.electrodes import traverse_reading
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.engine.history import COMPLETE_KINDS, electrode_count
from inspectkit.engine.reading_rules import LIMIT_ACTIONS
from inspectkit.engine.results import SEVERITY_WORDS, Result
from inspectkit.model import (
    DEFAULT_METHOD,
    INSTRUMENT_METHODS,
    INSTRUMENT_QUANTITIES,
    JOINT_FOR,
    QUANTITIES_FOR,
    WALKING_ORDER,
    Component,
    ComponentKind,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    InspectionState,
    Inspector,
    Instrument,
    InstrumentKind,
    JointState,
    Method,
    NotInspected,
    NotInspectedReason,
    Photo,
    Quantity,
    Reading,
    Severity,
    Site,
    SiteRecords,
    SoilCondition,
    explain,
    utcnow,
)
from inspectkit.profiles import Profile, ProfileError, load_profile
from inspectkit.store import FrozenRecordError, Store, StoreError, drafts
from inspectkit.store.photos import attach_photo, file_sha256, read_exif, remove_unreferenced
from inspectkit.store.preferences import INSTRUMENT_SETTING
from inspectkit.units import Measured, UnitError, format_value, parse

#: Kinds walked under their parent (a down conductor's test joint, a joint's electrode).
_NESTED_KINDS = frozenset({ComponentKind.TEST_JOINT, ComponentKind.EARTH_ELECTRODE})

#: A photo belongs to the reading taken closest to it, if that is this close (our default).
PHOTO_MATCH_WINDOW = timedelta(minutes=10)

_PHOTO_SUFFIXES = frozenset({".jpg", ".jpeg", ".png", ".tif", ".tiff", ".heic", ".webp"})


class WalkdownError(ValueError):
    """An entry that cannot be saved; `field` names the field, the message says what to type.

    Attributes:
        field: The entry field at fault (`value`, `method`, `text`, `due_by`, …).
    """

    def __init__(self, field: str, message: str) -> None:
        super().__init__(message)
        self.field = field


# ------------------------------------------------------------------ walking order


@dataclass(frozen=True)
class Stop:
    """One component on the walk, with how deep it sits under its down conductor.

    Attributes:
        component: The component to inspect here.
        depth: 0 for a component walked in its own right, 1 for a down conductor's
            test joint, 2 for that joint's electrode.
        quantities: What can be measured on it, in entry order.
    """

    component: Component
    depth: int
    quantities: tuple[Quantity, ...]


def _tag_key(tag: str) -> tuple[Any, ...]:
    """`TJ-2` before `TJ-10`: numbers inside tags compare as numbers."""
    return tuple(int(p) if p.isdigit() else p for p in re.split(r"(\d+)", tag))


def walking_order(components: Iterable[Component], on: date | None = None) -> list[Stop]:
    """The components still in service, in the order an inspector walks them.

    Roof first (air terminals, then the mesh), then each down conductor followed by
    its test joints and each joint's electrodes, then anything of those kinds with no
    parent on the walk, then bonding, SPDs and strike counters; by tag within a kind.

    Args:
        components: The site's components; retired ones are left out.
        on: Leave out components retired on or before this day (default: any retired).
    """
    live = [c for c in components if c.retired_on is None or (on is not None and c.retired_on > on)]
    by_id = {c.id: c for c in live}
    children: dict[str, list[Component]] = {}
    roots = []
    for component in live:
        if component.kind in _NESTED_KINDS and component.parent_id in by_id:
            children.setdefault(component.parent_id, []).append(component)
        else:
            roots.append(component)

    def order(c: Component) -> tuple[Any, ...]:
        return (WALKING_ORDER.index(c.kind), _tag_key(c.tag))

    stops: list[Stop] = []
    seen: set[str] = set()

    def visit(component: Component, depth: int) -> None:
        if component.id in seen:  # a parent loop in bad data must not hang the walk
            return
        seen.add(component.id)
        quantities = QUANTITIES_FOR[component.kind]
        if component.kind is ComponentKind.TEST_JOINT and any(
            c.kind is ComponentKind.EARTH_ELECTRODE for c in children.get(component.id, [])
        ):
            # The electrode below carries its own isolated reading; the joint, the system's.
            quantities = (Quantity.EARTH_COMBINED,)
        stops.append(Stop(component, depth, quantities))
        for child in sorted(children.get(component.id, []), key=order):
            visit(child, depth + 1)

    for root in sorted(roots, key=order):
        visit(root, 0)
    return stops


def walk_for(store: Store, inspection_id: str) -> list[Stop]:
    """The walking order of the site an inspection belongs to, as of the visit's day."""
    inspection = _inspection(store, inspection_id)
    components = store.select(Component, "site_id = ?", [inspection.site_id])
    return walking_order(components, on=inspection.date)


# ----------------------------------------------------------------- the inspection


def start_inspection(
    store: Store,
    site_id: str,
    kind: InspectionKind | str,
    inspector_id: str | None,
    today: date,
    *,
    continue_draft: bool = True,
) -> Inspection:
    """The site's open draft, the same day's draft of this kind, or a new draft visit.

    An open draft is one not yet signed nor marked finished: a walkdown left half
    done is continued, never started twice. A draft of the same kind on the same
    day that was marked finished is opened again (`same_day_draft`), so that one
    visit makes one inspection and one report. Either way the inspector given is
    put on a draft that has none.

    Args:
        continue_draft: False to start a second visit of that kind on that day even
            though one is finished (the person was asked and said so).

    Raises:
        WalkdownError: no such site, or the kind or date is not valid.
    """
    if store.get(Site, site_id) is None:
        raise WalkdownError("site", f"no site with id {site_id}; pick a site from the list")
    drafts = store.select(
        Inspection,
        "site_id = ? AND state = ? AND finished = 0",
        [site_id, InspectionState.DRAFT.value],
        order_by="date DESC, created_at DESC",
    )
    candidate = _validated(
        Inspection,
        {"site_id": site_id, "kind": kind, "date": today, "inspector_id": inspector_id},
    )
    earlier = same_day_draft(store, site_id, candidate.kind, today) if continue_draft else None
    draft = drafts[0] if drafts else earlier
    if draft is not None:
        changes: dict[str, Any] = {}
        if draft.finished:  # opened again: the joints are confirmed afresh when it is finished
            changes = {"finished": False, "joints_reconnected": None, "reconnection_note": ""}
        if inspector_id and not draft.inspector_id:
            changes["inspector_id"] = _known_inspector(store, inspector_id)
        return _update_inspection(store, draft.id, changes) if changes else draft
    return store.save(candidate)


def same_day_draft(
    store: Store, site_id: str, kind: InspectionKind | str, day: date
) -> Inspection | None:
    """The unsigned visit of this kind to the site on that day, finished or not, if any.

    Starting another would make two inspections of one visit, whose report would
    mix them; the screen offers to continue this one instead.
    """
    found = store.select(
        Inspection,
        "site_id = ? AND kind = ? AND date = ? AND state = ?",
        [site_id, InspectionKind(kind).value, day.isoformat(), InspectionState.DRAFT.value],
        order_by="created_at DESC",
    )
    return found[0] if found else None


def set_inspector(store: Store, inspection_id: str, inspector_id: str) -> Inspection:
    """Put the inspector on a draft visit, or change who it is, until it is signed.

    Raises:
        WalkdownError: no such inspector, or the inspection is signed.
    """
    return _update_inspection(
        store, inspection_id, {"inspector_id": _known_inspector(store, inspector_id)}
    )


def _known_inspector(store: Store, inspector_id: str) -> str:
    if store.get(Inspector, inspector_id) is None:
        raise WalkdownError(
            "inspector_id", f"no inspector with id {inspector_id}; add the inspector first"
        )
    return inspector_id


def discard_inspection(store: Store, inspection_id: str) -> Inspection:
    """Take a draft visit out of the records: started twice, on the wrong site, a test.

    Its readings, findings, photos and not-inspected marks go with it, in one
    transaction; the audit log keeps them all, and a bundle carries the discard to
    the other laptops as it carries a withdrawn reading. Findings of earlier visits
    it had marked as put right are open again. A signed inspection is never
    discarded: amend it.

    Raises:
        WalkdownError: no such inspection, or it is signed.
    """
    inspection = _open_inspection(store, inspection_id)
    parts: list[tuple[type[Any], Any]] = [
        (model, record)
        for model in (Reading, Finding, Photo, NotInspected)
        for record in store.select(model, "inspection_id = ?", [inspection_id])
    ]
    reopened = [
        f.model_copy(update={"resolved_by": None})
        for f in store.select(Finding, "resolved_by = ? AND inspection_id != ?", [
            inspection_id, inspection_id
        ])
    ]
    try:
        with store.transaction():
            store.save_all(reopened)
            for model, record in parts:
                store.delete(model, record.id)
            drafts.drop_drafts(store, inspection_id)  # text typed and not saved goes too
            store.delete(Inspection, inspection_id)
    except FrozenRecordError as exc:
        raise WalkdownError("inspection", str(exc)) from None
    remove_unreferenced(store, sorted({r.sha256 for m, r in parts if m is Photo}))
    return inspection


def _inspection(store: Store, inspection_id: str) -> Inspection:
    inspection = store.get(Inspection, inspection_id)
    if inspection is None:
        raise WalkdownError("inspection", f"no inspection with id {inspection_id}")
    return inspection


def _open_inspection(store: Store, inspection_id: str) -> Inspection:
    inspection = _inspection(store, inspection_id)
    if inspection.state is InspectionState.SIGNED:
        raise WalkdownError(
            "inspection",
            f"the inspection of {inspection.date.isoformat()} is signed; "
            "start an amendment to change it",
        )
    return inspection


def _component(store: Store, inspection: Inspection, component_id: str) -> Component:
    component = store.get(Component, component_id)
    if component is None or component.site_id != inspection.site_id:
        raise WalkdownError("component", f"no component {component_id} on this site")
    return component


def _validated(
    model: type[Any],
    data: dict[str, Any],
    now: date | datetime | None = None,
    whole: str = "record",
) -> Any:
    """A record checked by its model; a refusal names the field and what to type.

    Args:
        whole: The field to blame for a check on the whole record (the model's
            own rules, such as a defect needing words).
    """
    try:
        return model.model_validate(data, context={"now": now} if now is not None else None)
    except ValidationError as exc:
        first = exc.errors()[0]
        if first["loc"]:
            raise WalkdownError(str(first["loc"][0]), explain(exc)) from None
        raise WalkdownError(whole, explain(exc).removeprefix("record: ")) from None


def _save(store: Store, record: Any) -> Any:
    try:
        return store.save(record)
    except FrozenRecordError as exc:
        raise WalkdownError("inspection", str(exc)) from None


# ------------------------------------------------------------------- instruments

#: Setting of the one instrument chosen before kinds were recorded (any quantity).
ANY_INSTRUMENT_SETTING = INSTRUMENT_SETTING

#: Chosen instruments by kind; None: one whose kind is not recorded.
Chosen = dict[InstrumentKind | None, Instrument]


def instrument_setting(kind: InstrumentKind) -> str:
    """The setting that holds the chosen instrument of a kind."""
    return f"{ANY_INSTRUMENT_SETTING}.{kind.value}"


def chosen_instruments(store: Store) -> Chosen:
    """The instrument chosen for each kind of measurement, as kept in this database.

    An instrument chosen before kinds were recorded counts for its own kind, or, with
    none recorded, under None for any quantity no chosen kind measures.
    """
    chosen: Chosen = {}
    for kind in InstrumentKind:
        key = store.get_setting(instrument_setting(kind))
        instrument = store.get(Instrument, key) if key else None
        if instrument is not None:
            chosen[kind] = instrument
    key = store.get_setting(ANY_INSTRUMENT_SETTING)
    older = store.get(Instrument, key) if key else None
    if older is not None and older.kind not in chosen:
        chosen[older.kind] = older
    return chosen


def choose_instrument(store: Store, instrument_id: str) -> Instrument:
    """Make this instrument the one readings of its kind are taken with from now on.

    Raises:
        WalkdownError: no such instrument.
    """
    instrument = store.get(Instrument, instrument_id)
    if instrument is None:
        raise WalkdownError("instrument_id", f"no instrument with id {instrument_id}")
    if instrument.kind is None:
        store.set_setting(ANY_INSTRUMENT_SETTING, instrument.id)
    else:
        store.set_setting(instrument_setting(instrument.kind), instrument.id)
    return instrument


def instrument_for(chosen: Chosen, quantity: Quantity, method: Method) -> Instrument | None:
    """The chosen instrument whose kind measures this quantity by this method, if any.

    The usual method's instrument when none fits the method given; an instrument of
    no recorded kind when no kind fits at all (it is not judged).
    """
    fits = [
        chosen[kind]
        for kind in InstrumentKind
        if kind in chosen and quantity in INSTRUMENT_QUANTITIES[kind]
    ]
    exact = [i for i in fits if i.kind is not None and method in INSTRUMENT_METHODS[i.kind]]
    return next(iter(exact or fits), chosen.get(None))


# ---------------------------------------------------------------------- readings


@dataclass(frozen=True)
class ReadingOutcome:
    """A saved reading and what it means, in words the screen shows beside the field.

    Attributes:
        reading: The reading as saved.
        severity: The worst the engine's rules found for it (`ok` when none applies).
        verdict: `PASS 3.9 Ω ≤ 10 Ω`, `FAIL 14 Ω > 10 Ω`, or the value alone when no
            limit applies (soil resistivity, counters).
        limit: The profile's acceptance limit, in the quantity's unit, or None.
        messages: The engine's sentences about this reading, worst first.
        previous: The same component's last reading of this quantity from an earlier
            visit, or None.
        comparison: `+12 % on 2025-06-03` against `previous`, or "" when there is none.
    """

    reading: Reading
    severity: Severity
    verdict: str
    limit: float | None
    messages: tuple[str, ...] = ()
    previous: Reading | None = None
    comparison: str = ""

    @property
    def passed(self) -> bool | None:
        """True or False against a limit; None where the profile sets no limit."""
        if self.limit is None:
            return None
        return self.severity is not Severity.FAIL


def record_reading(
    store: Store,
    inspection_id: str,
    component_id: str,
    quantity: Quantity | str,
    text: str,
    method: Method | str | None = None,
    instrument_id: str | None = None,
    joint_state: JointState | str | None = None,
    soil: SoilCondition | str | None = None,
    note: str = "",
    *,
    unreliable: bool = False,
    taken_at: datetime | None = None,
    context: SiteContext | None = None,
    traverse: Traverse | None = None,
) -> ReadingOutcome:
    """Save what the inspector typed for one quantity of one component, and judge it.

    Typing again for the same component and quantity in the same visit corrects the
    reading rather than adding a second one. Nothing is saved unless the whole entry
    is valid.

    Args:
        text: What the instrument showed, as typed (`3.9`, `180 mΩ`, `OL`).
        method: How it was measured; the usual method for the quantity when None.
        joint_state: Open or closed; taken from the quantity for earth readings.
        unreliable: The inspector doubts the reading (leads, probes, weather): it is
            kept but does not count as a pass.
        taken_at: When it was read (default: now); it must lie on the visit's day
            (`intake.refusal`).
        context: The site's profile and parts, if the caller holds them already
            (the screen does, for the whole walk).
        traverse: A fall-of-potential traverse (`earthing_input.parse_traverse`);
            its value at 61.8 % of E–C is the reading, and `text` stays empty.

    Raises:
        WalkdownError: the text, method, state or note is not valid; the quantity,
            time or instrument does not fit (`intake.refusal`); or the inspection is
            signed or finished; `field` says which.
    """
    inspection = _open_inspection(store, inspection_id)
    if context is None or context.site.id != inspection.site_id:
        context = site_context(store, inspection.site_id)
    component = context.part(component_id)
    quantity = _validated_enum(Quantity, quantity, "quantity")
    if traverse is not None:
        measured = traverse_value(traverse, text)
        method = method or Method.FALL_OF_POTENTIAL_3P
    else:
        try:
            measured = parse(text, quantity)
        except UnitError as exc:
            raise WalkdownError("value", str(exc)) from None
    now = utcnow()
    existing = _saved_readings(store, inspection_id, component_id, quantity)
    data: dict[str, Any] = {
        "inspection_id": inspection_id,
        "component_id": component_id,
        "quantity": quantity,
        "value": measured.value,
        "over_range": measured.over_range,
        "method": method or DEFAULT_METHOD[quantity],
        "joint_state": joint_state or JOINT_FOR.get(quantity),
        "instrument_id": instrument_id or None,
        "taken_at": taken_at or now,
        "soil": soil or None,
        "note": note,
        "unreliable": unreliable,
        "traverse": traverse.to_text() if traverse is not None else None,
    }
    if existing:
        data["id"] = existing[0].id
        data["created_at"] = existing[0].created_at
    reading = _validated(Reading, data, now=now)
    instrument = context.instrument(store, reading.instrument_id) if reading.instrument_id else None
    window = intake.reading_window(store)
    refused = intake.refusal(reading, inspection, component, instrument, window)
    if refused is not None:
        raise WalkdownError(refused.field, str(refused))
    reading = _save(store, reading)
    return judge_reading(store, inspection, reading, context)


def traverse_value(traverse: Traverse, text: str) -> Measured:
    """The reading a traverse gives: its value at 61.8 % of E–C, to four significant digits.

    Raises:
        WalkdownError: a value was typed as well, or the traverse does not
            straddle 61.8 % of the E–C distance.
    """
    if text.strip():
        raise WalkdownError(
            "value", "a traverse gives the value (at 61.8 % of E–C); leave the value empty"
        )
    try:
        return Measured(traverse_reading(traverse))
    except EarthingError as exc:
        raise WalkdownError("traverse", str(exc)) from None


def withdraw_reading(
    store: Store, inspection_id: str, component_id: str, quantity: Quantity | str
) -> Reading:
    """Take back a reading saved by mistake (the wrong joint, the wrong visit).

    The reading leaves the visit, and the audit log keeps it; a bundle carries the
    withdrawal to the other laptops. A signed inspection's readings stay: amend it.

    Raises:
        WalkdownError: the inspection is signed, or there is no such reading.
    """
    _open_inspection(store, inspection_id)
    quantity = _validated_enum(Quantity, quantity, "quantity")
    saved = _saved_readings(store, inspection_id, component_id, quantity)
    if not saved:
        raise WalkdownError("quantity", f"no {quantity.label} is saved for this component")
    with store.transaction():
        for reading in saved:
            store.delete(Reading, reading.id)
    return saved[0]


def _saved_readings(
    store: Store, inspection_id: str, component_id: str, quantity: Quantity
) -> list[Reading]:
    return store.select(
        Reading,
        "inspection_id = ? AND component_id = ? AND quantity = ?",
        [inspection_id, component_id, quantity.value],
    )


def _validated_enum(enum: type[Any], value: Any, name: str) -> Any:
    try:
        return enum(value)
    except ValueError:
        allowed = ", ".join(m.value for m in enum)
        raise WalkdownError(name, f"{value!r} is not a {name}; use one of: {allowed}") from None


@dataclass(frozen=True)
class SiteContext:
    """What judging a reading needs about its site, read once for a whole walk.

    Earlier visits do not change while the site is walked, so their readings are read
    once per component and quantity, when first needed; the visit being walked is
    always read afresh. The screen reads a new context when it comes back into view.

    Attributes:
        site: The site.
        profile: The rule set it is held to.
        components: All its components, retired ones too (history refers to them).
        visits: The site's inspections when the context was read.
    """

    site: Site
    profile: Profile
    components: tuple[Component, ...]
    visits: tuple[Inspection, ...] = ()
    _earlier: dict[tuple[str, Quantity, str], list[Reading]] = field(
        default_factory=dict, repr=False, compare=False
    )
    _instruments: dict[str, Instrument | None] = field(
        default_factory=dict, repr=False, compare=False
    )

    def earlier_readings(
        self, store: Store, component_id: str, quantity: Quantity, inspection_id: str
    ) -> list[Reading]:
        """The component's readings of a quantity from the site's other visits."""
        key = (component_id, quantity, inspection_id)
        if key not in self._earlier:
            self._earlier[key] = store.select(
                Reading,
                "component_id = ? AND quantity = ? AND inspection_id != ? AND inspection_id IN "
                "(SELECT id FROM inspection WHERE site_id = ?)",
                [component_id, quantity.value, inspection_id, self.site.id],
                order_by="taken_at",
            )
        return self._earlier[key]

    def instrument(self, store: Store, instrument_id: str) -> Instrument | None:
        if instrument_id not in self._instruments:
            self._instruments[instrument_id] = store.get(Instrument, instrument_id)
        return self._instruments[instrument_id]

    def part(self, component_id: str) -> Component:
        """One of the site's components.

        Raises:
            WalkdownError: no component of this site has that id.
        """
        for component in self.components:
            if component.id == component_id:
                return component
        raise WalkdownError("component", f"no component {component_id} on this site")


def site_context(store: Store, site_id: str) -> SiteContext:
    """Read a site, its profile and its components for a walk.

    Raises:
        WalkdownError: no such site, or it names a profile that cannot be loaded.
    """
    site = store.get(Site, site_id)
    if site is None:
        raise WalkdownError("site", f"no site with id {site_id}; pick a site from the list")
    try:
        profile = load_profile(site.profile)
    except ProfileError as exc:
        raise WalkdownError("profile", str(exc)) from None
    components = tuple(store.select(Component, "site_id = ?", [site_id]))
    visits = tuple(store.select(Inspection, "site_id = ?", [site_id], order_by="date, created_at"))
    return SiteContext(site, profile, components, visits)


#: The engine's rules that speak about one reading or its series; the site-wide ones
#: (missing tests, open defects, the schedule) are not run for one reading.
_SERIES = rules.SERIES_RULES


def judge_reading(
    store: Store, inspection: Inspection, reading: Reading, context: SiteContext
) -> ReadingOutcome:
    """Pass or fail against the site's profile, through the engine's rules, and the last visit."""
    profile = context.profile
    records = _records_for(store, context, inspection, reading)
    today = max(inspection.date, reading.taken_at.date())
    found = _about(check_site(records, profile, today, _SERIES).results, reading)
    if any(r.reading_id is None for r in found):
        # A result on the series as a whole (a counter's rise, a trend) belongs to
        # this reading only if it is not there without it.
        before = records.model_copy(
            update={"readings": [r for r in records.readings if r.id != reading.id]}
        )
        known = {
            (r.rule, r.message)
            for r in _about(check_site(before, profile, today, _SERIES).results, reading)
        }
        found = [r for r in found if r.reading_id is not None or (r.rule, r.message) not in known]
    severity = found[0].severity if found else Severity.OK
    limit = (
        profile.limit_for(reading.quantity, electrode_count(records, today))
        if reading.quantity in LIMIT_ACTIONS
        else None
    )
    previous = _previous(records, inspection, reading)
    return ReadingOutcome(
        reading=reading,
        severity=severity,
        verdict=_verdict(reading, limit, severity),
        limit=limit,
        messages=tuple(r.message for r in found),
        previous=previous,
        comparison=_comparison(reading, previous, records),
    )


def _about(results: Iterable[Result], reading: Reading) -> list[Result]:
    """The results on this reading or on its series, worst first."""
    return [
        r
        for r in results
        if r.covers(reading.id)
        or (r.component_id == reading.component_id and r.reading_id is None and not r.reading_ids)
    ]


def _records_for(
    store: Store, context: SiteContext, inspection: Inspection, reading: Reading
) -> SiteRecords:
    """What the rules need to judge one reading: the site, the visits and that one series."""
    inspections = [v for v in context.visits if v.id != inspection.id] + [inspection]
    inspections.sort(key=lambda v: (v.date, v.created_at))
    earlier = context.earlier_readings(store, reading.component_id, reading.quantity, inspection.id)
    readings = sorted([*earlier, reading], key=lambda r: r.taken_at)
    instruments = {
        i.id: i
        for i in (context.instrument(store, r.instrument_id) for r in readings if r.instrument_id)
        if i is not None
    }
    return SiteRecords(
        site=context.site,
        # The component, and the electrodes: some profiles scale a limit by their number.
        components=[
            c
            for c in context.components
            if c.id == reading.component_id or c.kind is ComponentKind.EARTH_ELECTRODE
        ],
        inspections=inspections,
        readings=readings,
        instruments=instruments,
    )


def _previous(records: SiteRecords, inspection: Inspection, reading: Reading) -> Reading | None:
    """The last reading of the same series from an earlier visit."""
    dates = {i.id: i.date for i in records.inspections}
    earlier = [
        r
        for r in records.readings
        if r.inspection_id != inspection.id
        and dates.get(r.inspection_id, inspection.date) <= inspection.date
        and r.id != reading.id
    ]
    return max(earlier, key=lambda r: (dates[r.inspection_id], r.taken_at), default=None)


def _verdict(reading: Reading, limit: float | None, severity: Severity) -> str:
    """`PASS 3.9 Ω ≤ 10 Ω`: the verdict word first, so it reads without its colour.

    A reading marked doubtful says so after the comparison (`WATCH 3.9 Ω ≤ 10 Ω, doubtful`).
    """
    doubt = ", doubtful" if reading.unreliable else ""
    return _compared(reading, limit, severity) + doubt


def _compared(reading: Reading, limit: float | None, severity: Severity) -> str:
    shown = format_value(reading.value, reading.quantity, reading.over_range)
    if limit is None:
        return shown if severity is Severity.OK else f"{_WORD[severity]} {shown}"
    bound = format_value(limit, reading.quantity)
    word = _WORD[severity]
    if reading.value is not None and reading.value <= limit:
        if reading.over_range:
            return f"{word} {shown}, limit {bound}"
        return f"{word} {shown} ≤ {bound}"
    return f"{word} {shown} > {bound}"


_WORD = {s: w.shout for s, w in SEVERITY_WORDS.items()}


def _comparison(reading: Reading, previous: Reading | None, records: SiteRecords) -> str:
    """`+12 % on 2025-06-03` (counts: `+3 on …`); over-range on either side is said in words."""
    if previous is None:
        return ""
    day = next(
        (i.date for i in records.inspections if i.id == previous.inspection_id),
        previous.taken_at.date(),
    ).isoformat()
    if previous.over_range or previous.value is None:
        was = format_value(previous.value, previous.quantity, previous.over_range)
        return f"was {was} on {day}"
    if reading.over_range or reading.value is None:
        return f"was {format_value(previous.value, previous.quantity)} on {day}"
    if reading.quantity is Quantity.STRIKE_COUNT:
        return f"{reading.value - previous.value:+g} on {day}"
    if previous.value == 0:
        return f"was {format_value(previous.value, previous.quantity)} on {day}"
    change = (reading.value - previous.value) / previous.value * 100
    return f"{change:+.0f} % on {day}"


# ---------------------------------------------------------------------- findings


def grade_component(
    store: Store,
    inspection_id: str,
    component_id: str,
    grade: Grade | str,
    text: str = "",
    remedial_action: str = "",
    due_by: date | str | None = None,
    category: str = "",
) -> Finding:
    """Record how a component was found; grading it again in the same visit corrects it.

    Raises:
        WalkdownError: not-sound without words, a bad due date, or a signed inspection.
    """
    fields = {
        "grade": grade,
        "text": text.strip(),
        "remedial_action": remedial_action.strip(),
        "due_by": _day(due_by, "due_by") if isinstance(due_by, str) else due_by,
        "category": category.strip(),
    }
    # Graded after all: no longer "not inspected".
    return _component_entry(store, Finding, NotInspected, inspection_id, component_id, fields)


def mark_not_inspected(
    store: Store,
    inspection_id: str,
    component_id: str,
    reason: NotInspectedReason | str,
    text: str = "",
) -> NotInspected:
    """Record that a component could not be inspected on this visit, and why.

    It stands instead of a grade (a grade given for it in this visit is taken back;
    the audit log keeps it), so the visit can be complete without it; the report
    lists it and the next round plans a return. Marking it again corrects the reason.

    Raises:
        WalkdownError: not a reason, `other` without words, or the inspection is signed.
    """
    fields = {"reason": reason, "text": text.strip()}
    return _component_entry(store, NotInspected, Finding, inspection_id, component_id, fields)


def _component_entry(
    store: Store,
    model: type[Any],
    replaces: type[Any],
    inspection_id: str,
    component_id: str,
    fields: dict[str, Any],
) -> Any:
    """This visit's one `model` record for the component, made or corrected, in place of
    its `replaces` record (a grade and a "not inspected" mark exclude each other)."""
    inspection = _open_inspection(store, inspection_id)
    _component(store, inspection, component_id)
    existing = store.select(
        model, "inspection_id = ? AND component_id = ?", [inspection_id, component_id]
    )
    data: dict[str, Any] = {"inspection_id": inspection_id, "component_id": component_id, **fields}
    if existing:
        data["id"] = existing[0].id
        data["created_at"] = existing[0].created_at
    record = _validated(model, data, whole="text")
    with store.transaction():
        _drop(store, replaces, inspection_id, component_id)
        return _save(store, record)


def clear_not_inspected(store: Store, inspection_id: str, component_id: str) -> None:
    """Take back a "not inspected" mark made by mistake; the component is to grade again.

    Raises:
        WalkdownError: the inspection is signed.
    """
    _open_inspection(store, inspection_id)
    _drop(store, NotInspected, inspection_id, component_id)


def _drop(store: Store, model: type[Any], inspection_id: str, component_id: str) -> None:
    """Delete this visit's record of `model` for the component, if there is one."""
    for record in store.select(
        model, "inspection_id = ? AND component_id = ?", [inspection_id, component_id]
    ):
        try:
            store.delete(model, record.id)
        except FrozenRecordError as exc:
            raise WalkdownError("inspection", str(exc)) from None


def _day(text: str, field: str) -> date | None:
    """A day typed as YYYY-MM-DD; blank is none."""
    if not text.strip():
        return None
    try:
        return date.fromisoformat(text.strip())
    except ValueError:
        raise WalkdownError(
            field, f"{text.strip()!r} is not a date; type it as YYYY-MM-DD, e.g. 2026-07-31"
        ) from None


# ------------------------------------------------------------------------ photos


@dataclass(frozen=True)
class PhotoMatch:
    """A photo attached from a folder, with the component its time matched.

    Attributes:
        photo: The photo as saved.
        component_id: The component of the nearest reading in time, or None when no
            reading was taken within the match window (the photo is then kept on the
            inspection alone).
    """

    photo: Photo
    component_id: str | None


def attach_photo_file(
    store: Store,
    inspection_id: str,
    path: Path | str,
    component_id: str | None = None,
    caption: str = "",
) -> Photo:
    """Attach one photo file to the inspection (and to a component).

    Raises:
        WalkdownError: no such file, not an image, or the inspection is signed.
    """
    inspection = _open_inspection(store, inspection_id)
    if component_id is not None:
        _component(store, inspection, component_id)
    try:
        return attach_photo(
            store,
            Path(path).expanduser(),
            inspection_id=inspection_id,
            component_id=component_id,
            caption=caption,
        )
    except FrozenRecordError as exc:
        raise WalkdownError("inspection", str(exc)) from None
    except StoreError as exc:
        raise WalkdownError("photo", str(exc)) from None


def attach_photos(
    store: Store,
    inspection_id: str,
    path: Path | str,
    component_id: str | None = None,
    caption: str = "",
) -> list[PhotoMatch]:
    """Attach a photo file to a component, or a folder's new photos matched by time.

    Raises:
        WalkdownError: the path is neither a photo nor a folder, or the inspection is signed.
    """
    target = Path(path).expanduser()
    if target.is_dir():
        return attach_photo_folder(store, inspection_id, target)
    photo = attach_photo_file(store, inspection_id, target, component_id, caption)
    return [PhotoMatch(photo, component_id)]


def attach_photo_folder(
    store: Store,
    inspection_id: str,
    folder: Path | str,
    *,
    window: timedelta = PHOTO_MATCH_WINDOW,
    clock_offset: timedelta = timedelta(0),
) -> list[PhotoMatch]:
    """Attach the photos in a folder not yet on this inspection, each to a component by time.

    A photo goes to the component whose reading was taken nearest its EXIF time,
    when that is within `window`. Photos already attached (same content) are skipped,
    so a camera card can be read again after more photos were taken.

    Args:
        clock_offset: Added to the camera's times first, for a camera clock that is
            off (or set to local time) against the laptop's.

    Raises:
        WalkdownError: the folder does not exist, or the inspection is signed.
    """
    inspection = _open_inspection(store, inspection_id)
    folder = Path(folder).expanduser()
    if not folder.is_dir():
        raise WalkdownError("folder", f"{folder}: no such folder; give the folder of new photos")
    known = {p.sha256 for p in store.select(Photo, "inspection_id = ?", [inspection_id])}
    readings = store.select(Reading, "inspection_id = ?", [inspection_id])
    matches = []
    for path in sorted(folder.iterdir()):
        if path.suffix.lower() not in _PHOTO_SUFFIXES or not path.is_file():
            continue
        if file_sha256(path) in known:
            continue
        try:
            taken = read_exif(path)[1]
        except StoreError:
            continue
        component_id = _nearest(readings, taken + clock_offset, window) if taken else None
        photo = attach_photo_file(store, inspection.id, path, component_id)
        known.add(photo.sha256)
        matches.append(PhotoMatch(photo, component_id))
    return matches


def _nearest(readings: Sequence[Reading], when: datetime, window: timedelta) -> str | None:
    best = min(readings, key=lambda r: abs(r.taken_at - when), default=None)
    if best is None or abs(best.taken_at - when) > window:
        return None
    return best.component_id


# -------------------------------------------------------------------- completion


@dataclass(frozen=True)
class Missing:
    """One thing a complete walkdown still lacks.

    Attributes:
        component: The component concerned, or None for the inspection as a whole.
        what: One sentence saying what to do.
    """

    component: Component | None
    what: str


def missing_for_completion(store: Store, inspection_id: str) -> list[Missing]:
    """What the visit still lacks before it is complete, in walking order.

    For a complete (or initial) inspection: the readings the engine's
    completeness rule asks for. For every kind: components not yet graded.
    """
    inspection = _inspection(store, inspection_id)
    context = site_context(store, inspection.site_id)
    stops = walking_order(context.components, on=inspection.date)
    items: list[Missing] = []
    if inspection.kind in COMPLETE_KINDS:
        # The engine judges unfinished drafts; judge this one as such even if finished.
        judged = inspection.model_copy(update={"finished": False})
        readings = store.select(Reading, "inspection_id = ?", [inspection_id])
        records = SiteRecords(
            site=context.site,
            components=[s.component for s in stops],
            inspections=[judged],
            readings=readings,
        )
        # Judged as of the last reading, so that none is cut off as "later than the visit".
        day = max([judged.date, *(r.taken_at.date() for r in readings)])
        check = check_site(records, context.profile, day)
        items.extend(Missing(None, r.message) for r in check.results if r.rule == "incomplete")
    graded = {
        record.component_id
        for model in (Finding, NotInspected)  # a component not inspected needs no grade
        for record in store.select(model, "inspection_id = ?", [inspection_id])
    }
    items.extend(
        Missing(s.component, f"{s.component.tag}: not graded yet")
        for s in stops
        if s.component.id not in graded
    )
    return items


def opened_joints(store: Store, inspection_id: str) -> list[Component]:
    """The test joints opened in this visit for an isolated earth reading, by tag.

    A reading with the joint open was taken on the joint itself or on an electrode
    below it; each such joint must be closed again and re-tested before leaving.
    """
    return sorted(_opened(store, inspection_id)[0].values(), key=lambda c: _tag_key(c.tag))


def joints_not_retested(store: Store, inspection_id: str) -> list[str]:
    """Tags of opened joints with no reading across them since: neither a combined reading
    on the joint nor its down conductor's continuity, taken after it was last opened.

    The finishing question names them, so the re-test is not forgotten.
    """
    opened, last_open = _opened(store, inspection_id)
    readings = store.select(Reading, "inspection_id = ?", [inspection_id])
    left = []
    for joint in opened.values():
        across = {(joint.id, Quantity.EARTH_COMBINED), (joint.parent_id, Quantity.CONTINUITY)}
        if not any(
            (r.component_id, r.quantity) in across and r.taken_at >= last_open[joint.id]
            for r in readings
        ):
            left.append(joint.tag)
    return sorted(left, key=_tag_key)


def _opened(
    store: Store, inspection_id: str
) -> tuple[dict[str, Component], dict[str, datetime]]:
    """The joints opened in the visit by id, and when each was last read open."""
    inspection = _inspection(store, inspection_id)
    parts = {c.id: c for c in store.select(Component, "site_id = ?", [inspection.site_id])}
    opened: dict[str, Component] = {}
    last: dict[str, datetime] = {}
    for reading in store.select(Reading, "inspection_id = ? AND joint_state = ?", [
        inspection_id, JointState.OPEN.value
    ]):
        part = parts.get(reading.component_id)
        if part is not None and part.kind is ComponentKind.EARTH_ELECTRODE:
            part = parts.get(part.parent_id or "", part)
        if part is not None:
            opened[part.id] = part
            last[part.id] = max(reading.taken_at, last.get(part.id, reading.taken_at))
    return opened, last


def finish_inspection(
    store: Store,
    inspection_id: str,
    *,
    reconnected: bool = False,
    not_reconnected: str = "",
) -> list[Missing]:
    """Mark the visit finished and return what it still lacked, for the record.

    The screen lists `missing_for_completion` and asks before calling this; a
    finished visit counts towards the schedule and is no longer the open draft.
    A visit that opened test joints (`opened_joints`) is finished only once the
    inspector confirms each was reconnected and re-tested, or says why not; the
    answer is kept with the visit and printed in the report.

    Args:
        reconnected: The inspector confirms every opened test joint was reconnected
            and re-tested (combined reading, or continuity across the joint).
        not_reconnected: Why they were not, when they were not.

    Raises:
        WalkdownError: the inspection is signed already, or it opened test joints
            and neither a confirmation nor a reason is given (`field` is
            `reconnected`); nothing is saved.
    """
    inspection = _open_inspection(store, inspection_id)
    missing = missing_for_completion(store, inspection_id)
    changes: dict[str, Any] = {"finished": True}
    opened = opened_joints(store, inspection_id)
    if opened:
        reason = not_reconnected.strip()
        if not reconnected and not reason:
            tags = ", ".join(c.tag for c in opened)
            untested = joints_not_retested(store, inspection_id)
            since = f" (no reading across {', '.join(untested)} since)" if untested else ""
            raise WalkdownError(
                "reconnected",
                f"test joints opened for isolated readings ({tags}){since}: confirm each "
                "was reconnected and re-tested, or say why not",
            )
        changes["joints_reconnected"] = reconnected
        changes["reconnection_note"] = "" if reconnected else reason
    _update_inspection(store, inspection.id, changes)
    return missing


# ------------------------------------------------------------ continuing a draft


@dataclass(frozen=True)
class SavedEntries:
    """What a visit holds so far, for showing a continued walkdown as it was left.

    Attributes:
        readings: The judged reading per (component id, quantity).
        findings: The finding per component id.
        photos: How many photos per component id (None: on the inspection alone).
        not_inspected: The "not inspected" mark per component id.
    """

    readings: dict[tuple[str, Quantity], ReadingOutcome]
    findings: dict[str, Finding]
    photos: dict[str | None, int]
    not_inspected: dict[str, NotInspected] = field(default_factory=dict)


def saved_entries(store: Store, inspection_id: str) -> SavedEntries:
    """Every reading (judged), finding and photo count recorded in a visit so far."""
    inspection = _inspection(store, inspection_id)
    context = site_context(store, inspection.site_id)
    readings = {}
    for reading in store.select(Reading, "inspection_id = ?", [inspection_id], "taken_at"):
        readings[(reading.component_id, reading.quantity)] = judge_reading(
            store, inspection, reading, context
        )
    photos: dict[str | None, int] = {}
    for photo in store.select(Photo, "inspection_id = ?", [inspection_id]):
        photos[photo.component_id] = photos.get(photo.component_id, 0) + 1
    return SavedEntries(
        readings=readings,
        findings={
            f.component_id: f
            for f in store.select(Finding, "inspection_id = ?", [inspection_id])
            if f.component_id
        },
        photos=photos,
        not_inspected={
            n.component_id: n
            for n in store.select(NotInspected, "inspection_id = ?", [inspection_id])
        },
    )


# ------------------------------------------------------------ the visit itself

#: The visit's free-text details, by field, with what a form or a listing calls each.
#: The report prints them; the inspector types them once per visit.
DETAIL_LABELS: dict[str, str] = {
    "weather": "Weather",
    "not_inspected": "Not inspected",
    "accompanied_by": "Accompanied by",
    "changes_since_last": "Alterations",
    "notes": "Notes",
}


def set_soil(store: Store, inspection_id: str, soil: SoilCondition | str | None) -> Inspection:
    """Record the ground's state for the visit; earth readings rise in dry or frozen ground.

    Raises:
        WalkdownError: not a soil condition, or the inspection is signed.
    """
    return _update_inspection(store, inspection_id, {"soil": soil or None})


def set_details(
    store: Store,
    inspection_id: str,
    *,
    weather: str | None = None,
    not_inspected: str | None = None,
    accompanied_by: str | None = None,
    changes_since_last: str | None = None,
    notes: str | None = None,
) -> Inspection:
    """Record the circumstances of the visit that the report prints beside the readings.

    Each field left as None keeps what is recorded, so a command can change one
    without retyping the rest; an empty text clears it. Text is stored stripped.

    Args:
        weather: The weather during the visit (earth readings depend on it).
        not_inspected: What could not be inspected, and why.
        accompanied_by: Who went round with the inspector.
        changes_since_last: Changes to the structure since the last visit.
        notes: Anything else about the visit.

    Raises:
        WalkdownError: a text is too long (`field` names it), or the inspection is
            signed; nothing is saved.
    """
    given = {
        "weather": weather,
        "not_inspected": not_inspected,
        "accompanied_by": accompanied_by,
        "changes_since_last": changes_since_last,
        "notes": notes,
    }
    return _update_inspection(
        store, inspection_id, {k: v.strip() for k, v in given.items() if v is not None}
    )


def _update_inspection(store: Store, inspection_id: str, changes: dict[str, Any]) -> Inspection:
    """The open inspection with `changes` checked by its model and saved; unchanged, not saved.

    Saving nothing new keeps the audit log free of rows that change nothing.
    """
    inspection = _open_inspection(store, inspection_id)
    if all(getattr(inspection, name) == value for name, value in changes.items()):
        return inspection
    data = {**inspection.model_dump(), **changes}
    return _save(store, _validated(Inspection, data, now=inspection.date))


# ------------------------------------------------------------ what is not saved yet

#: What the inspector calls each field a draft can be kept for, besides the readings.
DRAFT_FIELDS: dict[str, str] = {
    "finding-text": "note",
    "finding-remedial": "remedial action",
    "finding-due": "due date",
    "photo": "photo path",
}


@dataclass(frozen=True)
class Drafts:
    """Text typed in a walkdown and not saved, and the component the walkdown was on.

    Attributes:
        texts: The text as typed, by (component id, field): `q-<quantity>` for a
            reading, else a key of `DRAFT_FIELDS`.
        place: The component the inspector was on, or None.
    """

    texts: dict[tuple[str, str], str]
    place: str | None


def keep_drafts(
    store: Store, inspection_id: str, texts: dict[tuple[str, str], str], place: str | None
) -> None:
    """Keep what is typed and not saved (blank text is not kept), and where the walk is.

    Drafts are not readings: nothing judges, counts, reports or sends them.
    """
    kept = {key: text for key, text in texts.items() if text.strip()}
    drafts.save_drafts(store, inspection_id, kept, place)


def drafts_for(store: Store, inspection_id: str) -> Drafts:
    """What a walkdown of this inspection left unsaved, and where it was."""
    texts, place = drafts.load_drafts(store, inspection_id)
    return Drafts(texts, place)


def forget_drafts(store: Store, inspection_id: str) -> None:
    """Let go of the inspection's drafts (it was finished; what was saved is what counts)."""
    drafts.drop_drafts(store, inspection_id)


def drafts_told(texts: dict[tuple[str, str], str], tags: dict[str, str]) -> str:
    """`2 entries were not saved: DC-06 continuity '70 mΩ', E-05 note 'clamp loose'`."""
    named = []
    for (component_id, field_key), text in texts.items():
        if field_key.startswith("q-"):
            what = Quantity(field_key.removeprefix("q-")).label
        else:
            what = DRAFT_FIELDS.get(field_key, field_key)
        named.append(f"{tags.get(component_id, component_id)} {what} {text!r}")
    count = len(named)
    entries = "1 entry was" if count == 1 else f"{count} entries were"
    return f"{entries} not saved: " + ", ".join(named)
