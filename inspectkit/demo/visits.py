"""A demo site's history: its visits, what was measured at each, and what was found.

Visits are counted back from the anchor: complete inspections on the site's
rhythm, visual ones between them, an initial one at installation. Readings
scatter with the season; the scenario's own cases (a failing electrode, a
drifting one, a missed test joint, a lapsed instrument, a strike) are set on
top, so that each shows clearly and nothing else looks like it.
"""

from __future__ import annotations

import math
import random
import uuid
from dataclasses import dataclass, field
from datetime import UTC, date, datetime, time, timedelta
from itertools import pairwise
from typing import Any

from dateutil.relativedelta import relativedelta

from inspectkit.demo.geometry import demo_geometry
from inspectkit.demo.ground import SOIL_FACTOR, soil_on, weather_in
from inspectkit.demo.scenario import DriftingEarth, ScenarioError, SiteSpec
from inspectkit.demo.system import System, lay_out
from inspectkit.model import (
    Component,
    ComponentKind,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    InspectionState,
    Inspector,
    Instrument,
    JointState,
    Method,
    NotInspected,
    Quantity,
    Reading,
    Record,
    Site,
    SoilCondition,
)

#: Who the demo writes as where no inspector did.
DEMO_USER = "demo"
#: Scattered readings stay below this multiple of the electrode's first and previous
#: reading, so that only the scenario's own drifting or failing electrodes stand out.
_MAX_RISE = 1.4
#: Chance that a visit notes a small defect, put right by the next visit.
_MINOR_FINDING_CHANCE = 0.2
#: Small defects a visit may note, by component kind: category, text, remedial action.
_MINOR_FINDINGS: tuple[tuple[ComponentKind, str, str, str], ...] = (
    (ComponentKind.AIR_TERMINAL, "fixing", "{tag} base fixing loose", "Tighten the {tag} base"),
    (
        ComponentKind.AIR_CONDUCTOR,
        "fixing",
        "Two clips missing on {tag}",
        "Refit clips on {tag} at about 1 m spacing",
    ),
    (ComponentKind.DOWN_CONDUCTOR, "labelling", "Label missing on {tag}", "Fit a label to {tag}"),
    (ComponentKind.TEST_JOINT, "access", "{tag} pit cover cracked", "Replace the {tag} cover"),
    (
        ComponentKind.BONDING,
        "bonding",
        "{tag} bond clamp painted over",
        "Clean the {tag} clamp faces and remake the bond",
    ),
    (
        ComponentKind.SPD,
        "spd",
        "{tag} status window dirty; indicator hard to read",
        "Clean the {tag} status window",
    ),
)
#: Scenario keys that are Site fields of the same name.
_SITE_FIELDS = {
    "name",
    "client",
    "address",
    "town",
    "latitude",
    "longitude",
    "profile",
    "critical",
    "explosive_risk",
    "height_m",
    "notes",
    "installer",
    "built_year",
    "use",
    "construction",
    "roofing",
    "design_standard",
    "air_termination",
    "access",
}
#: Scenario keys that are set on the latest complete inspection.
_LATEST_FIELDS = {"not_inspected", "accompanied_by", "changes_since_last"}


def _derived_id(visit: _Visit, component: Component, what: str) -> str:
    """A key made from the visit, the component and what it is, the same every build."""
    return str(uuid.uuid5(uuid.UUID(visit.inspection.id), f"{component.id} {what}"))


def stamps(at: datetime, by: str = DEMO_USER) -> dict[str, Any]:
    """Record times from the scenario, never from the clock."""
    return {"created_at": at, "updated_at": at, "updated_by": by}


@dataclass(frozen=True)
class Shot:
    """A photo still to draw and attach: what it shows, when, and where it belongs."""

    photo_id: str
    caption: str
    taken_at: datetime
    inspection_id: str
    component_id: str
    taken_by: str
    orientation: int
    seed: int


@dataclass
class DemoRecords:
    """What the generator produced: records in save order, and the photos still to draw."""

    records: list[Record] = field(default_factory=list)
    shots: list[Shot] = field(default_factory=list)


