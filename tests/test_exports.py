"""Readings and findings as CSV/JSON, sites as GeoJSON."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest
from sync_factories import build_site
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Site
from inspectkit.store import Store
from inspectkit.sync import exports


@pytest.fixture
def two_sites(tmp_path: Path):
    store = Store.open(tmp_path / "db.sqlite")
    first = build_site(store, tmp_path / "in")
    second = build_site(store, tmp_path / "in2", joints=2, name="Quarry Office")
    store.save(second.site.model_copy(update={"latitude": None, "longitude": None}))
    yield store, first, second
    store.close()


def test_readings_csv_for_one_site_and_for_all(two_sites):
    store, first, _ = two_sites
    out = io.StringIO()
    exports.write_csv(exports.reading_rows(store, first.site.id), exports.READING_FIELDS, out)
    rows = list(csv.DictReader(io.StringIO(out.getvalue())))
    assert len(rows) == 3 and {r["site"] for r in rows} == {"Harbour Mill"}
    assert rows[0]["component_tag"] == "TJ-01" and rows[0]["unit"] == "Ω"
    assert rows[0]["value"] == "8.0" and rows[0]["over_range"] == "false"
    assert rows[0]["instrument_serial"] == "ET-4471"
    assert len(exports.reading_rows(store)) == 5


def test_findings_json(two_sites):
    store, first, _ = two_sites
    out = io.StringIO()
    exports.write_json(exports.finding_rows(store), out)
    data = json.loads(out.getvalue())
    assert len(data) == 2
    assert data[0]["text"] == "clamp loose at TJ-01" and data[0]["grade"] == "needs_attention"
    assert set(data[0]) == set(exports.FINDING_FIELDS)


def test_sites_geojson_puts_longitude_first_and_keeps_unlocated_sites(two_sites):
    store, first, second = two_sites
    collection, unlocated = exports.sites_geojson(store)
    assert collection["type"] == "FeatureCollection"
    by_name = {f["properties"]["name"]: f for f in collection["features"]}
    # RFC 7946 §3.1.1: a position is [longitude, latitude]; the site is at 51.5 N, 0.12 W.
    assert by_name["Harbour Mill"]["geometry"] == {"type": "Point", "coordinates": [-0.12, 51.5]}
    # RFC 7946 §3.2: an unlocated feature has a null geometry.
    assert by_name["Quarry Office"]["geometry"] is None
    assert unlocated == ["Quarry Office"]
    assert by_name["Harbour Mill"]["id"] == first.site.id


def test_cli_writes_each_format(two_sites, tmp_path):
    store, first, _ = two_sites
    runner = CliRunner()
    db = ["--db", str(store.path)]
    out = tmp_path / "readings.csv"
    result = runner.invoke(
        app, ["export", *db, "--format", "csv", "--site", "Harbour", "-o", str(out)]
    )
    assert result.exit_code == 0, result.output
    assert out.read_text(encoding="utf-8").startswith("site,inspection_date,")
    result = runner.invoke(app, ["export", *db, "--format", "json", "--records", "findings"])
    assert result.exit_code == 0 and len(json.loads(result.output)) == 2
    geo = tmp_path / "sites.geojson"
    result = runner.invoke(app, ["export", *db, "--format", "geojson", "-o", str(geo)])
    assert result.exit_code == 0
    assert "Quarry Office" in result.output  # told which site has no position
    assert len(json.loads(geo.read_text())["features"]) == len(store.select(Site))
    result = runner.invoke(app, ["export", *db, "--site", "Nowhere"])
    assert result.exit_code == 2 and "no single site matches" in result.output
