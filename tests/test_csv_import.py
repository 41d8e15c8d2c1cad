"""Instrument CSV import: column mapping, units, decimal comma, dates, all or nothing."""

from __future__ import annotations

import json
from datetime import UTC, datetime
from pathlib import Path
from zoneinfo import ZoneInfo

import pytest
from sync_factories import build_site, sign
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Method, Quantity, Reading
from inspectkit.store import Store
from inspectkit.sync.csv_options import ColumnMap, CsvImportError, CsvOptions
from inspectkit.sync.csvimport import import_readings_csv


@pytest.fixture
def site(tmp_path: Path):
    store = Store.open(tmp_path / "db.sqlite")
    records = build_site(store, tmp_path / "in", joints=4)
    yield store, records
    store.close()


def _csv(tmp_path: Path, text: str, name: str = "meter.csv", encoding: str = "utf-8") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding=encoding)
    return path


def _new_readings(store: Store, records) -> list[Reading]:
    old = {r.id for r in records.readings}
    return [r for r in store.select(Reading, order_by="taken_at") if r.id not in old]


def test_columns_by_name_with_units_per_column_and_in_the_cell(site, tmp_path):
    store, records = site
    path = _csv(
        tmp_path,
        "Point,Date,Reading,Unit\n"
        "tj-01,2026-06-02 10:15,180,mΩ\n"
        "TJ-02,2026-06-02T10:20:00+02:00,0.21 Ω,\n"
        "TJ-03,2 Jun 2026 10:25,OL,\n",
    )
    result = import_readings_csv(
        store, path, records.inspection.id,
        ColumnMap.parse("tag=Point,value=Reading,unit=Unit,taken_at=Date"),
        CsvOptions(quantity=Quantity.EARTH_COMBINED, method=Method.FALL_OF_POTENTIAL_3P),
    )  # fmt: skip
    assert result.added == 3
    new = _new_readings(store, records)
    # 180 mΩ = 0.180 Ω: SI prefix milli = 10⁻³ (SI Brochure, BIPM, 9th ed., Table 7).
    assert [r.value for r in new] == [pytest.approx(0.21), pytest.approx(0.18), None]
    assert new[2].over_range
    # 10:20 at UTC+02:00 is 08:20 UTC (ISO 8601 offset notation).
    assert new[0].taken_at == datetime(2026, 6, 2, 8, 20, tzinfo=UTC)
    assert [r.component_id for r in new] == [records.joints[1].id, records.joints[0].id,
                                             records.joints[2].id]  # fmt: skip
    assert all("added" in o.describe() for o in result.rows)


def test_positions_no_header_decimal_comma_semicolons_and_day_first_dates(site, tmp_path):
    store, records = site
    path = _csv(tmp_path, "TJ-01;02/06/2026 09:00;12,5\nTJ-02;03.06.2026 09:05;1,234\n")
    result = import_readings_csv(
        store, path, records.inspection.id, ColumnMap.parse("tag=1,taken_at=2,value=3"),
        CsvOptions(quantity=Quantity.EARTH_ISOLATED, method=Method.FALL_OF_POTENTIAL_3P,
                   decimal_comma=True, dayfirst=True, header=False,
                   tz=ZoneInfo("Europe/Paris")),
    )  # fmt: skip
    assert result.added == 2
    new = _new_readings(store, records)
    assert [r.value for r in new] == [pytest.approx(12.5), pytest.approx(1.234)]
    # Paris is UTC+2 in June (CEST, EU summer time from the last Sunday in March).
    assert new[0].taken_at == datetime(2026, 6, 2, 7, 0, tzinfo=UTC)
    assert new[1].taken_at == datetime(2026, 6, 3, 7, 5, tzinfo=UTC)
    assert all(r.joint_state.value == "open" for r in new)