@dataclass
class DemoContext:
    """What every site's history draws on: one seeded generator, the anchor, people, instruments."""

    anchor: date
    rng: random.Random
    inspectors: dict[str, Inspector]
    logins: dict[str, str]
    #: Instrument key → (instrument, what it measures: "earth" or "low_ohm").
    instruments: dict[str, tuple[Instrument, str]]
    out: DemoRecords = field(default_factory=DemoRecords)

    @property
    def validation(self) -> dict[str, Any]:
        """Records are checked against the anchor, not the clock, so any anchor works."""
        return {"now": datetime.combine(self.anchor, time(12, 0), UTC)}

    def new_id(self) -> str:
        return str(uuid.UUID(int=self.rng.getrandbits(128), version=4))


@dataclass(frozen=True)
class _Special:
    """What the scenario sets for one visit instead of drawing it."""

    #: When a drifting electrode reaches its final value.
    drift_ends: date
    drifting: dict[str, DriftingEarth] = field(default_factory=dict)
    #: Electrode tag → isolated reading; down conductor tag → continuity.
    earth: dict[str, float] = field(default_factory=dict)
    continuity: dict[str, float] = field(default_factory=dict)
    #: Tags left untested.
    missing: frozenset[str] = frozenset()
    #: The earth tester taken along, whatever its calibration.
    instrument: Instrument | None = None


@dataclass
class _Visit:
    """One inspection being built, with the clock of its walkdown."""

    inspection: Inspection
    clock: datetime

    def tick(self, rng: random.Random) -> datetime:
        self.clock += timedelta(minutes=rng.randint(1, 4), seconds=rng.randint(0, 59))
        return self.clock


class _Refs(dict[str, _Visit]):
    """The site's visits by the names the scenario file uses; a wrong name is reported."""

    def __missing__(self, name: str) -> _Visit:
        known = ", ".join(sorted(self))
        raise ScenarioError(f"no visit {name!r} on this site; the site has: {known}")


