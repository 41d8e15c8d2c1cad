"""`inspectkit check` on a small database: table, JSON, exit codes, and the bulk loader."""

from __future__ import annotations

import json
from datetime import date

import pytest
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Quantity
from inspectkit.store import Store
from inspectkit.store.queries import iter_site_records, load_site_records
from tests.engine_factories import SiteBuilder

runner = CliRunner()


def _save(store: Store, *builders: SiteBuilder) -> None:
    for b in builders:
        records = b.records()
        store.save_all(
            [
                records.site,
                *records.components,
                *records.instruments.values(),
                *records.inspections,
                *records.readings,
                *records.findings,
                *records.not_inspected,
            ]
        )


def _failing(name: str = "Quarry Office") -> SiteBuilder:
    site = SiteBuilder("II", name=name)
    _, electrode = site.joint_with_electrode(1, down=False)
    visit = site.visit(date(2026, 3, 1))
    site.reading(visit, electrode, Quantity.EARTH_ISOLATED, 14.2)
    site.grade_all(visit)
    return site


def _clean(name: str = "Mill House") -> SiteBuilder:
    site = SiteBuilder("II", name=name)
    _, electrode = site.joint_with_electrode(1, down=False)
    visit = site.visit(date(2026, 3, 1))
    site.reading(visit, electrode, Quantity.EARTH_ISOLATED, 4.0)
    site.grade_all(visit)
    return site


@pytest.fixture
def db(db_path):
    with Store.open(db_path) as store:
        _save(store, _clean(), _failing())
    return db_path


def _run(*args):
    return runner.invoke(app, ["check", *args])


def test_table_lists_worst_site_first_with_words_not_colour(db):
    result = _run("--db", str(db), "--today", "2026-04-01")
    assert result.exit_code == 1, result.output
    lines = result.output.splitlines()
    assert lines[0].startswith("Quarry Office  [FAIL]  1 fail")
    assert lines[1].split()[:2] == ["FAIL", "E-01"]
    assert "14.2 Ω" in lines[1] and "10 Ω limit" in lines[1]
    assert lines[2].startswith("Mill House  [PASS]  all clear")
    assert lines[-1].startswith("2 sites checked: 1 needs action")


def test_json_objects_carry_the_agreed_keys(db):
    result = _run("--db", str(db), "--today", "2026-04-01", "--json")
    assert result.exit_code == 1
    (item,) = json.loads(result.output)
    assert set(item) == {
        "site",
        "component",
        "severity",
        "rule",
        "message",
        "value",
        "limit",
        "unit",
        "due",
        "components",
        "readings",
    }
    assert item["site"] == "Quarry Office" and item["severity"] == "fail"
    assert item["value"] == 14.2 and item["limit"] == 10.0 and item["unit"] == "Ω"


def test_clean_site_exits_0(db):
    result = _run("--db", str(db), "--today", "2026-04-01", "--site", "mill")
    assert result.exit_code == 0, result.output
    assert result.output.startswith("Mill House  [PASS]")


@pytest.mark.parametrize(
    ("args", "words"),
    [
        (("--today", "2026-13-01"), "--today"),
        (("--site", "Nowhere"), "--site"),
    ],
)
def test_bad_input_exits_2_naming_the_option(db, args, words):
    result = _run("--db", str(db), *args)
    assert result.exit_code == 2
    assert words in result.output


def test_unknown_profile_exits_2_naming_the_site_and_fix(db_path):
    with Store.open(db_path) as store:
        _save(store, SiteBuilder("II", name="Odd Site", profile="local-rules"))
    result = _run("--db", str(db_path))
    assert result.exit_code == 2
    assert "Odd Site" in result.output and "local-rules" in result.output
    assert "Add the profile file or change the site" in result.output


def test_bulk_loader_gives_what_the_per_site_loader_gives(db_path):
    with Store.open(db_path) as store:
        _save(store, _clean(), _failing(), SiteBuilder("IV", name="Empty Barn"))
        bulk = list(iter_site_records(store))
        assert [b.site.id for b in bulk] == sorted(b.site.id for b in bulk)
        for records in bulk:
            one = load_site_records(store, records.site.id)
            assert records.site == one.site
            for part in ("components", "inspections", "readings", "findings", "photos"):
                got = sorted(getattr(records, part), key=lambda r: r.id)
                assert got == sorted(getattr(one, part), key=lambda r: r.id)
            assert records.instruments == one.instruments


def test_bulk_loaded_records_behave_like_validated_ones(db_path):
    site = SiteBuilder("II", name="Draft Yard")
    _, electrode = site.joint_with_electrode(1, down=False)
    site.reading(
        site.visit(date(2026, 3, 1), signed=False), electrode, Quantity.EARTH_ISOLATED, 9.0
    )
    with Store.open(db_path) as store:
        _save(store, site)
        (records,) = list(iter_site_records(store))
        reading = records.readings[0]
        assert reading.taken_at.tzinfo is not None
        assert (
            reading.model_dump()
            == load_site_records(store, records.site.id).readings[0].model_dump()
        )
        reading.note = "re-tested after remaking the joint"  # assignment is still validated
        with pytest.raises(ValueError, match="value"):
            reading.value = -1.0
        store.save(reading.model_copy(update={"value": 4.0}))
        assert load_site_records(store, records.site.id).readings[0].value == 4.0
