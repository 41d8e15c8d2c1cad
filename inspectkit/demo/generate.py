"""Build the demo database from the scenario file, around an anchor date.

Everything is drawn from one `random.Random` seeded from the anchor, most record
ids included, and every time is a scenario time: the same anchor gives the same
records. Dates are counted back from the anchor, so whenever the demo is built
it shows the same mix of due, overdue, failing and drifting items.
"""

from __future__ import annotations

import random
import tempfile
import uuid
from datetime import UTC, date, datetime, time, timedelta
from pathlib import Path
from typing import Any

from dateutil.relativedelta import relativedelta

from inspectkit.demo.context import DEMO_USER, DemoContext, DemoRecords, Shot, stamps
from inspectkit.demo.photos import draw_photo
from inspectkit.demo.scenario import Scenario, load_scenario
from inspectkit.demo.site_history import SiteHistory
from inspectkit.model import Inspector, Instrument, InstrumentKind, Organisation, Photo
from inspectkit.plan.geo import parse_point
from inspectkit.plan.planner import save_depot
from inspectkit.store import Store
from inspectkit.store.photos import put_file, read_exif


def build_demo(path: Path, anchor: date) -> Path:
    """Write a fresh demo database (and its photos beside it) at `path`; return the path.

    Raises:
        FileExistsError: `path` exists already; the demo never writes into a database.
    """
    path = Path(path)
    if path.exists():
        raise FileExistsError(f"{path} exists already; give a new path for the demo database")
    scenario = load_scenario()
    demo = demo_records(scenario, anchor)
    with Store.open(path, user=DEMO_USER) as store, tempfile.TemporaryDirectory() as scratch:
        photos = [_store_photo(store, Path(scratch), shot) for shot in demo.shots]
        with store.transaction():
            store.save_all(demo.records, touch=False)
            store.save_all(photos, touch=False)
        if scenario.contractor.depot:
            save_depot(store, parse_point(scenario.contractor.depot, "contractor.depot"))
    return path


#: The kind of instrument the scenario's `use` names.
_KIND_OF_USE = {"earth": InstrumentKind.EARTH_TESTER, "low_ohm": InstrumentKind.LOW_OHMMETER}


def demo_records(scenario: Scenario, anchor: date) -> DemoRecords:
    """The scenario's records for one anchor date, in save order, and the photos to draw."""
    demo = DemoContext(
        anchor=anchor,
        rng=random.Random(f"inspectkit-demo:{anchor.isoformat()}"),
        inspectors={},
        logins={spec.key: spec.login for spec in scenario.inspector},
        instruments={},
    )
    first = min(anchor - relativedelta(years=s.years) for s in scenario.site)
    since = stamps(datetime.combine(first - timedelta(days=60), time(9, 0), UTC))
    organisations = _organisations(scenario, since)
    for spec in scenario.inspector:
        organisation = organisations[spec.organisation]
        demo.inspectors[spec.key] = Inspector(
            id=demo.new_id(),
            name=spec.name,
            organisation_id=organisation.id,
            organisation=organisation.name,
            qualification=spec.qualification,
            **{**since, "updated_by": spec.login},
        )
    for spec in scenario.instrument:
        instrument = Instrument(
            id=demo.new_id(),
            description=spec.description,
            serial=spec.serial,
            calibration_due=anchor + timedelta(days=spec.calibration_due_days),
            kind=_KIND_OF_USE[spec.use],
            **since,
        )
        demo.instruments[spec.key] = (instrument, spec.use)
    demo.out.records.extend(organisations.values())
    demo.out.records.extend(demo.inspectors.values())
    demo.out.records.extend(i for i, _ in demo.instruments.values())
    for spec in scenario.site:
        SiteHistory(demo, spec).build()
    return demo.out


def _organisations(scenario: Scenario, since: dict[str, Any]) -> dict[str, Organisation]:
    """The contractor (key "", the default organisation) and the others, by key.

    Their ids are derived from their names, not drawn, so adding one leaves the rest of
    the scenario as it was.
    """
    contractor = scenario.contractor
    made = {
        "": Organisation(
            id=str(uuid.uuid5(uuid.NAMESPACE_OID, f"organisation/{contractor.name}")),
            name=contractor.name,
            address=contractor.address,
            phone=contractor.phone,
            email=contractor.email,
            is_default=True,
            **since,
        )
    }
    for spec in scenario.organisation:
        made[spec.key] = Organisation(
            id=str(uuid.uuid5(uuid.NAMESPACE_OID, f"organisation/{spec.name}")),
            name=spec.name,
            address=spec.address,
            phone=spec.phone,
            email=spec.email,
            primary=spec.primary,
            accent=spec.accent,
            **since,
        )
    return made


def _store_photo(store: Store, scratch: Path, shot: Shot) -> Photo:
    """Draw the photo, put its file in the store's folder, and make its record.

    This is `store.photos.attach_photo` with the demo's own id and times, so that the
    same anchor gives the same photo records.
    """
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
        inspection_id=shot.inspection_id,
        component_id=shot.component_id,
        orientation=orientation,
        width=width,
        height=height,
        **stamps(shot.taken_at, shot.taken_by),
    )