@pytest.mark.parametrize(
    ("bad_line", "column", "message"),
    [
        ("TJ-09,2026-06-02 10:40,9.9", "Point", "no component tagged 'TJ-09'"),
        ("TJ-03,the day after,9.9", "Date", "is not a date"),
        ("TJ-03,2026-06-02 10:40,-4", "Reading", "negative"),
        ('TJ-03,2026-06-02 10:40,"1,234"', "Reading", "1,234"),
        ("TJ-03,2026-06-02 10:40,1,234", "#4", "4 columns, the header 3"),
        ("TJ-03,2099-06-02 10:40,4", "Date", "later than now"),
    ],
)
def test_a_bad_row_imports_nothing_and_names_its_row_and_column(
    site, tmp_path, bad_line, column, message
):
    store, records = site
    text = (
        f"Point,Date,Reading\nTJ-01,2026-06-02 10:30,8.1\nTJ-02,2026-06-02 10:35,8.4\n{bad_line}\n"
    )
    before = store.db.execute("SELECT COUNT(*) FROM reading").fetchone()[0]
    with pytest.raises(CsvImportError) as caught:
        import_readings_csv(
            store, _csv(tmp_path, text), records.inspection.id,
            ColumnMap.parse("tag=Point,value=Reading,taken_at=Date"),
            CsvOptions(quantity=Quantity.EARTH_ISOLATED, method=Method.FALL_OF_POTENTIAL_3P),
        )  # fmt: skip
    first = caught.value.problems[0]
    assert first.startswith(f"row 3 (line 4), column '{column}': ")
    assert message in first
    assert "nothing was imported" in caught.value.problems[-1]
    assert store.db.execute("SELECT COUNT(*) FROM reading").fetchone()[0] == before


def test_mapping_mistakes_are_named(site, tmp_path):
    store, records = site
    with pytest.raises(CsvImportError, match="unknown field 'valeur'"):
        ColumnMap.parse("tag=1,valeur=2,taken_at=3")
    with pytest.raises(CsvImportError, match="say which column holds taken_at"):
        ColumnMap.parse("tag=1,value=2")
    path = _csv(tmp_path, "Point,Date,Reading\nTJ-01,2026-06-02,1\n")
    with pytest.raises(CsvImportError, match="no such column; the header has Point, Date, Reading"):
        import_readings_csv(store, path, records.inspection.id,
                            ColumnMap.parse("tag=Point,value=Ohms,taken_at=Date"),
                            CsvOptions(quantity=Quantity.CONTINUITY))  # fmt: skip


def test_dry_run_saves_nothing_and_a_second_import_skips_what_is_there(site, tmp_path):
    store, records = site
    path = _csv(tmp_path, "Point,Date,Reading\nTJ-01,2026-06-02 11:00,0.05\n")
    mapping = ColumnMap.parse("tag=Point,value=Reading,taken_at=Date")
    options = CsvOptions(quantity=Quantity.EARTH_COMBINED, method=Method.FALL_OF_POTENTIAL_3P)
    args = (store, path, records.inspection.id, mapping, options)
    assert import_readings_csv(*args, dry_run=True).added == 1
    assert _new_readings(store, records) == []
    assert import_readings_csv(*args).added == 1
    again = import_readings_csv(*args)
    assert again.added == 0 and again.rows[0].action == "already recorded, skipped"
    assert len(_new_readings(store, records)) == 1


def test_a_signed_inspection_takes_no_readings(site, tmp_path):
    store, records = site
    sign(store, records.inspection)
    path = _csv(tmp_path, "Point,Date,Reading\nTJ-01,2026-06-02 11:00,0.05\n")
    with pytest.raises(CsvImportError, match="is signed"):
        import_readings_csv(store, path, records.inspection.id,
                            ColumnMap.parse("tag=Point,value=Reading,taken_at=Date"),
                            CsvOptions(quantity=Quantity.BONDING))  # fmt: skip


def test_cli_reports_per_row_and_refuses_with_exit_2(site, tmp_path):
    store, records = site
    good = _csv(tmp_path, "Point;Date;Reading\nTJ-04;02/06/2026 12:00;7,7\n", encoding="cp1252")
    base = ["readings", "import", "--db", str(store.path), "--inspection", records.inspection.id,
            "--map", "tag=Point,value=Reading,taken_at=Date", "--quantity", "earth_isolated",
            "--method", "fall_of_potential_3p", "--dayfirst", "--decimal-comma"]  # fmt: skip
    runner = CliRunner()
    result = runner.invoke(app, [*base[:2], str(good), *base[2:], "--json"])
    assert result.exit_code == 0, result.output
    assert json.loads(result.output)["added"] == 1
    bad = _csv(tmp_path, "Point;Date;Reading\nTJ-04;02/06/2026 12:05;lots\n", name="bad.csv")
    result = runner.invoke(app, [*base[:2], str(bad), *base[2:]])
    assert result.exit_code == 2
    assert "row 1 (line 2), column 'Reading'" in result.output
