"""One way in for readings: the walkdown, `readings add`, a CSV file and a bundle refuse alike."""

from __future__ import annotations

from datetime import UTC, date, datetime, timedelta
from pathlib import Path

import pytest
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.intake import reading_window, set_reading_window
from inspectkit.model import (
    Inspection,
    InspectionKind,
    Instrument,
    InstrumentKind,
    JointState,
    Method,
    Quantity,
    Reading,
)
from inspectkit.store import Store
from inspectkit.sync.bundle import export_bundle
from inspectkit.sync.csvimport import ColumnMap, CsvImportError, CsvOptions, import_readings_csv
from inspectkit.sync.guard import BundleError
from inspectkit.sync.merge import import_bundle
from inspectkit.walkdown.completion import finish_inspection
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.instruments import choose_instrument, chosen_instruments, instrument_for
from inspectkit.walkdown.readings import record_reading
from inspectkit.walkdown.visit import start_inspection
from tests.walkdown_factories import WalkSite, build_walk_site

DAY = date(2026, 6, 1)
AT = datetime(2026, 6, 1, 10, 0, tzinfo=UTC)
runner = CliRunner()


@pytest.fixture
def db(tmp_path: Path) -> Path:
    return tmp_path / "walk.sqlite"


@pytest.fixture
def walk(db: Path) -> tuple[Store, WalkSite, Inspection, dict[InstrumentKind, Instrument]]:
    store = Store.open(db)
    site = build_walk_site(store)
    kinds = {
        InstrumentKind.EARTH_TESTER: Instrument(
            description="Earth tester", serial="ET-7001", kind="earth_tester"
        ),
        InstrumentKind.LOW_OHMMETER: Instrument(
            description="Low-resistance ohmmeter", serial="LO-3002", kind="low_ohmmeter"
        ),
        InstrumentKind.CLAMP_METER: Instrument(
            description="Clamp meter", serial="CM-5003", kind="clamp_meter"
        ),
    }
    store.save_all(kinds.values())
    visit = start_inspection(store, site.site.id, "complete", site.inspector.id, DAY)
    yield store, site, visit, kinds
    store.close()


def _counts(store: Store) -> tuple[int, int]:
    """Readings and audit rows: any write changes one."""
    return (
        store.db.execute("SELECT COUNT(*) FROM reading").fetchone()[0],
        store.db.execute("SELECT COUNT(*) FROM audit").fetchone()[0],
    )


# ------------------------------------------------------------------ the walkdown


@pytest.mark.parametrize(
    ("tag", "quantity", "text"),
    [
        ("TJ-01", "continuity", "0.1"),  # the issue's rows: none of these carry it
        ("AT-01", "earth_combined", "3.9"),
        ("TJ-01", "strike_count", "8"),
        ("DC-01", "soil_resistivity", "120"),
    ],
)
def test_the_walkdown_refuses_a_quantity_the_component_never_carries(
    walk, tag: str, quantity: str, text: str
) -> None:
    store, site, visit, _ = walk
    before = _counts(store)
    with pytest.raises(WalkdownError) as err:
        record_reading(store, visit.id, site.tag(tag).id, quantity, text, taken_at=AT)
    assert err.value.field == "quantity" and f"{tag}: a" in str(err.value)  # a or an
    assert _counts(store) == before


def test_a_reading_off_the_visit_s_day_is_refused_and_the_window_is_a_setting(walk) -> None:
    store, site, visit, _ = walk
    rod = site.tag("ER-01").id
    with pytest.raises(WalkdownError) as err:
        record_reading(store, visit.id, rod, "earth_isolated", "4", taken_at=AT.replace(year=2019))
    assert err.value.field == "taken_at" and "not on the visit's day 2026-06-01" in str(err.value)
    early = datetime(2026, 5, 31, 6, 0, tzinfo=UTC)  # 18 h before the day begins
    with pytest.raises(WalkdownError):
        record_reading(store, visit.id, rod, "earth_isolated", "4", taken_at=early)
    assert reading_window(store) == timedelta(hours=12)  # our default
    set_reading_window(store, 24)
    assert record_reading(store, visit.id, rod, "earth_isolated", "4", taken_at=early).reading
    with pytest.raises(ValueError, match="0 to 48 hours"):
        set_reading_window(store, 100)


