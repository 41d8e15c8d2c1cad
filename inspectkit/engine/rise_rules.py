"""Rules on a series of readings: a value up on its baseline or the reading before it, and
an electrode whose trend will pass its limit before the next complete inspection.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

from inspectkit.engine.history import calibration_lapsed
from inspectkit.engine.results import Result
from inspectkit.engine.site_facts import SiteFacts, reading_day, shown_value
from inspectkit.model import Quantity, Reading, Severity
from inspectkit.units import format_value

#: What to look at when a reading has risen, by quantity.
RISE_ACTIONS = {
    Quantity.EARTH_ISOLATED: "investigate the electrode and its connection",
    Quantity.EARTH_COMBINED: "check the test joints and electrodes before the limit is reached",
    Quantity.CONTINUITY: "check the joints and fixings along the conductor",
    Quantity.BONDING: "clean and tighten the bond",
}


@dataclass(frozen=True)
class _Series:
    """The readings of one component and quantity that count for a rise, oldest first."""

    facts: SiteFacts
    component_id: str
    tag: str
    quantity: Quantity
    values: list[float]
    days: list[str]
    reading_ids: list[str]

    def rise(self) -> Result | None:
        """`watch` when the last value is up by more than the profile's step on the first
        (the baseline) or on the one before it; the baseline is named first."""
        step = self.facts.profile.limits.rise_step(self.quantity)
        if len(self.values) < 2:
            return None
        last = self.values[-1]
        what = "electrode" if self.quantity is Quantity.EARTH_ISOLATED else self.quantity.label
        for name, at in (("baseline", 0), ("previous reading", -2)):
            earlier = self.values[at]
            if earlier and last > earlier * (1 + step):
                shown = [format_value(v, self.quantity, digits=3) for v in (last, earlier)]
                return self.facts.result(
                    Severity.WATCH,
                    "rise",
                    f"{self.tag} {what} {shown[0]} on {self.days[-1]} is "
                    f"{100 * (last / earlier - 1):.0f} % above its {name} of {shown[1]} "
                    f"({self.days[at]}), more than the {100 * step:.0f} % allowed: "
                    f"{RISE_ACTIONS[self.quantity]}.",
                    component_id=self.component_id,
                    component_tag=self.tag,
                    reading_id=self.reading_ids[-1],
                    value=last,
                    limit=earlier * (1 + step),
                    unit=self.quantity.unit,
                )
        return None


def electrode_rises(facts: SiteFacts) -> Iterator[Result]:
    """An electrode's isolated reading up by more than the allowed step on baseline or previous."""
    for trend in facts.trends:  # the trend has already sorted out the readings that count
        found = _Series(
            facts,
            trend.component_id,
            trend.component_tag,
            Quantity.EARTH_ISOLATED,
            list(trend.values),
            [str(day) for day in trend.days],
            list(trend.reading_ids),
        ).rise()
        if found is not None:
            yield found


def series_rises(facts: SiteFacts) -> Iterator[Result]:
    """The whole system's, a conductor's or a bond's latest reading up by more than the
    profile's step on its baseline or previous reading, as for an electrode.

    Counted as for a trend: readings that prove nothing (doubtful, over-range, taken
    with a lapsed instrument) are left out, and a latest reading of that sort says
    nothing of a rise.
    """
    for (component_id, quantity), readings in facts.history.items():
        if quantity not in RISE_ACTIONS or quantity is Quantity.EARTH_ISOLATED:
            continue
        counted = [r for r in readings if _proves(facts, r)]
        if len(counted) < 2 or counted[-1] is not readings[-1]:
            continue
        found = _Series(
            facts,
            component_id,
            facts.tag(component_id),
            quantity,
            [r.value for r in counted if r.value is not None],
            [reading_day(r) for r in counted],
            [r.id for r in counted],
        ).rise()
        if found is not None:
            yield found


def _proves(facts: SiteFacts, reading: Reading) -> bool:
    """A reading that can show a rise: a number, not doubted, from a calibrated instrument."""
    return (
        reading.value is not None
        and not reading.over_range
        and not reading.unreliable
        and not calibration_lapsed(facts.records, reading)
    )


def drifting_electrodes(facts: SiteFacts) -> Iterator[Result]:
    """Electrodes forecast to pass their limit before the next complete inspection: act now.

    An electrode whose fitted line is already above the limit while its latest reading
    is still within it is to watch as well; one whose latest reading is above the limit
    fails by `reading_limits` and gets no forecast here.
    """
    for trend in facts.trends:
        latest = facts.latest.get((trend.component_id, Quantity.EARTH_ISOLATED))
        if latest is None or (
            latest.value is not None and trend.limit and latest.value > trend.limit
        ):
            continue
        if trend.above_since is not None:
            message = (
                f"{trend.component_tag} electrode's fitted line is {trend.note}, though its "
                f"latest reading {shown_value(latest)} is within it: plan remedial work now."
            )
        elif trend.before_next_complete:
            message = (
                f"{trend.component_tag} electrode is rising {trend.note}: plan remedial work "
                "before then."
            )
        else:
            continue
        yield facts.result(
            Severity.WATCH,
            "trend",
            message,
            component_id=trend.component_id,
            component_tag=trend.component_tag,
            value=trend.fitted_last,
            limit=trend.limit,
            unit=Quantity.EARTH_ISOLATED.unit,
            due=trend.crossing,
        )
