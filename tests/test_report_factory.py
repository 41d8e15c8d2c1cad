"""Small factories for the report tests: one site with three complete visits, photos and a key.

Not a test module in itself; the report tests import from it. The values are
invented; the limits they are judged against come from the iec-62305-3 profile.
"""

from __future__ import annotations

from dataclasses import dataclass
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
    Inspector,
    Instrument,
    JointState,
    Method,
    Quantity,
    Reading,
    Site,
    SoilCondition,
)
from inspectkit.store import Store
from inspectkit.store.photos import attach_photo

TODAY = date(2026, 11, 3)
PASSPHRASE = b"correct horse"


@dataclass
class Built:
    """What the factory made."""

    site: Site
    inspector: Inspector
    current: Inspection
    readings: list[Reading]
    photo_ids: list[str]


def _jpeg(path: Path, size: tuple[int, int], orientation: int = 1) -> Path:
    image = Image.effect_noise(size, 30).convert("RGB")
    exif = Image.Exif()
    exif[0x0112] = orientation
    image.save(path, "JPEG", quality=90, exif=exif)
    return path


def build_site(store: Store, folder: Path, *, photos: int = 2, photo_size=(1600, 1200)) -> Built:
    """One site, its LPS, two earlier complete visits and a draft complete visit on TODAY."""
    site = Site(
        name="Müllerhof Granary",
        client="Åsa Ørnberg Farms",
        address="3 Kiln Lane",
        town="Wexcombe",
        protection_level="III",
        profile="iec-62305-3",
    )
    inspector = Inspector(
        name="Zoë Ångström-Müller",
        organisation="Kestrelmoor Lightning Maintenance",
        qualification="LPS inspector, card KLM-099",
    )
    earth = Instrument(
        description="Earth tester ET-4", serial="ET4-1187", calibration_due=date(2027, 6, 30)
    )
    low = Instrument(
        description="Low-ohm meter LO-2", serial="LO2-0042", calibration_due=date(2027, 3, 31)
    )
    c: dict[str, Component] = {}
    for tag, kind, parent in (
        ("DC-01", ComponentKind.DOWN_CONDUCTOR, None),
        ("DC-02", ComponentKind.DOWN_CONDUCTOR, None),
        ("TJ-01", ComponentKind.TEST_JOINT, "DC-01"),
        ("TJ-02", ComponentKind.TEST_JOINT, "DC-02"),
        ("E-01", ComponentKind.EARTH_ELECTRODE, "TJ-01"),
        ("E-02", ComponentKind.EARTH_ELECTRODE, "TJ-02"),
        ("BD-01", ComponentKind.BONDING, None),
        ("AT-01", ComponentKind.AIR_TERMINAL, None),
    ):
        c[tag] = Component(
            site_id=site.id,
            kind=kind,
            tag=tag,
            parent_id=c[parent].id if parent else None,
            electrode_type=ElectrodeType.ROD if kind is ComponentKind.EARTH_ELECTRODE else None,
        )
    store.save_all([site, inspector, earth, low, *c.values()])
    visits = [date(2022, 10, 25), date(2024, 10, 29), TODAY]
    # E-01 drifts up towards its 10 Ω limit; E-02 fails at the last visit.
    series = {"E-01": (4.1, 5.3, 6.6), "E-02": (7.5, 8.0, 12.4)}
    readings: list[Reading] = []
    current = None
    for n, day in enumerate(visits):
        inspection = Inspection(
            site_id=site.id,
            kind=InspectionKind.COMPLETE,
            date=day,
            inspector_id=inspector.id,
            weather="dry, 11 °C",
            soil=SoilCondition.NORMAL,
            finished=n < 2,
            not_inspected="Roof over the kiln: no safe access." if n == 2 else "",
        )
        store.save(inspection)
        at = datetime(day.year, day.month, day.day, 10, 0, tzinfo=UTC)
        made = [
            Reading(
                inspection_id=inspection.id,
                component_id=c[tag].id,
                quantity=Quantity.EARTH_ISOLATED,
                value=values[n],
                method=Method.FALL_OF_POTENTIAL_3P,
                joint_state=JointState.OPEN,
                instrument_id=earth.id,
                taken_at=at.replace(minute=10 * i),
            )
            for i, (tag, values) in enumerate(series.items())
        ]
        if n == 2:
            made += [
                Reading(
                    inspection_id=inspection.id,
                    component_id=c["TJ-01"].id,
                    quantity=Quantity.EARTH_COMBINED,
                    value=3.2,
                    method=Method.FALL_OF_POTENTIAL_3P,
                    joint_state=JointState.CLOSED,
                    instrument_id=earth.id,
                    taken_at=at.replace(hour=11),
                ),
                Reading(
                    inspection_id=inspection.id,
                    component_id=c["DC-01"].id,
                    quantity=Quantity.CONTINUITY,
                    value=0.045,
                    method=Method.LOW_OHM_4W,
                    instrument_id=low.id,
                    taken_at=at.replace(hour=12),
                ),
                Reading(
                    inspection_id=inspection.id,
                    component_id=c["DC-02"].id,
                    quantity=Quantity.CONTINUITY,
                    value=0.35,
                    method=Method.LOW_OHM_4W,
                    instrument_id=low.id,
                    taken_at=at.replace(hour=12, minute=5),
                ),
                Reading(
                    inspection_id=inspection.id,
                    component_id=c["BD-01"].id,
                    quantity=Quantity.BONDING,
                    value=0.4,
                    method=Method.LOW_OHM_4W,
                    instrument_id=low.id,
                    taken_at=at.replace(hour=12, minute=10),
                ),
            ]
            current = inspection
        store.save_all(made)
        readings += made
    assert current is not None
    store.save_all(
        [
            Finding(
                inspection_id=current.id,
                component_id=c["TJ-02"].id,
                grade=Grade.DEFECT,
                category="corrosion",
                text="Clamp at TJ-02 corroded through",
                remedial_action="Replace the clamp and re-test E-02",
                due_by=date(2026, 12, 15),
            ),
            Finding(
                inspection_id=current.id,
                component_id=c["AT-01"].id,
                grade=Grade.SOUND,
                text="Upright and secure",
            ),
        ]
    )
    photo_ids = []
    for i in range(photos):
        path = _jpeg(folder / f"photo-{i}.jpg", photo_size, orientation=6 if i == 0 else 1)
        photo = attach_photo(
            store,
            path,
            inspection_id=current.id,
            component_id=c["TJ-02"].id if i == 0 else None,
            caption=f"View {i + 1} of the north façade",
        )
        photo_ids.append(photo.id)
    return Built(
        site, inspector, current, [r for r in readings if r.inspection_id == current.id], photo_ids
    )
