"""Build the demo database from the scenario file, around an anchor date.

Everything is drawn from one `random.Random` seeded from the anchor, record ids
included, and every time is a scenario time: the same anchor gives the same
records. Dates are counted back from the anchor, so whenever the demo is built
it shows the same mix of due, overdue, failing and drifting items.
"""

from __future__ import annotations

import math
import random
import tempfile
import uuid
from dataclasses import dataclass, field
from datetime import UTC, date, datetime, time, timedelta
from itertools import pairwise
from pathlib import Path
from typing import Any

from dateutil.relativedelta import relativedelta

from inspectkit.demo.photos import draw_photo
from inspectkit.demo.scenario import DriftingEarth, Scenario, SiteSpec, load_scenario
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
    Photo,
    Quantity,
    Reading,
    Record,
    Site,
    SoilCondition,
)
from inspectkit.store import Store
from inspectkit.store.photos import put_file, read_exif

#: Ground state by month, as (condition, weight): wet spring and autumn, dry summer,
#: frozen spells in winter (an inland temperate climate; invented for the demo).
_SOIL_BY_MONTH: dict[int, tuple[tuple[SoilCondition, float], ...]] = {
    **dict.fromkeys(
        (12, 1, 2),
        ((SoilCondition.FROZEN, 0.4), (SoilCondition.WET, 0.35), (SoilCondition.NORMAL, 0.25)),
    ),
    **dict.fromkeys((3, 4, 10, 11), ((SoilCondition.WET, 0.6), (SoilCondition.NORMAL, 0.4))),
    **dict.fromkeys(
        (5, 9), ((SoilCondition.NORMAL, 0.7), (SoilCondition.DRY, 0.2), (SoilCondition.WET, 0.1))
    ),
    **dict.fromkeys((6, 7, 8), ((SoilCondition.DRY, 0.6), (SoilCondition.NORMAL, 0.4))),
}
#: How much an electrode's resistance moves with the ground (our default for the demo:
#: readings rise in dry or frozen ground and fall in wet ground, common practice).
_SOIL_FACTOR = {
    SoilCondition.FROZEN: 1.3,
    SoilCondition.DRY: 1.22,
    SoilCondition.NORMAL: 1.0,
    SoilCondition.WET: 0.88,
}
_WEATHER = {
    SoilCondition.FROZEN: ("clear, hard frost", -6, 1),
    SoilCondition.DRY: ("dry, sunny", 18, 29),
    SoilCondition.NORMAL: ("dry, light cloud", 8, 18),
    SoilCondition.WET: ("overcast after rain", 4, 13),
}
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
_COMPASS = (
    "north",
    "north-east",
    "east",
    "south-east",
    "south",
    "south-west",
    "west",
    "north-west",
)
#: Who the demo writes as in the audit log.
DEMO_USER = "demo"


def build_demo(path: Path, anchor: date) -> Path:
    """Write a fresh demo database (and its photos beside it) at `path`; return the path.

    Raises:
        FileExistsError: `path` exists already; the demo never writes into a database.
    """
    path = Path(path)
    if path.exists():
        raise FileExistsError(f"{path} exists already; give a new path for the demo database")
    demo = DemoBuilder(load_scenario(), anchor).build()
    with Store.open(path, user=DEMO_USER) as store, tempfile.TemporaryDirectory() as scratch:
        photos = [_store_photo(store, Path(scratch), shot) for shot in demo.shots]
        with store.transaction():
            store.save_all(demo.records, touch=False)
            store.save_all(photos, touch=False)
    return path


@dataclass(frozen=True)
class _Shot:
    """A photo to draw and attach: what it shows and when."""

    photo_id: str
    caption: str
    taken_at: datetime
    inspection: Inspection
    component_id: str | None
    orientation: int
    seed: int


@dataclass
class DemoRecords:
    """What the generator produced: records in save order, and the photos still to draw."""

    records: list[Record] = field(default_factory=list)
    shots: list[_Shot] = field(default_factory=list)


def _store_photo(store: Store, scratch: Path, shot: _Shot) -> Photo:
    """Draw the photo, put its file in the store's folder, and make its record."""
    name = f"{shot.caption.replace(' ', '_')}.jpg"
    source = draw_photo(
        scratch / name,
        shot.caption,
        shot.taken_at,
        random.Random(shot.seed),
        orientation=shot.orientation,
    )
    orientation, taken_at, width, height = read_exif(source)
    return Photo(
        id=shot.photo_id,
        sha256=put_file(store, source),
        original_name=name,
        caption=shot.caption,
        taken_at=taken_at,
        inspection_id=shot.inspection.id,
        component_id=shot.component_id,
        orientation=orientation,
        width=width,
        height=height,
        created_at=shot.taken_at,
        updated_at=shot.taken_at,
        updated_by=shot.inspection.updated_by,
    )


