"""What a demo visit measured: the readings, scattered with the season, and the
scenario's own values (a failing electrode, a drifting one, a missed test joint, a
lapsed instrument) set on top so that each shows clearly and nothing else looks like it.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass, field
from datetime import date

from inspectkit.demo.context import DemoContext, Visit, stamps
from inspectkit.demo.ground import SOIL_FACTOR
from inspectkit.demo.scenario import DriftingEarth
from inspectkit.demo.system import System
from inspectkit.model import (
    Component,
    ComponentKind,
    Instrument,
    JointState,
    Method,
    Quantity,
    Reading,
    SoilCondition,
)

#: Scattered readings stay below this multiple of the electrode's first and previous
#: reading, so that only the scenario's own drifting or failing electrodes stand out.
_MAX_RISE = 1.4


@dataclass(frozen=True)
class Special:
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


class Measurements:
    """The readings of one site's visits, and the series of values each one continues."""

    def __init__(self, demo: DemoContext, system: System, start: date, counter_start: int) -> None:
        self.demo = demo
        self.rng: random.Random = demo.rng
        self.system = system
        #: The day the LPS went in: a drifting electrode starts from there.
        self.start = start
        #: What every strike counter but SC-01 shows, visit after visit.
        self.counter_start = counter_start
        self.readings: list[Reading] = []
        #: The values of each series so far (electrodes, conductors, bonds, the system).
        self.earth_history: dict[str, list[float]] = {}

    def tests(self, visit: Visit, special: Special, *, joints: int | None = None) -> None:
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

    def counter_readings(self, visit: Visit, count: int) -> None:
        """Every counter read at every visit; only SC-01 ever moves (it shows `count`)."""
        for counter in self.system.of_kind(ComponentKind.STRIKE_COUNTER):
            value = count if counter.tag == "SC-01" else self.counter_start
            self._reading(visit, counter, Quantity.STRIKE_COUNT, value, None)

    def post_strike_tests(self, visit: Visit, special: Special) -> None:
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

    def _reading(
        self,
        visit: Visit,
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

    def _earth_value(self, electrode: Component, visit: Visit, special: Special) -> float:
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

    def _continuity_value(self, down: Component, special: Special) -> float:
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