class SiteHistory:
    """One site: its LPS, its visits, and what was measured and found at each."""

    def __init__(self, demo: DemoContext, spec: SiteSpec) -> None:
        self.demo = demo
        self.spec = spec
        self.rng = demo.rng
        self.anchor = demo.anchor
        self.start = self.anchor - relativedelta(years=spec.years)
        self.start -= timedelta(days=self.rng.randint(0, 40))
        created = stamps(datetime.combine(self.start, time(8, 0), UTC))
        self.site = Site.model_validate(
            {
                "id": demo.new_id(),
                "protection_level": spec.level,
                # The LPS went in when it had its initial inspection.
                "installed_year": self.start.year,
                "earthing_arrangement": spec.electrode.arrangement,
                **spec.model_dump(include=_SITE_FIELDS),
                **created,
            },
            context=demo.validation,
        )
        self.system: System = lay_out(
            spec, self.site.id, self.start, created, demo.new_id, self.rng
        )
        #: The values of each series so far (electrodes, conductors, bonds, the system).
        self.earth_history: dict[str, list[float]] = {}
        self.visits: list[_Visit] = []
        self.readings: list[Reading] = []
        self.findings: list[Finding] = []
        self.skipped: list[NotInspected] = []

    # ----------------------------------------------------------- the visits

    def _schedule(self) -> list[tuple[InspectionKind, date]]:
        """The site's visits: initial, complete ones counted back, visuals between."""
        spec, rng, anchor = self.spec, self.rng, self.anchor
        completes: list[date] = []
        day = anchor - timedelta(days=spec.last_complete_days)
        while day > self.start + timedelta(days=90):
            completes.append(day)
            day = day - relativedelta(months=spec.complete_every_months)
            day += timedelta(days=rng.randint(-5, 30))
        completes.reverse()
        visuals: list[date] = []
        if spec.visual_every_months:
            for begin, end in pairwise([self.start, *completes]):
                visuals.extend(self._visual_days(begin, end - timedelta(days=45)))
        if spec.visuals_after is not None:
            visuals.extend(anchor - timedelta(days=days) for days in spec.visuals_after)
        elif spec.visual_every_months and completes:
            visuals.extend(self._visual_days(completes[-1], anchor - timedelta(days=7)))
        plan = [(InspectionKind.INITIAL, self.start)]
        plan += [(InspectionKind.COMPLETE, d) for d in completes]
        plan += [(InspectionKind.VISUAL, d) for d in visuals]
        return sorted(plan, key=lambda item: item[1])

    def _visual_days(self, begin: date, before: date) -> list[date]:
        days = []
        day = begin
        while True:
            day = day + relativedelta(months=self.spec.visual_every_months)
            day -= timedelta(days=self.rng.randint(0, 15))
            if day >= before:
                return days
            days.append(day)

    def _visit(self, kind: InspectionKind, day: date, *, finished: bool = True) -> _Visit:
        rng = self.rng
        # The baseline is taken in normal ground, so later scatter is measured against it.
        soil = SoilCondition.NORMAL if kind is InspectionKind.INITIAL else soil_on(day, rng)
        key = rng.choice(self.spec.inspectors)
        start = datetime.combine(day, time(8, 0), UTC)
        if finished:
            start += timedelta(minutes=rng.randint(0, 150))
        inspection = Inspection.model_validate(
            {
                "id": self.demo.new_id(),
                "site_id": self.site.id,
                "kind": kind,
                "date": day,
                "inspector_id": self.demo.inspectors[key].id,
                "weather": weather_in(soil, rng),
                "soil": soil,
                "state": InspectionState.DRAFT,
                "finished": finished,
                **stamps(start, self.demo.logins[key]),
            },
            context=self.demo.validation,
        )
        visit = _Visit(inspection, start)
        self.visits.append(visit)
        return visit

    def _refs(self) -> _Refs:
        """Names the scenario file uses for this site's finished visits (complete-1 …)."""
        refs = _Refs()
        finished = [v for v in self.visits if v.inspection.finished]
        for kind in InspectionKind:
            of_kind = [v for v in finished if v.inspection.kind is kind]
            for n, visit in enumerate(reversed(of_kind), start=1):
                refs[f"{kind.value}-{n}"] = visit
        refs["initial"] = refs["initial-1"]
        refs["latest"] = finished[-1]
        return refs

    # --------------------------------------------------------- measurements

    def _reading(
        self,
        visit: _Visit,
        component: Component,
        quantity: Quantity,
        value: float,
        instrument: Instrument | None,
    ) -> None:
        taken = visit.tick(self.rng)
        earth = quantity in (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED)
        method, joint = {
            Quantity.EARTH_ISOLATED: (Method.FALL_OF_POTENTIAL_3P, JointState.OPEN),
            Quantity.EARTH_COMBINED: (Method.FALL_OF_POTENTIAL_3P, JointState.CLOSED),
            Quantity.STRIKE_COUNT: (Method.COUNTER_READ, None),
        }.get(quantity, (Method.LOW_OHM_4W, None))
        reading = Reading.model_validate(
            {
                "id": self.demo.new_id(),
                "inspection_id": visit.inspection.id,
                "component_id": component.id,
                "quantity": quantity,
                "value": value,
                "method": method,
                "joint_state": joint,
                "instrument_id": instrument.id if instrument else None,
                "taken_at": taken,
                "soil": visit.inspection.soil if earth else None,
                **stamps(taken, visit.inspection.updated_by),
            },
            context=self.demo.validation,
        )
        self.readings.append(reading)

    def _instrument(self, use: str, day: date) -> Instrument:
        """The main instrument mostly, a spare now and then, never one out of calibration."""
        usable = [
            i
            for i, kind in self.demo.instruments.values()
            if kind == use and (i.calibration_due is None or i.calibration_due >= day)
        ]
        if len(usable) > 1 and self.rng.random() < 0.2:
            return usable[1]
        return usable[0]

    def _earth_value(self, electrode: Component, visit: _Visit, special: _Special) -> float:
        rng = self.rng
        factor = SOIL_FACTOR[visit.inspection.soil or SoilCondition.NORMAL]
        drift = special.drifting.get(electrode.tag)
        if electrode.tag in special.earth:
            value = special.earth[electrode.tag]
        elif drift is not None:
            span = (special.drift_ends - self.start).days or 1
            share = min(max((visit.inspection.date - self.start).days / span, 0.0), 1.0)
            trend = drift.from_ohms + (drift.to_ohms - drift.from_ohms) * share
            # A quarter of the seasonal swing, so the steady rise shows through.
            value = trend * (1 + 0.25 * (factor - 1)) * math.exp(rng.gauss(0, 0.015))
        else:
            value = self.system.typical[electrode.id] * factor * math.exp(rng.gauss(0, 0.04))
            value = self._within_scatter(electrode.id, value)
        if drift is not None or electrode.tag in special.earth:
            self.earth_history.setdefault(electrode.id, []).append(value)
        return round(value, 1 if value >= 10 else 2)

    def _continuity_value(self, down: Component, special: _Special) -> float:
        if down.tag in special.continuity:
            return special.continuity[down.tag]
        value = self.system.typical[down.id] * math.exp(self.rng.gauss(0, 0.08))
        return round(self._within_scatter(down.id, value), 3)

    def _within_scatter(self, key: str, value: float) -> float:
        """The value kept below `_MAX_RISE` times the first and the previous of its series,
        so that only the scenario's own cases rise enough to be watched."""
        history = self.earth_history.setdefault(key, [])
        if history:
            value = min(value, _MAX_RISE * history[0], _MAX_RISE * history[-1])
        history.append(value)
        return value

    def _tests(self, visit: _Visit, special: _Special, *, joints: int | None = None) -> None:
        """Continuity per down conductor, each electrode isolated, the whole system, bonds.

        Args:
            joints: test only the first this many down conductors and test joints, and
                leave the whole-system and bonding tests for later (a walkdown under way).
        """
        rng, day = self.rng, visit.inspection.date
        low_ohm = self._instrument("low_ohm", day)
        earth = special.instrument or self._instrument("earth", day)
        for down in self.system.of_kind(ComponentKind.DOWN_CONDUCTOR)[:joints]:
            if down.tag not in special.missing:
                value = self._continuity_value(down, special)
                self._reading(visit, down, Quantity.CONTINUITY, value, low_ohm)
        values = []
        for electrode in self.system.of_kind(ComponentKind.EARTH_ELECTRODE)[:joints]:
            if electrode.tag not in special.missing:
                values.append(self._earth_value(electrode, visit, special))
                self._reading(visit, electrode, Quantity.EARTH_ISOLATED, values[-1], earth)
        if joints is not None:
            return
        # Electrodes in parallel, less their mutual resistance (invented spread).
        tj01 = self.system.tagged("TJ-01")
        combined = rng.uniform(1.3, 1.7) / sum(1 / v for v in values)
        combined = round(self._within_scatter(f"{tj01.id}:combined", combined), 2)
        self._reading(visit, tj01, Quantity.EARTH_COMBINED, combined, earth)
        for bond in self.system.of_kind(ComponentKind.BONDING):
            value = self.system.typical[bond.id] * math.exp(rng.gauss(0, 0.1))
            value = round(self._within_scatter(bond.id, value), 3)
            self._reading(visit, bond, Quantity.BONDING, value, low_ohm)

    def _counter_readings(self, visit: _Visit, count: int) -> None:
        """Every counter read at every visit; only SC-01 ever moves."""
        for counter in self.system.of_kind(ComponentKind.STRIKE_COUNTER):
            value = count if counter.tag == "SC-01" else self.spec.counter_start
            self._reading(visit, counter, Quantity.STRIKE_COUNT, value, None)

    def _post_strike_tests(self, visit: _Visit, special: _Special) -> None:
        """After a strike: the struck down conductor and the electrode below it."""
        down = self.system.parent(self.system.tagged("SC-01"))
        electrode = self.system.child(self.system.child(down))
        day = visit.inspection.date
        continuity = self._continuity_value(down, special)
        self._reading(
            visit, down, Quantity.CONTINUITY, continuity, self._instrument("low_ohm", day)
        )
        earth = self._earth_value(electrode, visit, special)
        self._reading(
            visit, electrode, Quantity.EARTH_ISOLATED, earth, self._instrument("earth", day)
        )

    # ------------------------------------------------------------- building

    def build(self) -> None:
        """Make the site's records and add them, in save order, to the demo's output.

        Raises:
            ScenarioError: the site's entry names a tag or a visit the site does not have.
        """
        try:
            self._build()
        except ScenarioError as exc:
            raise ScenarioError(f"site {self.spec.key}: {exc}") from None

    def _build(self) -> None:
        spec = self.spec
        named = [*spec.failing_earth, *spec.failing_continuity, *spec.drifting_earth, *spec.skipped]
        for tag in [*(n.tag for n in named), *spec.missing_readings]:
            self.system.tagged(tag)
        for kind, day in self._schedule():
            self._visit(kind, day)
        refs = self._refs()
        strikes = {refs[s.at].inspection.id: s for s in spec.strikes}
        for strike in spec.strikes:
            if strike.post_strike_days:
                day = refs[strike.at].inspection.date + timedelta(days=strike.post_strike_days)
                self._visit(InspectionKind.POST_STRIKE, day)
        self.visits.sort(key=lambda v: v.inspection.date)
        refs = self._refs()
        latest = refs["complete-1"]
        usual = _Special(latest.inspection.date, {d.tag: d for d in spec.drifting_earth})
        lapsed = (
            self.demo.instruments[spec.lapsed_instrument][0] if spec.lapsed_instrument else None
        )
        scenario = _Special(
            usual.drift_ends,
            usual.drifting,
            earth={f.tag: f.ohms for f in spec.failing_earth},
            continuity={f.tag: f.ohms for f in spec.failing_continuity},
            missing=frozenset(spec.missing_readings),
            instrument=lapsed,
        )
        count = spec.counter_start
        for visit in self.visits:
            special = scenario if visit is latest else usual
            kind = visit.inspection.kind
            if visit.inspection.id in strikes:
                count += strikes[visit.inspection.id].increment
            if kind in (InspectionKind.INITIAL, InspectionKind.COMPLETE):
                self._tests(visit, special)
            elif kind is InspectionKind.POST_STRIKE:
                self._post_strike_tests(visit, special)
            self._counter_readings(visit, count)
        latest_fields = spec.model_dump(include=_LATEST_FIELDS)
        if any(latest_fields.values()):
            latest.inspection = latest.inspection.model_copy(update=latest_fields)
        self._minor_findings()
        self._scenario_findings(refs)
        self._skip_parts(latest)
        finished = [v for v in self.visits if v.inspection.finished]
        for visit in {id(v): v for v in (latest, *finished[-1:])}.values():
            self._sound_grades(visit)
        if spec.draft_today:
            self._draft(count, usual)
        opened = {r.inspection_id for r in self.readings if r.joint_state is JointState.OPEN}
        for visit in self.visits:
            confirmed = visit.inspection.finished and visit.inspection.id in opened
            visit.inspection = visit.inspection.model_copy(
                update={
                    "updated_at": visit.clock,
                    "joints_reconnected": True if confirmed else None,
                }
            )
        self.demo.out.records.extend(
            [
                self.site,
                *self.system.components,
                *(v.inspection for v in self.visits),
                *self.readings,
                *self.findings,
                *self.skipped,
                *demo_geometry(
                    spec.geometry, self.site, self.system.components, stamps(self.site.created_at)
                ),
            ]
        )

    # The marks below take their ids from the visit and the component, and their times
    # from the visit's clock, not from the seeded generator (as `_sound_grades` does):
    # the rest of the scenario draws the same numbers as it did before they were added.

    def _skip_parts(self, visit: _Visit) -> None:
        """The components the scenario says the latest complete inspection could not inspect."""
        for part in self.spec.skipped:
            component = self.system.tagged(part.tag)
            self.skipped.append(
                NotInspected(
                    id=_derived_id(visit, component, "not inspected"),
                    inspection_id=visit.inspection.id,
                    component_id=component.id,
                    reason=part.reason,
                    text=part.text,
                    **stamps(visit.clock, visit.inspection.updated_by),
                )
            )

    def _finding(
        self,
        visit: _Visit,
        component: Component,
        grade: Grade,
        words: tuple[str, str, str],
        due_days: int | None,
        resolved: _Visit | None,
    ) -> None:
        """A finding; `words` are its category, text and remedial action."""
        at = visit.tick(self.rng)
        category, text, remedial = words
        self.findings.append(
            Finding(
                id=self.demo.new_id(),
                inspection_id=visit.inspection.id,
                component_id=component.id,
                grade=grade,
                category=category,
                text=text,
                remedial_action=remedial,
                due_by=visit.inspection.date + timedelta(days=due_days) if due_days else None,
                resolved_by=resolved.inspection.id if resolved else None,
                created_at=at,
                updated_at=resolved.clock if resolved else at,
                updated_by=(resolved or visit).inspection.updated_by,
            )
        )

    def _repeat(self, earlier: _Visit, visit: _Visit, component: Component) -> None:
        """The finding just made repeats `earlier`'s on the component, which it closes."""
        new = self.findings[-1]
        for n, finding in enumerate(self.findings):
            if finding.inspection_id == earlier.inspection.id and finding.component_id == (
                component.id
            ):
                self.findings[n] = finding.model_copy(
                    update={"resolved_by": visit.inspection.id, "updated_at": new.created_at}
                )
                self.findings[-1] = new.model_copy(update={"same_as_id": finding.id})
                return
        raise ValueError(f"{component.tag}: no finding at the visit the repeat names")

    def _sound_grades(self, visit: _Visit) -> None:
        """Every other component in service graded sound, as a walkdown grades them all.

        The ids are derived from the visit and the component, not drawn, so that the
        rest of the scenario draws the same numbers as before.
        """
        graded = {f.component_id for f in self.findings if f.inspection_id == visit.inspection.id}
        graded |= {s.component_id for s in self.skipped if s.inspection_id == visit.inspection.id}
        day = visit.inspection.date
        for component in self.system.components:
            if component.id in graded or (component.retired_on and component.retired_on <= day):
                continue
            if component.installed_on and component.installed_on > day:
                continue
            self.findings.append(
                Finding(
                    id=str(uuid.uuid5(uuid.NAMESPACE_OID, f"{visit.inspection.id}/{component.id}")),
                    inspection_id=visit.inspection.id,
                    component_id=component.id,
                    grade=Grade.SOUND,
                    created_at=visit.clock,
                    updated_at=visit.clock,
                    updated_by=visit.inspection.updated_by,
                )
            )

    def _minor_findings(self) -> None:
        """Small defects noted now and then, each put right by the next visit."""
        rng = self.rng
        for visit, following in pairwise(self.visits):
            if rng.random() >= _MINOR_FINDING_CHANCE:
                continue
            kind, category, text, remedial = rng.choice(_MINOR_FINDINGS)
            candidates = self.system.of_kind(kind)
            if not candidates:
                continue
            tag = rng.choice(candidates).tag
            words = (category, text.format(tag=tag), remedial.format(tag=tag))
            self._finding(
                visit, self.system.tagged(tag), Grade.NEEDS_ATTENTION, words, 90, following
            )

    def _scenario_findings(self, refs: _Refs) -> None:
        for spec in self.spec.finding:
            visit = refs[spec.at]
            component = self.system.tagged(spec.on)
            resolved = refs[spec.resolved_at] if spec.resolved_at else None
            words = (spec.category, spec.text, spec.remedial)
            self._finding(visit, component, spec.grade, words, spec.due_days, resolved)
            if spec.same_as:
                self._repeat(refs[spec.same_as], visit, component)
            if spec.photo:
                self.demo.out.shots.append(
                    Shot(
                        photo_id=self.demo.new_id(),
                        caption=spec.photo,
                        taken_at=visit.tick(self.rng),
                        inspection_id=visit.inspection.id,
                        component_id=component.id,
                        taken_by=visit.inspection.updated_by,
                        orientation=spec.photo_orientation,
                        seed=self.rng.getrandbits(32),
                    )
                )

    def _draft(self, count: int, usual: _Special) -> None:
        """Today's walkdown, half done: the first half of the test joints measured."""
        visit = self._visit(InspectionKind(self.spec.draft_today), self.anchor, finished=False)
        self._counter_readings(visit, count)
        if visit.inspection.kind is InspectionKind.COMPLETE:
            joints = max(1, len(self.system.of_kind(ComponentKind.TEST_JOINT)) // 2)
            self._tests(visit, usual, joints=joints)
        terminal = self.system.of_kind(ComponentKind.AIR_TERMINAL)[0]
        words = (
            "fixing",
            f"{terminal.tag} leaning; base bolt loose",
            f"Tighten the {terminal.tag} base bolt",
        )
        self._finding(visit, terminal, Grade.NEEDS_ATTENTION, words, 60, None)
