"""Earthing records in the store: the migration, the model's refusals, CSV, bundles, exports."""

from __future__ import annotations

import io
import json
from datetime import UTC, date, datetime
from pathlib import Path

import pytest
import sqlite_utils
from pydantic import ValidationError
from sync_factories import build_site

from inspectkit.demo.generate import build_demo
from inspectkit.earthing_values import make_traverse, read_traverse, survey_text
from inspectkit.model import (
    Component,
    ComponentKind,
    Inspection,
    Method,
    Quantity,
    Reading,
    Site,
    SoilSurvey,
)
from inspectkit.store import Store
from inspectkit.store.opening import apply_migrations
from inspectkit.store.queries import find_site, load_site_records
from inspectkit.store.rows import to_row
from inspectkit.store.schema import MIGRATIONS, SCHEMA_VERSION, _earthing
from inspectkit.sync import exports
from inspectkit.sync.bundle import export_bundle
from inspectkit.sync.csv_options import ColumnMap, CsvImportError, CsvOptions
from inspectkit.sync.csvimport import import_readings_csv
from inspectkit.sync.merge import import_bundle
from tests.test_store import save_in_old_schema

MAP = "tag=Point,value=Reading,taken_at=Date,traverse=Series,current_probe=C"
OPTIONS = CsvOptions(quantity=Quantity.EARTH_ISOLATED, method=Method.FALL_OF_POTENTIAL_3P)
TRAVERSE = make_traverse(40.0, [(20.8, 3.8), (24.0, 3.9), (25.6, 4.1), (28.8, 4.0)])


def test_a_database_before_the_earthing_step_migrates_and_keeps_its_records(
    db_path: Path,
) -> None:
    db = sqlite_utils.Database(db_path)
    apply_migrations(db, upto=MIGRATIONS.index(_earthing))  # the step before it
    site = Site(name="Old Chapel", protection_level="III")
    rod = Component(site_id=site.id, kind=ComponentKind.EARTH_ELECTRODE, tag="E-01",
                    electrode_type="rod")  # fmt: skip
    for record in (site, rod):
        save_in_old_schema(db, record)
    db.close()

    with Store.open(db_path) as store:
        assert store.schema_version() == SCHEMA_VERSION
        kept = store.get(Component, rod.id)
        assert (kept.length_m, kept.diameter_m, kept.electrode_orientation) == (None, None, None)
        assert store.verify_audit() == [], "the new columns are logged, not taken for an edit"
        store.save(kept.model_copy(update={"length_m": 2.4, "diameter_m": 0.016}))
        assert store.get(Component, rod.id).length_m == 2.4
        assert store.verify_audit() == []
        assert "soil_survey" in store.db.table_names()
    backup = db_path.with_name(f"{db_path.name}.before-schema-{SCHEMA_VERSION}.bak")
    assert backup.exists(), "a backup is taken before every migration"


def test_the_model_refuses_what_no_electrode_or_traverse_can_be() -> None:
    site = Site(name="Quay", protection_level="II")
    with pytest.raises(ValidationError, match="length_m applies to earth electrodes only"):
        Component(site_id=site.id, kind=ComponentKind.TEST_JOINT, tag="TJ-1", length_m=2.0)
    with pytest.raises(ValidationError, match="not less than length_m"):
        Component(site_id=site.id, kind=ComponentKind.EARTH_ELECTRODE, tag="E-1",
                  length_m=0.01, diameter_m=0.016)  # fmt: skip
    visit = Inspection(site_id=site.id, kind="complete", date=date(2026, 5, 1))
    base = {"inspection_id": visit.id, "component_id": site.id, "value": 3.9,
            "quantity": Quantity.EARTH_ISOLATED,
            "taken_at": datetime(2026, 5, 1, tzinfo=UTC)}  # fmt: skip
    with pytest.raises(ValidationError, match="belongs to a fall-of-potential reading"):
        Reading(**base, method=Method.FOUR_POLE, traverse=TRAVERSE.to_text())
    with pytest.raises(ValidationError, match="not between the electrode"):
        bad = '{"current_probe_m": 10, "points": [[5, 1], [6, 2], [12, 3]]}'
        Reading(**base, method=Method.FALL_OF_POTENTIAL_3P, traverse=bad)
    with pytest.raises(ValidationError, match="not one of the survey's spacings"):
        SoilSurvey(site_id=site.id, date=date(2026, 5, 1), points=survey_text([(1.0, 3.0)]),
                   chosen_spacing_m=2.0)  # fmt: skip


def test_a_traverse_is_stored_canonically() -> None:
    # Two spellings of one traverse are one stored text, so bundles compare equal.
    loose = '{"points": [[28.8, 4], [20.8, 3.8], [24, 3.9], [25.6, 4.1]], "current_probe_m": 40}'
    assert Reading.model_fields["traverse"]  # the field exists
    assert read_traverse(loose) == TRAVERSE
    reading = Reading(
        inspection_id=Site(name="x", protection_level="I").id, component_id="c",
        quantity="earth_isolated", value=3.99, method="fall_of_potential_3p",
        taken_at=datetime(2026, 5, 1, tzinfo=UTC), traverse=loose,
    )  # fmt: skip
    assert reading.traverse == TRAVERSE.to_text()