def test_a_finished_or_signed_visit_takes_no_new_reading(walk) -> None:
    store, site, visit, _ = walk
    finish_inspection(store, visit.id)
    with pytest.raises(WalkdownError) as err:
        record_reading(store, visit.id, site.tag("DC-01").id, "continuity", "0.1", taken_at=AT)
    assert err.value.field == "inspection" and "is finished; continue it" in str(err.value)


def test_an_instrument_that_cannot_measure_the_quantity_is_refused_naming_both(walk) -> None:
    store, site, visit, kinds = walk
    earth = kinds[InstrumentKind.EARTH_TESTER]
    before = _counts(store)
    with pytest.raises(WalkdownError) as err:
        record_reading(
            store, visit.id, site.tag("DC-01").id, "continuity", "0.1",
            instrument_id=earth.id, taken_at=AT,
        )  # fmt: skip
    message = str(err.value)
    assert err.value.field == "instrument_id"
    assert "Earth tester ET-7001 is a earth tester" in message or "ET-7001" in message
    assert "does not measure continuity" in message and "low-resistance ohmmeter" in message
    clamp = kinds[InstrumentKind.CLAMP_METER]
    with pytest.raises(WalkdownError, match="does not measure by fall_of_potential_3p"):
        record_reading(
            store, visit.id, site.tag("TJ-01").id, "earth_combined", "3.9",
            instrument_id=clamp.id, taken_at=AT,
        )  # fmt: skip
    assert _counts(store) == before
    # A clamp meter measures the combined system by the clamp-on method (common practice).
    ok = record_reading(
        store, visit.id, site.tag("TJ-01").id, "earth_combined", "3.9", "clamp_on",
        instrument_id=clamp.id, taken_at=AT,
    )  # fmt: skip
    assert ok.reading.instrument_id == clamp.id


def test_the_walkdown_picks_the_chosen_instrument_whose_kind_fits(walk) -> None:
    store, _, _, kinds = walk
    for instrument in kinds.values():
        choose_instrument(store, instrument.id)
    chosen = chosen_instruments(store)

    def serial(quantity: Quantity, method: Method) -> str | None:
        found = instrument_for(chosen, quantity, method)
        return found.serial if found else None

    assert serial(Quantity.CONTINUITY, Method.LOW_OHM_4W) == "LO-3002"
    assert serial(Quantity.BONDING, Method.LOW_OHM_2W) == "LO-3002"
    assert serial(Quantity.EARTH_ISOLATED, Method.FALL_OF_POTENTIAL_3P) == "ET-7001"
    assert serial(Quantity.SOIL_RESISTIVITY, Method.WENNER) == "ET-7001"
    assert serial(Quantity.EARTH_COMBINED, Method.CLAMP_ON) == "CM-5003"
    assert serial(Quantity.EARTH_COMBINED, Method.FOUR_POLE) == "ET-7001"
    assert serial(Quantity.STRIKE_COUNT, Method.COUNTER_READ) is None  # read by eye


# ------------------------------------------------------------------ readings add


def test_readings_add_into_a_finished_draft_of_2024_is_refused(walk, db: Path) -> None:
    store, site, _, _ = walk
    old = store.save(
        Inspection(site_id=site.site.id, kind=InspectionKind.VISUAL, date=date(2024, 5, 2),
                   finished=True)  # fmt: skip
    )
    before = _counts(store)
    args = ["--db", str(db), "readings", "add", "--inspection", old.id, "--tag", "DC-01",
            "--quantity", "continuity", "0.1"]  # fmt: skip
    result = runner.invoke(app, args)
    assert result.exit_code == 2 and "is finished; continue it" in result.output
    reopened = store.get(Inspection, old.id)
    store.save(reopened.model_copy(update={"finished": False}))
    before = _counts(store)
    result = runner.invoke(app, args)  # stamped now: not on the visit's day in 2024
    assert result.exit_code == 2 and "--taken-at:" in result.output
    assert "not on the visit's day 2024-05-02" in result.output
    assert _counts(store) == before
    wrong = runner.invoke(app, [*args[:-1], "--taken-at", "2024-05-02T10:00", "--instrument",
                                "ET-7001", "0.1"])  # fmt: skip
    assert wrong.exit_code == 2 and "--instrument:" in wrong.output
    assert _counts(store) == before


