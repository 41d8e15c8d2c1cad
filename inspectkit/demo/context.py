"""What the demo's pieces share: the seeded generator and its people and instruments,
the records made so far, and the visit under way with its clock.

Every time is a scenario time and every random number comes from the one generator,
in the order the pieces draw them: the same anchor gives the same records.
"""

from __future__ import annotations

import random
import uuid
from dataclasses import dataclass, field
from datetime import UTC, date, datetime, time, timedelta
from typing import Any

from inspectkit.model import Inspection, Inspector, Instrument, Record

#: Who the demo writes as where no inspector did.
DEMO_USER = "demo"


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


@dataclass
class Visit:
    """One inspection being built, with the clock of its walkdown."""

    inspection: Inspection
    clock: datetime

    def tick(self, rng: random.Random) -> datetime:
        self.clock += timedelta(minutes=rng.randint(1, 4), seconds=rng.randint(0, 59))
        return self.clock