def test_csv_import_reads_a_traverse_column(tmp_path: Path) -> None:
    store = Store.open(tmp_path / "db.sqlite")
    records = build_site(store, tmp_path / "in", joints=2)
    path = tmp_path / "traverse.csv"
    # The traverse in one quoted cell; its points are separated by semicolons.
    path.write_text(
        "Point,Date,Reading,Series,C\n"
        'TJ-01,2026-06-02 10:15,,"52%=3.8; 60%=3.9; 64%=4.1; 72%=4.0",40 m\n'
        "TJ-02,2026-06-02 10:20,4.4,,\n",
        encoding="utf-8",
    )
    mapping = ColumnMap.parse(MAP)
    result = import_readings_csv(store, path, records.inspection.id, mapping, OPTIONS)
    assert result.added == 2
    by_tag = {o.tag: o.reading for o in result.rows}
    # IEEE Std 81's 61.8 % position, linear between 60 % and 64 %: 3.99 Ω.
    assert by_tag["TJ-01"].value == pytest.approx(3.99)
    assert by_tag["TJ-01"].method is Method.FALL_OF_POTENTIAL_3P
    assert read_traverse(by_tag["TJ-01"].traverse).current_probe_m == 40.0
    assert by_tag["TJ-02"].traverse is None
    store.close()


@pytest.mark.parametrize(
    ("row", "says"),
    [
        ('TJ-01,2026-06-02 10:15,3.9,"52%=3.8; 61.8%=3.9; 72%=4.0",40 m', "leave the value cell"),
        ('TJ-01,2026-06-02 10:15,,"52%=3.8; 61.8%=3.9",40 m', "3 to 60"),
        ('TJ-01,2026-06-02 10:15,,"52%=3.8; 61.8%=3.9; 72%=4",', "current probe distance"),
    ],
)
def test_csv_import_refuses_a_bad_traverse_and_imports_nothing(
    tmp_path: Path, row: str, says: str
) -> None:
    store = Store.open(tmp_path / "db.sqlite")
    records = build_site(store, tmp_path / "in", joints=2)
    path = tmp_path / "traverse.csv"
    path.write_text(f"Point,Date,Reading,Series,C\nTJ-02,2026-06-02 10:20,4.4,,\n{row}\n")
    mapping = ColumnMap.parse(MAP)
    before = len(store.select(Reading))
    with pytest.raises(CsvImportError, match=says):
        import_readings_csv(store, path, records.inspection.id, mapping, OPTIONS)
    assert len(store.select(Reading)) == before
    store.close()


def test_csv_map_needs_both_traverse_columns() -> None:
    with pytest.raises(CsvImportError, match="traverse and current_probe go together"):
        ColumnMap.parse("tag=1,taken_at=2,traverse=3")
    assert "value" not in ColumnMap.parse("tag=1,taken_at=2,traverse=3,current_probe=4").columns


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return build_demo(tmp_path_factory.mktemp("demo") / "demo.sqlite", date(2026, 6, 1))


def test_bundles_carry_surveys_traverses_and_electrode_sizes(demo: Path, tmp_path: Path) -> None:
    source = Store.open(demo)
    target = Store.open(tmp_path / "fresh.sqlite")
    site = find_site(source, "Aldermere")
    bundle = export_bundle(source, site.id, tmp_path / "aldermere.zip").path
    import_bundle(target, bundle)
    ours, theirs = load_site_records(source, site.id), load_site_records(target, site.id)
    assert [to_row(s) for s in theirs.surveys] == [to_row(s) for s in ours.surveys]
    assert len(ours.surveys) == 1
    traversed = [r for r in theirs.readings if r.traverse]
    assert traversed and traversed == [r for r in ours.readings if r.traverse]
    short = next(c for c in theirs.components if c.tag == "E-04")
    assert (short.length_m, short.diameter_m) == (2.0, 0.016)
    assert target.verify_audit() == []
    source.close()
    target.close()


def test_exports_carry_the_traverse(demo: Path) -> None:
    with Store.open(demo) as store:
        rows = exports.reading_rows(store)
    traversed = [row for row in rows if row["traverse"]]
    assert {row["component_tag"] for row in traversed} == {"E-01", "E-02"}
    out = io.StringIO()
    exports.write_csv(traversed, exports.READING_FIELDS, out)
    assert out.getvalue().splitlines()[0].endswith(",traverse")
    assert json.loads(traversed[0]["traverse"])["current_probe_m"] in (50.0, 60.0)


def test_a_series_reading_has_the_bound_of_any_reading() -> None:
    from inspectkit import earthing_values, model

    assert earthing_values.MAX_READING_OHM == model.MAX_RESISTANCE_OHM