# ------------------------------------------------------------------ CSV import


#: The issue's bad rows, and two for the same tag and minute with different values.
BAD_ROWS = """Point,Quantity,Method,Date,Reading
TJ-01,continuity,low_ohm_4w,2026-06-01 10:00,0.12
AT-01,earth_combined,four_pole,2026-06-01 10:02,3.9
TJ-02,strike_count,counter_read,2026-06-01 10:04,12
DC-01,soil_resistivity,wenner,2026-06-01 10:06,140
ER-01,earth_isolated,four_pole,2026-06-01 10:08,3.9
ER-01,earth_isolated,four_pole,2026-06-01 10:08:30,4.9
ER-02,earth_isolated,four_pole,2019-06-01 10:10,4.1
"""


def test_the_issue_s_bad_rows_are_refused_with_nothing_written(walk, tmp_path: Path) -> None:
    store, _, visit, _ = walk
    path = tmp_path / "meter.csv"
    path.write_text(BAD_ROWS, encoding="utf-8")
    before = _counts(store)
    with pytest.raises(CsvImportError) as caught:
        import_readings_csv(
            store, path, visit.id,
            ColumnMap.parse("tag=Point,quantity=Quantity,method=Method,value=Reading,taken_at=Date"),
            CsvOptions(),
            now=datetime(2026, 6, 1, 18, 0, tzinfo=UTC),
        )  # fmt: skip
    problems = caught.value.problems
    assert _counts(store) == before  # nothing written, not even an audit row
    text = "\n".join(problems)
    assert "row 1 (line 2), column 'Quantity': TJ-01: a continuity is not measured" in text
    assert "row 2 (line 3), column 'Quantity': AT-01: an earth resistance, combined" in text
    assert "row 3 (line 4), column 'Quantity': TJ-02: a strike counter value" in text
    assert "row 4 (line 5), column 'Quantity': DC-01: a soil resistivity" in text
    assert "row 7 (line 8), column 'Date': ER-02: taken at 2019-06-01T10:10" in text
    assert "row 5 (line 6) ER-01 and row 6 (line 7) ER-01 give the same" in text
    assert "(3.9 Ω and 4.9 Ω)" in text
    assert problems[-1].startswith("nothing was imported")


def test_csv_rows_with_an_instrument_of_the_wrong_kind_are_refused(walk, tmp_path: Path) -> None:
    store, _, visit, kinds = walk
    path = tmp_path / "meter.csv"
    path.write_text("Point,Date,Reading\nDC-01,2026-06-01 10:00,0.12\n", encoding="utf-8")
    options = CsvOptions(
        quantity=Quantity.CONTINUITY,
        method=Method.LOW_OHM_4W,
        instrument_id=kinds[InstrumentKind.EARTH_TESTER].id,
    )
    with pytest.raises(CsvImportError, match="column '--instrument': DC-01: .*ET-7001"):
        import_readings_csv(
            store, path, visit.id, ColumnMap.parse("tag=Point,value=Reading,taken_at=Date"),
            options, now=datetime(2026, 6, 1, 18, 0, tzinfo=UTC),
        )  # fmt: skip


def test_a_finished_visit_takes_no_csv_import(walk, tmp_path: Path) -> None:
    store, _, visit, _ = walk
    finish_inspection(store, visit.id)
    path = tmp_path / "meter.csv"
    path.write_text("Point,Date,Reading\nDC-01,2026-06-01 10:00,0.12\n", encoding="utf-8")
    with pytest.raises(CsvImportError, match="is finished; continue it"):
        import_readings_csv(
            store, path, visit.id, ColumnMap.parse("tag=Point,value=Reading,taken_at=Date"),
            CsvOptions(quantity=Quantity.CONTINUITY, method=Method.LOW_OHM_4W),
        )  # fmt: skip


# ------------------------------------------------------------------ bundle import