@dataclass(frozen=True)
class _Special:
    """What the scenario sets for one visit instead of drawing it."""

    #: Date of the site's latest complete inspection; a drifting electrode peaks there.
    last_complete: date
    drifting: dict[str, DriftingEarth] = field(default_factory=dict)
    #: Electrode tag → isolated reading, down conductor tag → continuity.
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


class DemoBuilder:
    """Turns the scenario into records for one anchor date."""

    def __init__(self, scenario: Scenario, anchor: date) -> None:
        self.scenario = scenario
        self.anchor = anchor
        self.rng = random.Random(f"inspectkit-demo:{anchor.isoformat()}")
        #: Records are validated against the anchor, not the clock, so any anchor works.
        self.context = {"now": datetime.combine(anchor, time(12, 0), UTC)}
        self.out = DemoRecords()
        self.inspectors: dict[str, Inspector] = {}
        self.logins = {spec.key: spec.login for spec in scenario.inspector}
        self.instruments: dict[str, tuple[Instrument, str]] = {}

    def new_id(self) -> str:
        return str(uuid.UUID(int=self.rng.getrandbits(128), version=4))

    def build(self) -> DemoRecords:
        first = min(self.anchor - relativedelta(years=s.years) for s in self.scenario.site)
        since = datetime.combine(first - timedelta(days=60), time(9, 0), UTC)
        for spec in self.scenario.inspector:
            self.inspectors[spec.key] = Inspector(
                id=self.new_id(),
                name=spec.name,
                organisation=self.scenario.contractor.name,
                qualification=spec.qualification,
                created_at=since,
                updated_at=since,
                updated_by=spec.login,
            )
        for spec in self.scenario.instrument:
            instrument = Instrument(
                id=self.new_id(),
                description=spec.description,
                serial=spec.serial,
                calibration_due=self.anchor + timedelta(days=spec.calibration_due_days),
                created_at=since,
                updated_at=since,
                updated_by=DEMO_USER,
            )
            self.instruments[spec.key] = (instrument, spec.use)
        self.out.records.extend(self.inspectors.values())
        self.out.records.extend(i for i, _ in self.instruments.values())
        for spec in self.scenario.site:
            _SiteBuilder(self, spec).build()
        return self.out


