"""The geometry file: imported whole or refused whole, naming the field; stored and shown."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
import sqlite_utils
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Component, GeometryKind, Site
from inspectkit.model.geometry import GeometryItem, box_footprint
from inspectkit.store import Store, StoreError
from inspectkit.store.geometry import save_geometry_item, site_geometry
from inspectkit.store.opening import apply_migrations
from inspectkit.store.queries import iter_site_records, load_site_records
from inspectkit.store.schema import MIGRATIONS, SCHEMA_VERSION, _geometry
from inspectkit.sync.geometry_file import GeometryFileError, read_geometry

runner = CliRunner()

GOOD = """
[[roof]]
tag = "R1"
outline = [[0, 0], [20, 0], [20, 10], [0, 10]]
z = 8.0

[[air_conductor]]
tag = "ac-01"
run = [[0, 0], [20, 0], [20, 10], [0, 10], [0, 0]]
z = 8.0

[[air_terminal]]
tag = "AT-01"
at = [10, 5]
height = 1.5

[[down_conductor]]
tag = "DC-01"
at = [0, 0]

[[down_conductor]]
tag = "DC-02"
at = [20, 10]

[[rooftop_item]]
tag = "AHU-1"
what = "air handler"
centre = [14, 5]
size = [2, 1]
height = 1.6
conductive = true
clearance = 0.5
"""

SITE = Site(name="Mill House", protection_level="III")
AT = Component(site_id=SITE.id, kind="air_terminal", tag="AT-01")


@pytest.fixture
def store(db_path: Path) -> Store:
    with Store.open(db_path) as opened:
        opened.save_all([SITE, AT])
        yield opened


def test_good_file_reads_heights_and_takes_over_component_tags() -> None:
    items = read_geometry(GOOD, SITE, [AT])
    by_tag = {i.tag: i for i in items}
    assert by_tag["AC-01"].kind is GeometryKind.AIR_CONDUCTOR  # tags are upper-cased
    assert by_tag["AT-01"].z_m == pytest.approx(9.5)  # 1.5 m above the 8 m roof
    assert by_tag["AT-01"].component_id == AT.id
    assert by_tag["DC-01"].z_m == 8.0  # from the roof it stands on
    item = by_tag["AHU-1"]
    assert item.z_m == pytest.approx(9.6) and item.clearance_m == 0.5 and item.conductive
    assert item.points == tuple(box_footprint((14, 5), (2, 1)))


@pytest.mark.parametrize(
    ("change", "says"),
    [
        (("[[roof]]", "[[roofs]]"), "roofs: not a kind of geometry"),
        (('what = "air handler"', 'colour = "grey"'), "rooftop_item[1].colour: not a field"),
        (("z = 8.0\n\n[[air_conductor]]", "\n[[air_conductor]]"), "roof[1]: z is missing"),
        (("at = [10, 5]", "at = [10]"), "air_terminal[1]: at: [10] is not a pair"),
        (
            ("run = [[0, 0], [20, 0], [20, 10], [0, 10], [0, 0]]", "run = [[0, 0]]"),
            "air_conductor[1].points: an air conductor takes at least 2",
        ),
        (("conductive = true", "bonded = true"), "rooftop_item[1].bonded: only a conductive"),
        (('tag = "DC-02"', 'tag = "DC-01"'), "tag DC-01 is given twice"),
        (("height = 1.6", "height = 1.6\nz = 9"), "give z (above ground) or height"),
        (("clearance = 0.5", "clearance = -2"), "rooftop_item[1].clearance: -2"),
        (("z = 8.0", "z = -8.0"), "roof[1].z: -8.0 m is not a height"),
        (("[[roof]]", "[[roof]"), "not a TOML file"),
    ],
)
def test_bad_file_is_refused_naming_the_field_and_nothing_changes(
    store: Store, tmp_path: Path, change: tuple[str, str], says: str
) -> None:
    path = tmp_path / "good.toml"
    path.write_text(GOOD)
    assert (
        runner.invoke(
            app, ["geometry", "import", str(path), "--site", "Mill", "--db", str(store.path)]
        ).exit_code
        == 0
    )
    before = [g.model_dump() for g in site_geometry(store, SITE.id)]
    old, new = change
    assert old in GOOD
    bad = tmp_path / "bad.toml"
    bad.write_text(GOOD.replace(old, new, 1))
    with pytest.raises(GeometryFileError, match=_escaped(says)):
        read_geometry(bad.read_text(), SITE, [AT])
    result = runner.invoke(
        app, ["geometry", "import", str(bad), "--site", "Mill", "--db", str(store.path)]
    )
    assert result.exit_code == 2 and says in result.output
    assert [g.model_dump() for g in site_geometry(store, SITE.id)] == before


def _escaped(text: str) -> str:
    return re.escape(text)


def test_import_replaces_by_tag_keeps_ids_and_audits(store: Store, tmp_path: Path) -> None:
    path = tmp_path / "plan.toml"
    path.write_text(GOOD)
    args = ["geometry", "import", str(path), "--site", "Mill", "--db", str(store.path)]
    assert runner.invoke(app, args).exit_code == 0
    first = {g.tag: g.id for g in site_geometry(store, SITE.id)}
    path.write_text(GOOD.replace('tag = "DC-02"\nat = [20, 10]', 'tag = "DC-03"\nat = [20, 10]'))
    result = runner.invoke(app, args)
    assert result.exit_code == 0 and "2 down conductor" in result.output
    second = {g.tag: g.id for g in site_geometry(store, SITE.id)}
    assert second["AHU-1"] == first["AHU-1"] and "DC-02" not in second
    assert store.verify_audit() == []
    assert load_site_records(store, SITE.id).geometry == site_geometry(store, SITE.id)
    (records,) = [r for r in iter_site_records(store) if r.site.id == SITE.id]
    assert {g.tag for g in records.geometry} == set(second)


def test_show_prints_verdicts_and_exit_code(store: Store, tmp_path: Path) -> None:
    show = ["geometry", "show", "--site", "Mill", "--db", str(store.path)]
    empty = runner.invoke(app, show)
    assert empty.exit_code == 0 and "no geometry recorded" in empty.output
    path = tmp_path / "plan.toml"
    path.write_text(GOOD)
    runner.invoke(app, ["geometry", "import", str(path), "--site", "Mill", "--db", str(store.path)])
    shown = runner.invoke(app, show)
    assert "AHU-1" in shown.output and "FAIL" in shown.output and shown.exit_code == 1


def test_form_save_refuses_a_second_tag_of_a_kind(store: Store) -> None:
    item = GeometryItem(site_id=SITE.id, kind="air_terminal", tag="AT-09", points=[(1, 1)], z_m=9)
    save_geometry_item(store, item)
    other = GeometryItem(site_id=SITE.id, kind="air_terminal", tag="at-09", points=[(2, 2)], z_m=9)
    with pytest.raises(StoreError, match="tag: AT-09 is already"):
        save_geometry_item(store, other)
    assert save_geometry_item(store, item.model_copy(update={"z_m": 9.5})).z_m == 9.5


def test_database_of_the_previous_schema_gains_the_geometry_table(db_path: Path) -> None:
    db = sqlite_utils.Database(db_path)
    apply_migrations(db, upto=MIGRATIONS.index(_geometry))  # the step before it
    assert "geometry_item" not in db.table_names()
    db.close()
    with Store.open(db_path) as store:
        assert store.schema_version() == SCHEMA_VERSION
        assert site_geometry(store, SITE.id) == []


def test_geometry_travels_in_a_bundle_and_an_edit_comes_back(store: Store, tmp_path: Path) -> None:
    from inspectkit.sync.bundle import export_bundle
    from inspectkit.sync.merge import import_bundle

    path = tmp_path / "plan.toml"
    path.write_text(GOOD)
    runner.invoke(app, ["geometry", "import", str(path), "--site", "Mill", "--db", str(store.path)])
    bundle = export_bundle(store, SITE.id, tmp_path / "to-laptop.zip").path
    with Store.open(tmp_path / "laptop.sqlite", user="laptop") as laptop:
        import_bundle(laptop, bundle)
        arrived = {g.tag: g for g in site_geometry(laptop, SITE.id)}
        assert set(arrived) == {g.tag for g in site_geometry(store, SITE.id)}
        assert arrived["AT-01"].component_id == AT.id
        save_geometry_item(laptop, arrived["AHU-1"].model_copy(update={"bonded": True}))
        back = export_bundle(laptop, SITE.id, tmp_path / "back.zip").path
        assert laptop.verify_audit() == []
    import_bundle(store, back)
    assert {g.tag: g for g in site_geometry(store, SITE.id)}["AHU-1"].bonded
    assert store.verify_audit() == []