def _other_side(db: Path, tmp_path: Path, store: Store) -> Store:
    """A second laptop that has exchanged the site once, so it holds the same records."""
    other = Store.open(tmp_path / "laptop.sqlite")
    site_id = store.select(Inspection)[0].site_id
    import_bundle(other, export_bundle(store, site_id, tmp_path / "first.zip").path)
    return other


def _bad_reading(visit: Inspection, component_id: str, **changes: object) -> Reading:
    """A reading written past the walkdown (an older version, a script): the store takes it."""
    data = {
        "inspection_id": visit.id,
        "component_id": component_id,
        "quantity": Quantity.CONTINUITY,
        "value": 0.1,
        "method": Method.LOW_OHM_4W,
        "taken_at": AT,
        **changes,
    }
    return Reading.model_validate(data, context={"now": AT})


@pytest.mark.parametrize(
    ("tag", "changes", "words"),
    [
        ("TJ-01", {}, "TJ-01: a continuity is not measured on a test joint"),
        ("DC-01", {"taken_at": AT.replace(year=2019)}, "not on the visit's day 2026-06-01"),
        (
            "ER-01",
            {"quantity": Quantity.EARTH_ISOLATED, "method": Method.FALL_OF_POTENTIAL_3P,
             "joint_state": JointState.OPEN, "instrument": "LO-3002"},
            "does not measure earth resistance, electrode isolated",
        ),  # fmt: skip
    ],
)
def test_a_bundle_bringing_a_reading_the_walkdown_refuses_is_refused_whole(
    walk, db: Path, tmp_path: Path, tag: str, changes: dict, words: str
) -> None:
    store, site, visit, kinds = walk
    other = _other_side(db, tmp_path, store)
    serial = changes.pop("instrument", None)
    if serial:
        instrument = next(i for i in kinds.values() if i.serial == serial)
        other.save(instrument)
        changes["instrument_id"] = instrument.id
    other.save(_bad_reading(visit, site.tag(tag).id, **changes))
    bundle = export_bundle(other, site.site.id, tmp_path / "bad.zip").path
    before = _counts(store)
    with pytest.raises(BundleError, match=words):
        import_bundle(store, bundle)
    assert _counts(store) == before
    other.close()


def test_a_bundle_with_two_values_for_one_minute_is_refused_naming_both(
    walk, db: Path, tmp_path: Path
) -> None:
    store, site, visit, _ = walk
    other = _other_side(db, tmp_path, store)
    dc = site.tag("DC-01").id
    first = other.save(_bad_reading(visit, dc, value=0.10))
    second = other.save(_bad_reading(visit, dc, value=0.19, taken_at=AT + timedelta(seconds=20)))
    bundle = export_bundle(other, site.site.id, tmp_path / "twice.zip").path
    before = _counts(store)
    with pytest.raises(BundleError) as err:
        import_bundle(store, bundle)
    assert first.id in str(err.value) and second.id in str(err.value)
    assert "100 mΩ and 190 mΩ" in str(err.value) or "190 mΩ and 100 mΩ" in str(err.value)
    assert _counts(store) == before
    other.close()


def test_a_bundle_of_readings_made_before_the_visit_was_finished_comes_in(
    walk, db: Path, tmp_path: Path
) -> None:
    store, site, visit, _ = walk
    other = _other_side(db, tmp_path, store)
    record_reading(other, visit.id, site.tag("DC-01").id, "continuity", "0.1", taken_at=AT)
    finish_inspection(other, visit.id)
    report = import_bundle(store, export_bundle(other, site.site.id, tmp_path / "ok.zip").path)
    assert report.added["reading"] == 1 and store.get(Inspection, visit.id).finished
    other.close()


def test_the_window_is_set_by_command(walk, db: Path) -> None:
    store, _, _, _ = walk
    shown = runner.invoke(app, ["--db", str(db), "readings", "window", "20"])
    assert shown.exit_code == 0 and "from 20 h before" in shown.stdout
    assert reading_window(store) == timedelta(hours=20)
    bad = runner.invoke(app, ["--db", str(db), "readings", "window", "--", "-1"])
    assert bad.exit_code == 2 and "give 0 to 48 hours" in bad.output
    assert reading_window(store) == timedelta(hours=20)
