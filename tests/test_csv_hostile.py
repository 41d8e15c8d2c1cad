"""Instrument CSV files from anywhere: a bad file gets a clean message and exit 2, no traceback."""

from __future__ import annotations

import string
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from sync_factories import build_site, file_hash
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.store import Store
from inspectkit.sync.csvimport import MAX_PROBLEMS


@pytest.fixture(scope="module")
def site(tmp_path_factory: pytest.TempPathFactory):
    """A closed database with an inspection to import into (shared: the import changes nothing)."""
    folder = tmp_path_factory.mktemp("csv")
    db = folder / "db.sqlite"
    with Store.open(db) as store:
        records = build_site(store, folder / "in", joints=3)
    return db, records.inspection.id, folder


def _run(db: Path, inspection: str, path: Path, *extra: str):
    args = ["readings", "import", str(path), "--inspection", inspection, "--db", str(db),
            "--quantity", "earth_isolated", "--method", "fall_of_potential_3p", *extra]  # fmt: skip
    return CliRunner().invoke(app, args)


def _refused_cleanly(result, *, wanted: str = "") -> None:  # noqa: ANN001 - a click Result
    assert result.exit_code == 2, result.output
    assert result.exception is None or isinstance(result.exception, SystemExit), result.exception
    assert "Traceback" not in result.output
    assert result.output.startswith("inspectkit: ") or "\ninspectkit: " in result.output
    assert wanted in result.output


MAP = "tag=Point,value=Reading,taken_at=Date"


@pytest.mark.parametrize(
    ("text", "extra", "wanted"),
    [
        pytest.param("Point,Date,Reading\nTJ-01,2026-06-02 10:00," + "9" * 140_000 + "\n",
                     ("--map", MAP), "field larger than field limit", id="huge field"),  # fmt: skip
        pytest.param("Point,Date,Reading\nTJ-01,0001-01-01 00:30+05:00,8\n", ("--map", MAP),
                     "not a time a reading was taken", id="year 1 with an offset"),  # fmt: skip
        pytest.param("Point,Date,Reading\nTJ-01,9999-12-31 23:30,8\n",
                     ("--map", MAP, "--tz", "America/Adak"),
                     "not a time a reading was taken", id="year 9999 with --tz"),  # fmt: skip
        pytest.param("Point;Date;Reading\nTJ-01;2026-06-02 10:00;8\n",
                     ("--map", MAP, "--delimiter", ";;"), "give one character", id="delimiter ;;"),
        pytest.param("Point,Date,Reading\nTJ-01,2026-06-02 10:00,8\n",
                     ("--map", "tag=١,value=3,taken_at=2"), "no such column", id="arabic digit"),
        pytest.param("Point,Date,Reading\nTJ-01,2099-01-01 10:00,8\n", ("--map", MAP),
                     "2099-01-01T10:00+00:00 is later than now", id="taken in 2099"),  # fmt: skip
    ],
)
def test_a_hostile_file_is_refused_cleanly_and_changes_nothing(site, tmp_path, text, extra, wanted):
    db, inspection, _ = site
    path = tmp_path / "meter.csv"
    path.write_text(text, encoding="utf-8")
    before = file_hash(db)
    _refused_cleanly(_run(db, inspection, path, *extra), wanted=wanted)
    assert file_hash(db) == before


def test_many_bad_rows_print_a_few_lines_and_a_count(site, tmp_path):
    db, inspection, _ = site
    path = tmp_path / "meter.csv"
    path.write_text("Point,Date,Reading\n" + "TJ-99,2026-06-02 10:00,8\n" * 5000, encoding="utf-8")
    result = _run(db, inspection, path, "--map", MAP)
    _refused_cleanly(result, wanted=f"and {5000 - MAX_PROBLEMS:,} more rows refused")
    assert len(result.output.splitlines()) < MAX_PROBLEMS + 5


_CELL = st.text(alphabet=string.printable + "Ω٣²é\x00\x1b", max_size=12)
_ROW = st.lists(_CELL, min_size=0, max_size=5)


@settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    rows=st.lists(_ROW, max_size=6),
    delimiter=st.sampled_from([",", ";", "\t", "|", ";;", "", "\\t"]),
    mapping=st.sampled_from([MAP, "tag=1,value=3,taken_at=2", "tag=Point,value=٣,taken_at=²",
                             "tag=", "x=1", "tag=0,value=1,taken_at=1"]),  # fmt: skip
    tz=st.sampled_from(["UTC", "Pacific/Kiritimati", "America/Adak"]),
    raw=st.binary(max_size=64),
)
def test_fuzz_any_file_gives_a_clean_message_and_exit_2(site, rows, delimiter, mapping, tz, raw):
    """Random files and options: a refusal is a message and exit 2, never a traceback."""
    db, inspection, folder = site
    sep = delimiter if len(delimiter) == 1 else ","
    text = "Point,Date,Reading\n" + "\n".join(sep.join(row) for row in rows)
    path = folder / "fuzz.csv"
    path.write_bytes(text.encode("utf-8", "replace") + raw)
    extra = ["--map", mapping, "--tz", tz, "--dry-run"]
    if delimiter:
        extra += ["--delimiter", delimiter]
    result = _run(db, inspection, path, *extra)
    if result.exit_code == 0:  # hypothesis found rows that are fine readings: a dry run
        return
    _refused_cleanly(result)
