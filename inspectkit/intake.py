"""The checks every reading passes on its way in, whichever way it comes.

The walkdown, `readings add`, an instrument's CSV file and a bundle from another
laptop all call `refusal` for each reading and `clashes` for a batch, so a reading
the walkdown refuses cannot slip in by another door:

- the quantity is one the component carries (no continuity on a test joint);
- the instrument's kind measures the quantity, by the method given;
- the time lies within the visit's day, give or take a window (instrument clocks and
  time zones), so a reading of 2019 does not land in a visit of 2026 (an amendment
  holds the readings of the day it corrects, and is not held to its own day);
- a signed or finished visit takes no new reading (continue the visit first);
- one import holds one value per component, quantity and minute.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from datetime import UTC, datetime, time, timedelta

from inspectkit.model import (
    QUANTITIES_FOR,
    Component,
    Inspection,
    InspectionKind,
    InspectionState,
    Instrument,
    Reading,
    instrument_misfit,
)
from inspectkit.store import Store
from inspectkit.units import format_value
from inspectkit.wording import with_article

#: Setting: hours a reading may lie before the visit's day starts or after it ends (UTC).
WINDOW_SETTING = "reading_window_hours"
#: Twelve hours either side covers every time zone and a camp-out past midnight (our default).
DEFAULT_WINDOW_HOURS = 12.0
#: Most the window may be set to: beyond two days a reading is from another visit (our default).
MAX_WINDOW_HOURS = 48.0


class ReadingRefused(ValueError):
    """A reading that cannot come in; `field` names the field, the message says what to do.

    Attributes:
        field: The reading's field at fault (`quantity`, `taken_at`, `instrument_id`, …).
    """

    def __init__(self, field: str, message: str) -> None:
        super().__init__(message)
        self.field = field


def reading_window(store: Store) -> timedelta:
    """The window set on this database, or the default one."""
    text = store.get_setting(WINDOW_SETTING)
    try:
        hours = float(text) if text else DEFAULT_WINDOW_HOURS
    except ValueError:
        hours = DEFAULT_WINDOW_HOURS
    return timedelta(hours=min(max(hours, 0.0), MAX_WINDOW_HOURS))


def set_reading_window(store: Store, hours: float) -> timedelta:
    """Keep a new window on this database.

    Raises:
        ReadingRefused: the hours are negative or more than `MAX_WINDOW_HOURS`.
    """
    if not 0 <= hours <= MAX_WINDOW_HOURS:
        raise ReadingRefused(
            "window", f"{hours:g} hours is not a window; give 0 to {MAX_WINDOW_HOURS:g} hours"
        )
    store.set_setting(WINDOW_SETTING, f"{hours:g}")
    return timedelta(hours=hours)


def visit_refusal(inspection: Inspection) -> ReadingRefused | None:
    """Why this visit takes no reading at all (signed, or finished), or None."""
    day = inspection.date.isoformat()
    if inspection.state is InspectionState.SIGNED:
        return ReadingRefused(
            "inspection",
            f"the inspection of {day} is signed; record the reading in an amendment",
        )
    if inspection.finished:
        return ReadingRefused(
            "inspection",
            f"the inspection of {day} is finished; continue it first "
            "(`inspectkit inspection start` with its site, kind and day) to add or correct a "
            "reading",
        )
    return None


def refusal(
    reading: Reading,
    inspection: Inspection,
    component: Component | None,
    instrument: Instrument | None,
    window: timedelta,
) -> ReadingRefused | None:
    """Why this reading cannot be recorded in this visit, or None when it can.

    Args:
        inspection: The visit as it stands; pass it as not finished when the reading
            was made before the visit was finished (a bundle's older reading).
        component: The reading's component (None: it does not exist).
        instrument: The reading's instrument, if it names one.
        window: How far outside the visit's day the reading's time may lie.
    """
    day = inspection.date.isoformat()
    closed = visit_refusal(inspection)
    if closed is not None:
        return closed
    if component is None or component.site_id != inspection.site_id:
        return ReadingRefused("component", f"no component {reading.component_id} on this site")
    quantity = reading.quantity
    carried = QUANTITIES_FOR[component.kind]
    if quantity not in carried:
        allowed = ", ".join(q.label for q in carried) or "none (judged by eye)"
        return ReadingRefused(
            "quantity",
            f"{component.tag}: {with_article(quantity.label)} is not measured on "
            f"{with_article(component.kind.label)}; readings here: {allowed}",
        )
    if instrument is not None:
        misfit = instrument_misfit(instrument.kind, quantity, reading.method, instrument.named)
        if misfit:
            return ReadingRefused("instrument_id", f"{component.tag}: {misfit}")
    start = datetime.combine(inspection.date, time(), tzinfo=UTC) - window
    end = datetime.combine(inspection.date, time(), tzinfo=UTC) + timedelta(days=1) + window
    # An amendment corrects the records of the visit it amends, taken on that day.
    dated = inspection.kind is not InspectionKind.AMENDMENT
    if dated and not start <= reading.taken_at < end:
        hours = window.total_seconds() / 3600
        return ReadingRefused(
            "taken_at",
            f"{component.tag}: taken at {reading.taken_at.isoformat(timespec='minutes')}, which "
            f"is not on the visit's day {day} (± {hours:g} h); give the time it was read, or "
            "record it in the visit of that day",
        )
    return None


@dataclass(frozen=True)
class Entry:
    """A reading of a batch with how a person finds it again (`row 4 (line 5)`, an id)."""

    label: str
    reading: Reading


def clashes(entries: Iterable[Entry]) -> list[str]:
    """One sentence per pair of readings in a batch with the same component, quantity and
    minute but different values: an instrument's memory read twice, or a typing slip.

    The same value twice is no clash (a file imported again).
    """
    first: dict[tuple[str, str, datetime], Entry] = {}
    found = []
    for entry in entries:
        r = entry.reading
        key = (r.component_id, r.quantity.value, r.taken_at.replace(second=0, microsecond=0))
        seen = first.setdefault(key, entry)
        if seen is entry:
            continue
        if (seen.reading.value, seen.reading.over_range) != (r.value, r.over_range):
            shown = [
                format_value(e.reading.value, r.quantity, e.reading.over_range)
                for e in (seen, entry)
            ]
            found.append(
                f"{seen.label} and {entry.label} give the same {r.quantity.label} at "
                f"{key[2].isoformat(timespec='minutes')} two values ({shown[0]} and {shown[1]}); "
                "keep the right one"
            )
    return found
