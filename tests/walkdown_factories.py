"""A small invented site with one earlier visit, for the walkdown tests (no demo data needed)."""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import UTC, date, datetime
from pathlib import Path

from PIL import Image

from inspectkit.model import (
    Component,
    ComponentKind,
    ElectrodeType,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    InspectionState,
    Inspector,
    Instrument,
    JointState,
    Method,
    Quantity,
    Reading,
    Site,
)
from inspectkit.store import Store

#: The earlier visit every comparison is made against.
EARLIER = date(2025, 6, 3)
#: The day the walkdown tests' visits are on and their harness runs on, whatever the
#: real date: a reading must lie on its visit's day, and calibration is judged against
#: it. In the past, as the model refuses a visit or a reading later than the clock.
TODAY = date(2026, 6, 2)


@dataclass
class WalkSite:
    """The records a walkdown test needs, by tag."""

    site: Site
    inspector: Inspector
    instrument: Instrument
    earlier: Inspection
    parts: dict[str, Component] = field(default_factory=dict)

    def tag(self, tag: str) -> Component:
        return self.parts[tag]


def build_walk_site(store: Store, *, down_conductors: int = 3) -> WalkSite:
    """An invented level II depot: roof, down conductors with test joints and rods, bonding.

    The earlier visit (2025-06-03, complete, marked finished) measured every
    electrode isolated at 4.0 Ω, every down conductor's continuity at 0.10 Ω and
    the strike counter at 7.
    """
    site = Site(
        name="Fernhollow Grain Store",
        client="Fernhollow Cooperative",
        town="Lowmarsh",
        protection_level="II",
    )
    inspector = Inspector(name="Ada Quill", organisation="Brightline Testing")
    instrument = Instrument(
        description="Earth tester", serial="ET-4471", calibration_due=date(2030, 1, 1)
    )
    parts: dict[str, Component] = {}

    def part(kind: ComponentKind, tag: str, parent: str | None = None, **kw: object) -> None:
        parts[tag] = Component(
            site_id=site.id,
            kind=kind,
            tag=tag,
            parent_id=parts[parent].id if parent else None,
            **kw,
        )

    part(ComponentKind.AIR_TERMINAL, "AT-01", location="north ridge")
    part(ComponentKind.AIR_TERMINAL, "AT-02", location="south ridge")
    part(ComponentKind.AIR_CONDUCTOR, "RC-01", location="ridge conductor")
    for n in range(1, down_conductors + 1):
        part(ComponentKind.DOWN_CONDUCTOR, f"DC-{n:02d}", location=f"corner {n}")
        part(ComponentKind.TEST_JOINT, f"TJ-{n:02d}", f"DC-{n:02d}", location=f"corner {n}")
        part(
            ComponentKind.EARTH_ELECTRODE,
            f"ER-{n:02d}",
            f"TJ-{n:02d}",
            electrode_type=ElectrodeType.ROD,
        )
    part(ComponentKind.BONDING, "BD-01", location="gas main")
    part(ComponentKind.SPD, "SPD-01", location="main board")
    part(ComponentKind.STRIKE_COUNTER, "SC-01", "DC-01")
    part(ComponentKind.AIR_TERMINAL, "AT-09", retired_on=date(2024, 1, 1))

    earlier = Inspection(
        site_id=site.id,
        kind=InspectionKind.COMPLETE,
        date=EARLIER,
        inspector_id=inspector.id,
        state=InspectionState.DRAFT,
        finished=True,
    )
    at = datetime(2025, 6, 3, 10, 0, tzinfo=UTC)
    readings = []
    for tag, quantity, value, method, joint in [
        *(
            (
                f"ER-{n:02d}",
                Quantity.EARTH_ISOLATED,
                4.0,
                Method.FALL_OF_POTENTIAL_3P,
                JointState.OPEN,
            )
            for n in range(1, down_conductors + 1)
        ),
        *(
            (f"DC-{n:02d}", Quantity.CONTINUITY, 0.10, Method.LOW_OHM_4W, None)
            for n in range(1, down_conductors + 1)
        ),
        ("SC-01", Quantity.STRIKE_COUNT, 7.0, Method.COUNTER_READ, None),
    ]:
        readings.append(
            Reading(
                inspection_id=earlier.id,
                component_id=parts[tag].id,
                quantity=quantity,
                value=value,
                method=method,
                joint_state=joint,
                instrument_id=instrument.id,
                taken_at=at,
            )
        )
    findings = [
        Finding(inspection_id=earlier.id, component_id=c.id, grade=Grade.SOUND)
        for c in parts.values()
        if c.retired_on is None
    ]
    store.save_all([site, inspector, instrument, *parts.values(), earlier, *readings, *findings])
    return WalkSite(site, inspector, instrument, earlier, parts)


def on_the_day(day: date = TODAY) -> datetime:
    """The clock's time of day on `day`, as the app stamps a reading when its day is fixed."""
    return datetime.combine(day, datetime.now(UTC).timetz())


def write_photo(path: Path, taken_at: datetime) -> Path:
    """A tiny JPEG with an EXIF DateTimeOriginal, as a camera would write it."""
    image = Image.new("RGB", (8, 6), (120, 140, 90))
    exif = Image.Exif()
    exif.get_ifd(0x8769)[0x9003] = taken_at.strftime("%Y:%m:%d %H:%M:%S")
    path.parent.mkdir(parents=True, exist_ok=True)
    image.save(path, "JPEG", exif=exif)
    return path
