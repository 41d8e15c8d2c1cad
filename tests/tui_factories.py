"""A small, fixed database for the TUI tests: three invented sites around one anchor date."""

from __future__ import annotations

from datetime import UTC, date, datetime, time, timedelta
from pathlib import Path

import pytest

from inspectkit.cautions import ACKNOWLEDGED_SETTING
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
    ProtectionLevel,
    Quantity,
    Reading,
    Site,
)
from inspectkit.store import Store

#: The day the scenario is built around and the screens are judged on.
ANCHOR = date(2026, 6, 1)


def _at(day: date) -> datetime:
    return datetime.combine(day, time(10, 0), tzinfo=UTC)


def _earth(inspection: Inspection, component: Component, ohms: float, instrument: Instrument):
    return Reading(
        inspection_id=inspection.id,
        component_id=component.id,
        quantity=Quantity.EARTH_ISOLATED,
        value=ohms,
        method=Method.FALL_OF_POTENTIAL_3P,
        joint_state=JointState.OPEN,
        instrument_id=instrument.id,
        taken_at=_at(inspection.date),
    )


def build_site(
    store: Store,
    name: str,
    *,
    client: str,
    town: str,
    level: ProtectionLevel,
    visits: list[tuple[date, list[float]]],
    instrument: Instrument,
    inspector: Inspector,
) -> Site:
    """A site with a down conductor, a bond and one test joint per electrode reading.

    Args:
        visits: (day, isolated earth readings in Ω, one per test joint) per complete visit.
    """
    site = Site(name=name, client=client, town=town, protection_level=level)
    joints = len(visits[0][1]) if visits else 2
    components: list[Component] = [
        Component(site_id=site.id, kind=ComponentKind.AIR_TERMINAL, tag="AT-01", location="roof"),
        Component(site_id=site.id, kind=ComponentKind.DOWN_CONDUCTOR, tag="DC-01"),
        Component(site_id=site.id, kind=ComponentKind.BONDING, tag="BD-01", location="gas main"),
    ]
    tjs = [
        Component(site_id=site.id, kind=ComponentKind.TEST_JOINT, tag=f"TJ-{n:02d}")
        for n in range(1, joints + 1)
    ]
    electrodes = [
        Component(
            site_id=site.id,
            kind=ComponentKind.EARTH_ELECTRODE,
            tag=f"E-{n:02d}",
            parent_id=tj.id,
            electrode_type=ElectrodeType.ROD,
        )
        for n, tj in enumerate(tjs, start=1)
    ]
    records: list = [site, *components, *tjs, *electrodes]
    for day, ohms in visits:
        visit = Inspection(
            site_id=site.id,
            kind=InspectionKind.COMPLETE,
            date=day,
            inspector_id=inspector.id,
            finished=True,
        )
        records.append(visit)
        records += [
            _earth(visit, tj, value, instrument) for tj, value in zip(tjs, ohms, strict=True)
        ]
    store.save_all(records)
    return site


def build_tui_db(path: Path) -> Path:
    """The three-site database the TUI tests and snapshots use.

    Harbour Depot: judged ok. Mill Lane School: TJ-02 over the 10 Ω limit, with an
    open finding. Orchard Tower: no visit for years, so overdue. All invented.
    """
    with Store.open(path, user="tests") as store:
        inspector = Inspector(name="Ada Example", organisation="Northfield Protection Ltd")
        instrument = Instrument(
            description="Earth tester ET-4", serial="ET4-0001", calibration_due=date(2027, 1, 1)
        )
        store.save_all([inspector, instrument])
        common = {"instrument": instrument, "inspector": inspector}
        build_site(
            store,
            "Harbour Depot",
            client="Quayside Storage",
            town="Porthaven",
            level=ProtectionLevel.III,
            visits=[(date(2023, 5, 2), [4.1, 5.0]), (date(2025, 5, 6), [4.3, 5.1])],
            **common,
        )
        school = build_site(
            store,
            "Mill Lane School",
            client="Eastvale Council",
            town="Eastvale",
            level=ProtectionLevel.II,
            visits=[
                (date(2022, 4, 1), [3.0, 6.0, 4.0]),
                (date(2023, 4, 3), [3.1, 8.0, 4.1]),
                (date(2024, 4, 2), [3.2, 9.5, 4.0]),
                (date(2026, 4, 7), [3.1, 12.4, 4.2]),
            ],
            **common,
        )
        build_site(
            store,
            "Orchard Tower",
            client="Greenfield Homes",
            town="Porthaven",
            level=ProtectionLevel.I,
            visits=[(date(2019, 3, 4), [2.0])],
            **common,
        )
        last = store.select(Inspection, "site_id = ?", [school.id], order_by="date DESC")[0]
        tj2 = store.select(Component, "site_id = ? AND tag = 'TJ-02'", [school.id])[0]
        store.save(
            Finding(
                inspection_id=last.id,
                component_id=tj2.id,
                grade=Grade.DEFECT,
                text="TJ-02 electrode over the limit; clamp corroded",
                remedial_action="replace clamp, drive an extra rod",
                due_by=last.date + timedelta(days=90),
            )
        )
    return path


@pytest.fixture
def tui_db(tmp_path: Path) -> Path:
    """The three-site database, with the cautions already acknowledged."""
    path = build_tui_db(tmp_path / "tui.sqlite")
    with Store.open(path) as store:
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
    return path


async def settled(pilot) -> None:  # type: ignore[no-untyped-def]
    """Wait until background workers (site states) are done and the screen has caught up."""
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()
    await pilot.app.workers.wait_for_complete()
    await pilot.pause()


def column(table, key: str) -> list[str]:  # type: ignore[no-untyped-def]
    """A DataTable column's cells as plain text, top to bottom."""
    return [str(table.get_cell(row, key)) for row in table.rows]
