"""Earthing from the command line: calculators, traverses, soil surveys, electrode sizes."""

# ruff: noqa: F811 - the demo fixtures are imported, then named as arguments

from __future__ import annotations

import json
import sqlite3
from pathlib import Path

import pytest
from earthing_factories import ANCHOR, demo, demo_template  # noqa: F401
from typer.testing import CliRunner

from inspectkit.calculators import CALCULATORS
from inspectkit.cli import app
from inspectkit.earthing_values import read_traverse
from inspectkit.model import Component, Reading, SoilSurvey
from inspectkit.store import Store

runner = CliRunner()
SITE = "Pellow Ridge Quarry Offices"

def run(db: Path | None, *args: str):
    prefix = ["--db", str(db)] if db is not None else []
    return runner.invoke(app, [*prefix, *args])


def fingerprint(db: Path) -> tuple[int, ...]:
    """Row counts of the tables a refused entry must leave alone, and of the audit log."""
    with sqlite3.connect(db) as conn:
        return tuple(
            conn.execute(f"SELECT count(*) FROM [{t}]").fetchone()[0]
            for t in ("reading", "soil_survey", "component", "audit")
        )


#: A time on the visit's day: a reading taken on another day is refused (`intake`).
ON_THE_DAY = f"{ANCHOR.isoformat()}T10:00"