class _SiteBuilder:
    """One site: its LPS, its visits, and what was measured and found at each."""

    def __init__(self, demo: DemoBuilder, spec: SiteSpec) -> None:
        self.demo = demo
        self.spec = spec
        self.rng = demo.rng
        self.anchor = demo.anchor
        self.start = self.anchor - relativedelta(years=spec.years)
        self.start -= timedelta(days=self.rng.randint(0, 40))
        self.created = datetime.combine(self.start, time(8, 0), UTC)
        self.site = Site(
            id=demo.new_id(),
            name=spec.name,
            client=spec.client,
            address=spec.address,
            town=spec.town,
            latitude=spec.latitude,
            longitude=spec.longitude,
            protection_level=spec.level,
            profile=spec.profile,
            critical=spec.critical,
            explosive_risk=spec.explosive_risk,
            height_m=spec.height_m,
            notes=spec.notes,
            **self._stamps(self.created),
        )
        self.components: list[Component] = []
        self.by_tag: dict[str, Component] = {}
        self.earth_base: dict[str, float] = {}
        self.earth_history: dict[str, list[float]] = {}
        self.continuity_base: dict[str, float] = {}
        self.bonding_base: dict[str, float] = {}
        self.visits: list[_Visit] = []
        self.readings: list[Reading] = []
        self.findings: list[Finding] = []

    # ------------------------------------------------------------ the system

    def _stamps(self, at: datetime, by: str = DEMO_USER) -> dict[str, Any]:
        return {"created_at": at, "updated_at": at, "updated_by": by}

    def _component(
        self, kind: ComponentKind, tag: str, location: str, material: str, parent: str | None = None
    ) -> Component:
        component = Component(
            id=self.demo.new_id(),
            site_id=self.site.id,
            kind=kind,
            tag=tag,
            location=location,
            material=material,
            installed_on=self.start,
            parent_id=parent,
            electrode_type=self.spec.electrode if kind is ComponentKind.EARTH_ELECTRODE else None,
            **self._stamps(self.created),
        )
        self.components.append(component)
        self.by_tag[component.tag] = component
        return component

    def _system(self) -> None:
        spec, rng = self.spec, self.rng
        for n in range(1, spec.air_terminals + 1):
            corner = _COMPASS[(n - 1) % len(_COMPASS)]
            self._component(
                ComponentKind.AIR_TERMINAL,
                f"AT-{n:02d}",
                f"roof, {corner} side",
                "aluminium rod 16 mm",
            )
        for n in range(1, spec.mesh_conductors + 1):
            self._component(
                ComponentKind.AIR_CONDUCTOR,
                f"AC-{n:02d}",
                f"roof mesh, run {n}",
                "aluminium 8 mm round",
            )
        low, high = spec.earth_ohms
        for n in range(1, spec.down_conductors + 1):
            side = _COMPASS[(n - 1) * len(_COMPASS) // spec.down_conductors]
            down = self._component(
                ComponentKind.DOWN_CONDUCTOR,
                f"DC-{n:02d}",
                f"{side} elevation",
                "copper tape 25 × 3 mm",
            )
            joint = self._component(
                ComponentKind.TEST_JOINT,
                f"TJ-{n:02d}",
                f"{side} elevation, 0.5 m above ground",
                "gunmetal test clamp",
                down.id,
            )
            electrode = self._component(
                ComponentKind.EARTH_ELECTRODE,
                f"E-{n:02d}",
                f"below TJ-{n:02d}, inspection pit",
                "copper-bonded steel rod 2.4 m"
                if spec.electrode.value == "rod"
                else "copper plate",
                joint.id,
            )
            self.earth_base[electrode.id] = rng.uniform(low, high)
            self.continuity_base[down.id] = rng.uniform(0.02, 0.09)
        for n, what in enumerate(spec.bonding, start=1):
            bond = self._component(
                ComponentKind.BONDING, f"BD-{n:02d}", what, "copper braid 50 mm²"
            )
            self.bonding_base[bond.id] = rng.uniform(0.01, 0.25)
        for n in range(1, spec.spds + 1):
            self._component(
                ComponentKind.SPD, f"SPD-{n:02d}", f"distribution board {n}", "type 1+2"
            )
        for n, down_tag in enumerate(spec.strike_counters, start=1):
            self._component(
                ComponentKind.STRIKE_COUNTER,
                f"SC-{n:02d}",
                f"on {down_tag}, 2 m above ground",
                "impulse counter",
                self.by_tag[down_tag].id,
            )

    def of_kind(self, kind: ComponentKind) -> list[Component]:
        return [c for c in self.components if c.kind is kind]

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
        if kind is InspectionKind.INITIAL:
            soil = SoilCondition.NORMAL
        else:
            conditions, weights = zip(*_SOIL_BY_MONTH[day.month], strict=True)
            soil = rng.choices(conditions, weights)[0]
        words, coldest, warmest = _WEATHER[soil]
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
                "weather": f"{words}, {rng.randint(coldest, warmest)} °C",
                "soil": soil,
                "state": InspectionState.DRAFT,
                "finished": finished,
                **self._stamps(start, self.demo.logins[key]),
            },
            context=self.demo.context,
        )
        visit = _Visit(inspection, start)
        self.visits.append(visit)
        return visit

    # --------------------------------------------------------- measurements

    def _reading(
        self,
        visit: _Visit,
        component: Component,
        quantity: Quantity,
        value: float,
        method: Method,
        instrument: Instrument | None,
        joint: JointState | None = None,
    ) -> None:
        taken = visit.tick(self.rng)
        earth = quantity in (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED)
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
                **self._stamps(taken, visit.inspection.updated_by),
            },
            context=self.demo.context,
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

    def _earth_value(self, electrode: Component, visit: _Visit, role: _Special) -> float:
        rng = self.rng
        soil = visit.inspection.soil or SoilCondition.NORMAL
        factor = _SOIL_FACTOR[soil]
        drift = role.drifting.get(electrode.tag)
        history = self.earth_history.setdefault(electrode.id, [])
        if electrode.tag in role.earth:
            value = role.earth[electrode.tag]
        elif drift is not None:
            span = (role.last_complete - self.start).days or 1
            share = min(max((visit.inspection.date - self.start).days / span, 0.0), 1.0)
            trend = drift.from_ohms + (drift.to_ohms - drift.from_ohms) * share
            value = trend * (1 + 0.25 * (factor - 1)) * math.exp(rng.gauss(0, 0.015))
        else:
            value = self.earth_base[electrode.id] * factor * math.exp(rng.gauss(0, 0.04))
            if history:
                value = min(value, _MAX_RISE * history[0], _MAX_RISE * history[-1])
        history.append(value)
        return round(value, 1 if value >= 10 else 2)

    def _complete_readings(
        self, visit: _Visit, role: _Special, *, joints: int | None = None
    ) -> None:
        """Continuity per down conductor, each electrode isolated, the whole system, bonds."""
        rng, day = self.rng, visit.inspection.date
        low_ohm = self._instrument("low_ohm", day)
        earth = role.instrument or self._instrument("earth", day)
        skipped = role.missing
        downs = self.of_kind(ComponentKind.DOWN_CONDUCTOR)[:joints]
        for down in downs:
            if down.tag in skipped:
                continue
            value = role.continuity.get(down.tag)
            if value is None:
                value = round(self.continuity_base[down.id] * math.exp(rng.gauss(0, 0.08)), 3)
            self._reading(visit, down, Quantity.CONTINUITY, value, Method.LOW_OHM_4W, low_ohm)
        electrodes = self.of_kind(ComponentKind.EARTH_ELECTRODE)[:joints]
        values = []
        for electrode in electrodes:
            if electrode.tag in skipped:
                continue
            value = self._earth_value(electrode, visit, role)
            values.append(value)
            self._reading(
                visit,
                electrode,
                Quantity.EARTH_ISOLATED,
                value,
                Method.FALL_OF_POTENTIAL_3P,
                earth,
                JointState.OPEN,
            )
        if joints is not None:
            return
        parallel = 1 / sum(1 / v for v in values)
        self._reading(
            visit,
            self.by_tag["TJ-01"],
            Quantity.EARTH_COMBINED,
            round(parallel * rng.uniform(1.3, 1.7), 2),
            Method.CLAMP_ON,
            earth,
            JointState.CLOSED,
        )
        for bond in self.of_kind(ComponentKind.BONDING):
            value = round(self.bonding_base[bond.id] * math.exp(rng.gauss(0, 0.1)), 3)
            self._reading(visit, bond, Quantity.BONDING, value, Method.LOW_OHM_4W, low_ohm)

    def _counter_readings(self, visit: _Visit, count: int) -> None:
        for counter in self.of_kind(ComponentKind.STRIKE_COUNTER):
            value = count if counter.tag == "SC-01" else self.spec.counter_start
            self._reading(visit, counter, Quantity.STRIKE_COUNT, value, Method.COUNTER_READ, None)

    def _post_strike_readings(self, visit: _Visit, role: _Special) -> None:
        """After a strike: the struck down conductor, its electrode, and the counter."""
        counter = self.by_tag["SC-01"]
        down = next(c for c in self.components if c.id == counter.parent_id)
        joint = next(
            c for c in self.components if c.parent_id == down.id and c.tag.startswith("TJ")
        )
        electrode = next(c for c in self.components if c.parent_id == joint.id)
        day = visit.inspection.date
        value = round(self.continuity_base[down.id] * math.exp(self.rng.gauss(0, 0.08)), 3)
        self._reading(
            visit,
            down,
            Quantity.CONTINUITY,
            value,
            Method.LOW_OHM_4W,
            self._instrument("low_ohm", day),
        )
        self._reading(
            visit,
            electrode,
            Quantity.EARTH_ISOLATED,
            self._earth_value(electrode, visit, role),
            Method.FALL_OF_POTENTIAL_3P,
            self._instrument("earth", day),
            JointState.OPEN,
        )

    # ------------------------------------------------------------- building

    def build(self) -> None:
        spec = self.spec
        self._system()
        plan = self._schedule()
        last_complete = max(d for k, d in plan if k is InspectionKind.COMPLETE)
        strikes = {}
        for kind, day in plan:
            self._visit(kind, day)
        refs = self._refs()
        for strike in spec.strikes:
            strikes[refs[strike.at].inspection.id] = strike
        post_strike = [
            (refs[s.at].inspection.date + timedelta(days=s.post_strike_days), s)
            for s in spec.strikes
            if s.post_strike_days
        ]
        for day, _ in post_strike:
            self._visit(InspectionKind.POST_STRIKE, day)
        self.visits.sort(key=lambda v: v.inspection.date)
        refs = self._refs()
        latest_complete = refs["complete-1"].inspection.id
        count = spec.counter_start
        for visit in self.visits:
            inspection = visit.inspection
            latest = inspection.id == latest_complete
            role = _Special(last_complete, {d.tag: d for d in spec.drifting_earth})
            if latest:
                role = _Special(
                    last_complete,
                    role.drifting,
                    earth={f.tag: f.ohms for f in spec.failing_earth},
                    continuity={f.tag: f.ohms for f in spec.failing_continuity},
                    missing=frozenset(spec.missing_readings),
                    instrument=(
                        self.demo.instruments[spec.lapsed_instrument][0]
                        if spec.lapsed_instrument
                        else None
                    ),
                )
            if inspection.id in strikes:
                count += strikes[inspection.id].increment
            if inspection.kind in (InspectionKind.INITIAL, InspectionKind.COMPLETE):
                self._complete_readings(visit, role)
            elif inspection.kind is InspectionKind.POST_STRIKE:
                self._post_strike_readings(visit, role)
            self._counter_readings(visit, count)
            if latest and spec.not_inspected:
                visit.inspection = visit.inspection.model_copy(
                    update={"not_inspected": spec.not_inspected}
                )
        self._minor_findings()
        self._scenario_findings(refs)
        if spec.draft_today:
            self._draft(count)
        for visit in self.visits:
            visit.inspection = visit.inspection.model_copy(update={"updated_at": visit.clock})
        self.demo.out.records.extend(
            [self.site, *self.components, *(v.inspection for v in self.visits)]
        )
        self.demo.out.records.extend(self.readings)
        self.demo.out.records.extend(self.findings)

    def _refs(self) -> dict[str, _Visit]:
        """Names the scenario file uses for this site's finished visits."""
        refs: dict[str, _Visit] = {}
        finished = [v for v in self.visits if v.inspection.finished]
        for kind in InspectionKind:
            of_kind = [v for v in finished if v.inspection.kind is kind]
            for n, visit in enumerate(reversed(of_kind), start=1):
                refs[f"{kind.value}-{n}"] = visit
        refs["initial"] = refs["initial-1"]
        refs["latest"] = finished[-1]
        return refs

    def _finding(
        self,
        visit: _Visit,
        component: Component | None,
        grade: Grade,
        category: str,
        text: str,
        remedial: str,
        due_days: int | None,
        resolved: _Visit | None,
    ) -> Finding:
        at = visit.tick(self.rng)
        by = visit.inspection.updated_by
        finding = Finding(
            id=self.demo.new_id(),
            inspection_id=visit.inspection.id,
            component_id=component.id if component else None,
            grade=grade,
            category=category,
            text=text,
            remedial_action=remedial,
            due_by=visit.inspection.date + timedelta(days=due_days) if due_days else None,
            resolved_by=resolved.inspection.id if resolved else None,
            created_at=at,
            updated_at=resolved.clock if resolved else at,
            updated_by=resolved.inspection.updated_by if resolved else by,
        )
        self.findings.append(finding)
        return finding

    def _minor_findings(self) -> None:
        """Small defects noted now and then, each put right by the next visit."""
        rng = self.rng
        for visit, following in pairwise(self.visits):
            if rng.random() >= _MINOR_FINDING_CHANCE:
                continue
            kind, category, text, remedial = rng.choice(_MINOR_FINDINGS)
            candidates = self.of_kind(kind)
            if not candidates:
                continue
            component = rng.choice(candidates)
            self._finding(
                visit,
                component,
                Grade.NEEDS_ATTENTION,
                category,
                text.format(tag=component.tag),
                remedial.format(tag=component.tag),
                90,
                following,
            )

    def _scenario_findings(self, refs: dict[str, _Visit]) -> None:
        for spec in self.spec.finding:
            visit = refs[spec.at]
            component = self.by_tag[spec.on.upper()]
            resolved = refs[spec.resolved_at] if spec.resolved_at else None
            self._finding(
                visit,
                component,
                spec.grade,
                spec.category,
                spec.text,
                spec.remedial,
                spec.due_days,
                resolved,
            )
            if spec.photo:
                self.demo.out.shots.append(
                    _Shot(
                        photo_id=self.demo.new_id(),
                        caption=spec.photo,
                        taken_at=visit.tick(self.rng),
                        inspection=visit.inspection,
                        component_id=component.id,
                        orientation=spec.photo_orientation,
                        seed=self.rng.getrandbits(32),
                    )
                )

    def _draft(self, count: int) -> None:
        """Today's walkdown, half done: the first half of the test joints measured."""
        visit = self._visit(InspectionKind(self.spec.draft_today), self.anchor, finished=False)
        joints = max(1, len(self.of_kind(ComponentKind.TEST_JOINT)) // 2)
        role = _Special(self.anchor)
        self._counter_readings(visit, count)
        if visit.inspection.kind is InspectionKind.COMPLETE:
            self._complete_readings(visit, role, joints=joints)
        component = self.of_kind(ComponentKind.AIR_TERMINAL)[0]
        self._finding(
            visit,
            component,
            Grade.NEEDS_ATTENTION,
            "fixing",
            f"{component.tag} leaning; base bolt loose",
            f"Tighten the {component.tag} base bolt",
            60,
            None,
        )