def start(db: Path) -> str:
    result = run(
        db, "inspection", "start", "--site", SITE, "--kind", "complete",
        "--date", ANCHOR.isoformat(), "--inspector", "Maren Holt",
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    return result.stdout.strip()


# ---------------------------------------------------------------- calculators


@pytest.mark.parametrize("name", CALCULATORS)
def test_every_calculator_has_help(name: str) -> None:
    result = run(None, "calc", name, "--help")
    assert result.exit_code == 0
    assert "--json" in result.output
    assert "Usage:" in result.output


def test_calc_rod_prints_the_answer_and_its_source() -> None:
    # 10 ft × 5/8 in rod in 100 Ω·m: about 33 Ω, as commonly quoted (Dwight, IEEE Std 142).
    result = run(None, "calc", "rod", "--resistivity", "100 Ω·m", "--length", "10 ft",
                 "--diameter", "5/8 in")  # fmt: skip
    assert result.exit_code == 0, result.output
    assert result.stdout.startswith("R = 33.1 Ω")
    assert "source: Dwight 1936; IEEE Std 142" in result.stdout


def test_calc_json_for_scripts() -> None:
    # IEC 62305-3 Figure 2 (from memory): level I at 1000 Ω·m → l1 = 0.03·1000 − 10 = 20 m.
    result = run(None, "calc", "l1", "--level", "I", "--resistivity", "1000", "--json")
    data = json.loads(result.stdout)
    assert data["results"]["l1_m"] == pytest.approx(20.0)
    assert "Figure 2" in data["source"]


def test_calc_traverse_reports_no_plateau_and_where_to_go() -> None:
    result = run(None, "calc", "traverse", "--current-probe", "20 m",
                 "--points", "52%=3.0; 61.8%=3.9; 72%=5.2")  # fmt: skip
    assert result.exit_code == 0
    assert "no plateau" in result.stdout and "at least 134 m" in result.stdout


@pytest.mark.parametrize(
    ("args", "says"),
    [
        (("rod", "--resistivity", "100", "--length", "3 m", "--diameter", "16"), "--diameter:"),
        (("l1", "--level", "II", "--resistivity", "4000"), "--resistivity: "),
        (("wenner", "--spacing", "three", "--resistance", "10"), "--spacing:"),
        (("separation", "--level", "IX", "--down-conductors", "4", "--length", "10"), "--level"),
    ],
)
def test_calc_refuses_out_of_domain_naming_the_option(args: tuple[str, ...], says: str) -> None:
    result = run(None, "calc", *args)
    assert result.exit_code == 2
    assert says in result.stderr


# ---------------------------------------------------------------- traverse readings


def test_a_traverse_is_one_reading_with_its_series(demo: Path) -> None:
    visit = start(demo)
    result = run(
        demo, "readings", "add", "--inspection", visit, "--tag", "E-01",
        "--quantity", "earth_isolated", "--traverse", "20%=3.1; 52%=3.8; 60%=3.9; 64%=4.1; 72%=4.0",
        "--current-probe", "40 m", "--taken-at", "2026-06-01T10:30", "--json",
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    # Linear between 60 % (3.9 Ω) and 64 % (4.1 Ω) at 61.8 %: 3.99 Ω (IEEE Std 81's position).
    assert data["value"] == pytest.approx(3.99)
    assert data["method"] == "fall_of_potential_3p"
    assert data["severity"] == "ok"
    with Store.open(demo) as store:
        saved = store.get(Reading, data["reading_id"])
    traverse = read_traverse(saved.traverse)
    assert traverse.current_probe_m == 40.0
    assert [round(d, 6) for d, _ in traverse.points] == [8.0, 20.8, 24.0, 25.6, 28.8]


def test_a_traverse_without_plateau_is_saved_but_incomplete(demo: Path) -> None:
    visit = start(demo)
    result = run(
        demo, "readings", "add", "--inspection", visit, "--tag", "E-01",
        "--quantity", "earth_isolated", "--traverse", "52%=3.0; 61.8%=3.9; 72%=5.2",
        "--current-probe", "20 m", "--taken-at", ON_THE_DAY,
    )  # fmt: skip
    assert result.exit_code == 0, result.output
    assert "INCOMPLETE" in result.stdout
    assert "no plateau" in result.stdout and "move the current probe" in result.stdout


@pytest.mark.parametrize(
    ("extra", "says"),
    [
        (("--traverse", "52%=3.0; 61.8%=3.9"), "--current-probe go together"),
        (("--traverse", "52%=3.0; 61.8%=3.9", "--current-probe", "20 m"), "3 to 60"),
        (("--traverse", "10%=1; 20%=2; 30%=3", "--current-probe", "20 m"), "61.8 %"),
        (("--traverse", "52%=3; 61.8%=3.9; 120%=4", "--current-probe", "20 m"), "between 0"),
        (("--traverse", "52%=3; 61.8%=-3.9; 72%=4", "--current-probe", "20 m"), "negative"),
        (("--traverse", "52%=3; 61.8%=3.9; 72%=4", "--current-probe", "20 m", "--method",
          "four_pole"), "fall_of_potential_3p"),
        (("4.1", "--traverse", "52%=3; 61.8%=3.9; 72%=4", "--current-probe", "20 m"),
         "leave the value empty"),
    ],
)
def test_a_bad_traverse_is_refused_and_nothing_written(
    demo: Path, extra: tuple[str, ...], says: str
) -> None:
    visit = start(demo)
    before = fingerprint(demo)
    result = run(demo, "readings", "add", "--inspection", visit, "--tag", "E-01",
                 "--quantity", "earth_isolated", *extra)  # fmt: skip
    assert result.exit_code == 2, result.output
    assert says in result.stderr
    assert fingerprint(demo) == before


def test_a_single_typed_value_still_works(demo: Path) -> None:
    visit = start(demo)
    result = run(demo, "readings", "add", "4.2", "--inspection", visit, "--tag", "E-01",
                 "--quantity", "earth_isolated", "--taken-at", ON_THE_DAY, "--json")  # fmt: skip
    assert result.exit_code == 0, result.output
    assert json.loads(result.stdout)["traverse"] is None


# ---------------------------------------------------------------- soil surveys


def test_soil_record_and_list(demo: Path) -> None:
    # IEEE Std 81, ρ = 2π·a·R for shallow probes: 2π × 2 × 1.5 = 18.85 Ω·m.
    result = run(demo, "soil", "record", "--site", SITE, "--date", "2026-05-20", "--points",
                 "1 m=3.1; 2 m=1.5; 4 m=0.8", "--direction", "N–S", "--json")  # fmt: skip
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert data["rho_ohm_m"][1] == pytest.approx(18.85, abs=0.01)
    assert data["layered"] is False
    listing = run(demo, "soil", "list", "--site", SITE)
    assert "uniform: ρ from 19.5 Ω·m at 1 m" in listing.stdout
    assert "design ρ: 20.1 Ω·m (highest of the survey, 2026-05-20)" in listing.stdout
    withdrawn = run(demo, "soil", "withdraw", data["id"][:8])
    assert withdrawn.exit_code == 0
    with Store.open(demo) as store:
        assert store.get(SoilSurvey, data["id"]) is None


# ---------------------------------------------------------------- electrodes


def test_electrode_size_and_check(demo: Path) -> None:
    size = run(demo, "electrode", "size", "--site", SITE, "--tag", "E-02",
               "--orientation", "vertical", "--length", "8 ft", "--diameter", "5/8 in")  # fmt: skip
    assert size.exit_code == 0, size.output
    assert size.stdout.strip() == "E-02: vertical, 2.4384 m long, 15.875 mm"
    with Store.open(demo) as store:
        e02 = store.select(Component, "tag = 'E-02' AND site_id = (SELECT id FROM site "
                           "WHERE name = ?)", [SITE])[0]  # fmt: skip
    assert e02.length_m == pytest.approx(2.4384)


SURVEY = ("soil", "record", "--site", SITE)
SIZE = ("electrode", "size", "--site", SITE)


@pytest.mark.parametrize(
    ("command", "says"),
    [
        ((*SURVEY, "--points", "1 m=3.1; 1=1.5"), "two readings at 1 m"),
        ((*SURVEY, "--points", "1 m=3.1", "--choose", "5 m"), "--choose 5 m is not one"),
        ((*SURVEY, "--points", "1 m=3.1", "--date", "2030-01-01"), "--date: 2030-01-01 is in"),
        ((*SURVEY, "--points", "1 m=3.1", "--depth", "-1 m"), "--depth:"),
        ((*SURVEY, "--points", "1 kg=3.1"), "not a length"),
        ((*SURVEY, "--points", ""), "nothing typed"),
        ((*SIZE, "--tag", "TJ-02", "--length", "3 m"), "sizes are for earth electrodes"),
        ((*SIZE, "--tag", "E-02", "--diameter", "2 m"), "--diameter: 2 m is out of range"),
        ((*SIZE, "--tag", "E-02", "--orientation", "sideways"), "not an orientation"),
        ((*SIZE, "--tag", "E-02", "--length", "10 mm", "--diameter", "16 mm"), "not less than"),
    ],
)
def test_a_bad_survey_or_size_is_refused_and_nothing_written(
    demo: Path, command: tuple[str, ...], says: str
) -> None:
    before = fingerprint(demo)
    result = run(demo, *command)
    assert result.exit_code == 2, result.output
    assert says in result.stderr
    assert fingerprint(demo) == before


def test_check_shows_the_demo_electrode_shorter_than_l1(demo: Path) -> None:
    # IEC 62305-3 clause 5.4.2.1 (as quoted): a vertical electrode at least 0.5·l1;
    # level II below 800 Ω·m: l1 = 5 m (Figure 2, from memory), so 2.5 m; E-04 is 2 m
    # and reads 14.2 Ω, above the 10 Ω waiver.
    result = run(demo, "check", "--site", "Aldermere", "--today", ANCHOR.isoformat(), "--json")
    lengths = [r for r in json.loads(result.stdout) if r["rule"] == "electrode-length"]
    assert [(r["component"], r["value"], r["limit"]) for r in lengths] == [("E-04", 2.0, 2.5)]
    assert "short by 0.5 m" in lengths[0]["message"]
