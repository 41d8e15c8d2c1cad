"""A walkdown by commands on a demo copy: start, readings, grades, photos, finish, then check."""

from __future__ import annotations

import json
from datetime import UTC, date, datetime
from pathlib import Path

import pytest
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.demo.generate import build_demo
from inspectkit.model import (
    Finding,
    Inspection,
    InspectionState,
    Photo,
    Quantity,
    Reading,
)
from inspectkit.report.content import CHANGES_TITLE, text_sections
from inspectkit.report.gather import build_report
from inspectkit.store import Store
from inspectkit.store.queries import find_site, last_write
from tests.walkdown_factories import write_photo

runner = CliRunner()

ANCHOR = date(2026, 6, 1)
SITE = "Pellow Ridge Quarry Offices"
TAKEN = "2026-06-01T10:30"


@pytest.fixture
def demo(tmp_path: Path) -> Path:
    return build_demo(tmp_path / "demo.sqlite", anchor=ANCHOR)


def run(db: Path, *args: str):
    return runner.invoke(app, ["--db", str(db), *args])


def start(db: Path, kind: str = "complete") -> str:
    result = run(
        db,
        "inspection",
        "start",
        "--site",
        SITE,
        "--kind",
        kind,
        "--date",
        ANCHOR.isoformat(),
        "--inspector",
        "Maren Holt",
    )
    assert result.exit_code == 0, result.output
    return result.stdout.strip()


def add(db: Path, visit: str, tag: str, quantity: str, value: str, *extra: str):
    return run(
        db,
        "reading",
        "add",
        "--inspection",
        visit,
        "--tag",
        tag,
        "--quantity",
        quantity,
        value,
        "--taken-at",
        TAKEN,
        *extra,
    )


def snapshot(db: Path) -> tuple[int | None, int, int]:
    """The last audit row and the reading and finding counts: any write changes one."""
    with Store.open(db) as store:
        return last_write(store), len(store.select(Reading)), len(store.select(Finding))


# ------------------------------------------------------------ the whole walk


def test_a_whole_walkdown_by_commands(demo: Path, tmp_path: Path) -> None:
    visit = start(demo)
    shown = run(demo, "inspection", "show", visit, "--json")
    assert shown.exit_code == 0, shown.output
    walk = json.loads(shown.stdout)
    assert walk["inspection"]["site"] == SITE and walk["inspection"]["kind"] == "complete"

    verdicts: dict[str, str] = {}
    for stop in walk["stops"]:
        tag = stop["tag"]
        for entry in stop["readings"]:
            quantity = Quantity(entry["quantity"])
            if quantity is Quantity.SOIL_RESISTIVITY:
                continue
            if tag == "E-02":
                value, instrument, code = "25", "ET4-20417", 1  # the failing electrode
            elif quantity in (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED):
                value, instrument, code = "4.2 Ω", "ET4-20417", 0
            else:
                value, instrument, code = "45 mΩ", "LR-8812", 0
            result = add(demo, visit, tag, quantity.value, value, "--instrument", instrument)
            assert result.exit_code == code, result.output
            verdicts[f"{tag} {quantity.value}"] = result.stdout
        if tag == "DC-03":
            graded = run(
                demo,
                "grade",
                "--inspection",
                visit,
                "--tag",
                tag,
                "--grade",
                "defect",
                "--text",
                "guard at ground level broken",
                "--remedy",
                "replace the guard",
                "--due",
                "2026-07-01",
            )
        else:
            graded = run(demo, "grade", "--inspection", visit, "--tag", tag, "--grade", "sound")
        assert graded.exit_code == 0, graded.output
    shot = datetime(2026, 6, 1, 10, 31, tzinfo=UTC)
    photo = write_photo(tmp_path / "card" / "IMG_0100.jpg", shot)
    attached = run(demo, "photo", "add", "--inspection", visit, "--tag", "TJ-01", str(photo))
    assert attached.exit_code == 0, attached.output
    assert "IMG_0100.jpg → TJ-01" in attached.stdout

    # IEC 62305-3 clause 5.4 (as quoted): 10 Ω or less for the earth-termination system;
    # the demo site's profile holds each electrode to the same 10 Ω.
    assert "FAIL 25 Ω > 10 Ω" in verdicts["E-02 earth_isolated"]
    assert "PASS 4.2 Ω ≤ 10 Ω" in verdicts["E-01 earth_isolated"]
    assert "% on 2026-03-03" in verdicts["E-01 earth_isolated"]  # against the last visit
    # Continuity default limit 0.2 Ω (from memory, docs/sources.md "Rules of the trade").
    # 45 mΩ: within 50 % (continuity_rise_fraction, our default) of DC-01's 55 mΩ baseline.
    assert "PASS 45 mΩ ≤ 200 mΩ" in verdicts["DC-01 continuity"]

    text = run(demo, "inspection", "show", visit)
    assert "FAIL 25 Ω > 10 Ω" in text.stdout and "Nothing missing." in text.stdout
    assert "defect: guard at ground level broken" in text.stdout

    unconfirmed = run(demo, "inspection", "finish", visit)
    assert unconfirmed.exit_code == 2  # joints opened for isolated readings: say so first
    assert "--reconnected: test joints opened for isolated readings (TJ-01" in unconfirmed.output
    finished = run(demo, "inspection", "finish", visit, "--reconnected")
    assert finished.exit_code == 0, finished.output
    assert "Nothing missing" in finished.stdout and "marked complete" in finished.stdout

    check = run(demo, "check", "--json", "--today", ANCHOR.isoformat(), "--site", SITE)
    assert check.exit_code == 1  # a failing reading is something to act on
    results = json.loads(check.stdout)
    with Store.open(demo) as store:
        done = store.get(Inspection, visit)
        assert done is not None and done.finished and done.inspector_id is not None
        assert done.joints_reconnected is True
        e02 = next(
            r
            for r in store.select(Reading, "inspection_id = ?", [visit])
            if r.value == pytest.approx(25.0)
        )
        assert e02.taken_at == datetime(2026, 6, 1, 10, 30, tzinfo=UTC)
        photos = store.select(Photo, "inspection_id = ?", [visit])
        assert len(photos) == 1 and photos[0].component_id is not None
        assert store.verify_audit() == []
    failing = [r for r in results if r["rule"] == "limit" and r["severity"] == "fail"]
    assert [(r["component"], r["value"], r["limit"]) for r in failing] == [("E-02", 25.0, 10.0)]
    assert "2026-06-01" in failing[0]["message"]
    assert any(r["rule"] == "carried-defect" and r["component"] == "DC-03" for r in results)
    assert not any(r["rule"] == "incomplete" and "2026-06-01" in r["message"] for r in results)


# ------------------------------------------------------------------ bad input


@pytest.mark.parametrize(
    ("args", "field"),
    [
        (("E-02", "earth_isolated", "four ohms"), "VALUE"),
        (("TJ-99", "earth_isolated", "4"), "--tag"),
        (("E-02", "continuity", "4"), "--quantity"),
        (("E-02", "earth_isolated", "4", "--instrument", "NO-SUCH"), "--instrument"),
        (("E-02", "earth_isolated", "4", "--method", "clamp_on"), "method clamp_on"),
        (("E-02", "earth_isolated", "4", "--method", "by-eye"), "--method"),
        (("E-02", "earth_volts", "4"), "--quantity"),
    ],
)
def test_a_bad_reading_exits_2_names_the_field_and_changes_nothing(
    demo: Path, args: tuple[str, ...], field: str
) -> None:
    visit = start(demo)
    before = snapshot(demo)
    tag, quantity, value, *extra = args
    result = add(demo, visit, tag, quantity, value, *extra)
    assert result.exit_code == 2
    assert field in result.stderr
    assert snapshot(demo) == before


@pytest.mark.parametrize(
    ("args", "field"),
    [
        (("--grade", "defect"), "--text"),
        (("--grade", "defect", "--text", "bent", "--due", "next week"), "--due"),
        (("--grade", "broken"), "--grade"),
    ],
)
def test_a_bad_grade_exits_2_and_saves_nothing(
    demo: Path, args: tuple[str, ...], field: str
) -> None:
    visit = start(demo)
    before = snapshot(demo)
    result = run(demo, "grade", "--inspection", visit, "--tag", "AT-01", *args)
    assert result.exit_code == 2
    assert field in result.stderr
    assert snapshot(demo) == before


def test_unknown_site_inspection_or_photo_exit_2(demo: Path, tmp_path: Path) -> None:
    before = snapshot(demo)
    nosite = run(demo, "inspection", "start", "--site", "Nowhere Mill", "--kind", "visual")
    assert nosite.exit_code == 2 and "--site" in nosite.stderr
    amend = run(demo, "inspection", "start", "--site", SITE, "--kind", "amendment")
    assert amend.exit_code == 2 and "--kind" in amend.stderr
    noone = run(demo, "inspection", "start", "--site", SITE, "--kind", "visual", "--inspector", "X")
    assert noone.exit_code == 2 and "--inspector" in noone.stderr
    assert run(demo, "inspection", "show", "0000-none").exit_code == 2
    assert snapshot(demo) == before
    visit = start(demo)
    before = snapshot(demo)
    nophoto = run(demo, "photo", "add", "--inspection", visit, str(tmp_path / "missing.jpg"))
    assert nophoto.exit_code == 2 and "PATH" in nophoto.stderr
    assert snapshot(demo) == before


@pytest.mark.parametrize(
    "command",
    [
        ("grade", "--inspection", "{id}", "--tag", "AT-01", "--grade", "sound"),
        ("inspection", "details", "{id}", "--weather", "dry"),
    ],
    ids=["grade", "details"],
)
def test_a_signed_inspection_refuses_new_entries(demo: Path, command: tuple[str, ...]) -> None:
    with Store.open(demo) as store:
        site = find_site(store, SITE)
        assert site is not None
        signed = store.save(
            Inspection(
                site_id=site.id,
                kind="visual",
                date=date(2026, 5, 20),
                state=InspectionState.SIGNED,
                signed_at=datetime(2026, 5, 20, 16, 0, tzinfo=UTC),
                finished=True,
            )
        )
    before = snapshot(demo)
    result = run(demo, *(part.format(id=signed.id) for part in command))
    assert result.exit_code == 2
    assert "--inspection" in result.stderr and "signed" in result.stderr
    assert snapshot(demo) == before


# --------------------------------------------------------------- the details


def test_start_continues_the_open_draft(demo: Path) -> None:
    first = start(demo)
    again = run(demo, "inspection", "start", "--site", SITE, "--kind", "visual")
    assert again.exit_code == 0
    assert again.stdout.strip() == first
    assert "Continuing the open complete draft of 2026-06-01; finish it" in again.stderr
    same = run(demo, "inspection", "start", "--site", SITE, "--kind", "complete")
    assert same.stdout.strip() == first and "Continuing" in same.stderr
    fresh = run(demo, "inspection", "start", "--site", "Aldermere", "--kind", "visual")
    assert fresh.exit_code == 0 and "Continuing" not in fresh.stderr  # a new draft


def test_readings_add_is_the_same_command(demo: Path) -> None:
    visit = start(demo)
    result = run(
        demo,
        "readings",
        "add",
        "--inspection",
        visit,
        "--tag",
        "E-01",
        "--quantity",
        "earth_isolated",
        "4.2",
        "--taken-at",
        TAKEN,
    )
    assert result.exit_code == 0, result.output
    assert "PASS 4.2 Ω ≤ 10 Ω" in result.stdout
    four = add(demo, visit, "E-01", "earth_isolated", "4.3", "--method", "four_pole")
    assert four.stdout.rstrip().endswith("· by four_pole")


def test_a_start_of_the_id_is_enough(demo: Path) -> None:
    visit = start(demo)
    result = add(demo, visit[:8], "E-01", "earth_isolated", "4.2")
    assert result.exit_code == 0, result.output
    assert run(demo, "inspection", "missing", visit[:3]).exit_code == 2  # too short to trust


def test_typing_a_reading_again_corrects_it(demo: Path) -> None:
    visit = start(demo)
    assert add(demo, visit, "E-01", "earth_isolated", "40").exit_code == 1
    assert add(demo, visit, "E-01", "earth_isolated", "4.0").exit_code == 0
    with Store.open(demo) as store:
        assert [r.value for r in store.select(Reading, "inspection_id = ?", [visit])] == [4.0]


def test_a_reading_typed_on_the_wrong_joint_is_withdrawn(demo: Path) -> None:
    visit = start(demo)
    assert add(demo, visit, "E-01", "earth_isolated", "4.2").exit_code == 0
    withdraw = ("readings", "withdraw", "--inspection", visit, "--tag", "E-01",
                "--quantity", "earth_isolated")  # fmt: skip
    result = run(demo, *withdraw)
    assert result.exit_code == 0, result.output
    assert "E-01: 4.2 Ω (earth resistance, electrode isolated) withdrawn." in result.stdout
    with Store.open(demo) as store:
        assert store.select(Reading, "inspection_id = ?", [visit]) == []
        assert store.verify_audit() == []
    before = snapshot(demo)
    again = run(demo, *withdraw)
    assert again.exit_code == 2 and "--quantity" in again.stderr and "no earth" in again.stderr
    assert snapshot(demo) == before


def test_a_doubtful_reading_is_kept_but_not_a_pass(demo: Path) -> None:
    visit = start(demo)
    result = add(demo, visit, "E-01", "earth_isolated", "4.2", "--doubtful", "--json")
    assert result.exit_code == 0, result.output
    outcome = json.loads(result.stdout)
    assert outcome["method"] == "fall_of_potential_3p"
    assert outcome["unreliable"] is True and outcome["severity"] == "watch"
    assert outcome["verdict"].startswith("WATCH 4.2 Ω ≤ 10 Ω") and "doubtful" in outcome["verdict"]
    assert any("marked doubtful" in m for m in outcome["messages"])


def test_missing_and_finish_stop_while_something_is_missing(demo: Path) -> None:
    visit = start(demo)
    missing = run(demo, "inspection", "missing", visit)
    assert missing.exit_code == 1
    assert "no isolated earth reading for E-01" in missing.stdout
    assert "AT-01: not graded yet" in missing.stdout
    refused = run(demo, "inspection", "finish", visit)
    assert refused.exit_code == 1 and "Still missing" in refused.stdout
    with Store.open(demo) as store:
        assert not store.get(Inspection, visit).finished  # type: ignore[union-attr]
    anyway = run(demo, "inspection", "finish", visit, "--anyway")
    assert anyway.exit_code == 0 and "marked complete" in anyway.stdout
    with Store.open(demo) as store:
        assert store.get(Inspection, visit).finished  # type: ignore[union-attr]


def test_a_folder_of_photos_is_matched_by_time(demo: Path, tmp_path: Path) -> None:
    visit = start(demo)
    add(demo, visit, "E-01", "earth_isolated", "4.2")
    card = tmp_path / "card"
    write_photo(card / "IMG_1.jpg", datetime(2026, 6, 1, 10, 33, tzinfo=UTC))
    write_photo(card / "IMG_2.jpg", datetime(2026, 6, 1, 15, 0, tzinfo=UTC))
    result = run(demo, "photo", "add", "--inspection", visit, str(card))
    assert result.exit_code == 0, result.output
    assert "IMG_1.jpg → E-01" in result.stdout
    assert "IMG_2.jpg → the inspection only" in result.stdout
    again = run(demo, "photo", "add", "--inspection", visit, str(card))
    assert "0 photos attached." in again.stdout


def test_show_lists_the_walk_in_order(demo: Path) -> None:
    visit = start(demo)
    add(demo, visit, "TJ-01", "earth_combined", "2.0")  # the demo's baseline: 1.51 Ω
    result = run(demo, "inspection", "show", visit)
    lines = result.stdout.splitlines()
    assert lines[0].startswith(f"{SITE} · complete inspection 2026-06-01 · draft")
    tags = [line.split()[0] for line in lines[1:-1] if not line.lstrip().startswith("·")]
    assert tags[:4] == ["AT-01", "AT-02", "AT-03", "AT-04"]  # roof first
    assert tags.index("DC-01") < tags.index("TJ-01") < tags.index("E-01") < tags.index("DC-02")
    assert any("PASS 2 Ω ≤ 10 Ω" in line for line in lines)
    assert any("E-01" in line and "not graded" in line for line in lines)


def test_details_are_recorded_and_shown(demo: Path) -> None:
    visit = start(demo)
    result = run(
        demo,
        "inspection",
        "details",
        visit,
        "--weather",
        "dry, overcast",
        "--not-inspected",
        "north roof: no safe access",
        "--accompanied-by",
        "the site manager",
    )
    assert result.exit_code == 0, result.output
    assert "Weather:        dry, overcast" in result.stdout
    assert "Notes:          (none)" in result.stdout  # every detail listed, blank ones too
    again = run(demo, "inspection", "details", visit, "--changes", "new plant room", "--notes", "")
    assert again.exit_code == 0, again.output
    assert "Alterations:    new plant room" in again.stdout
    assert "Not inspected:  north roof: no safe access" in again.stdout  # kept
    with Store.open(demo) as store:
        saved = store.get(Inspection, visit)
    assert saved is not None and saved.accompanied_by == "the site manager"
    assert saved.changes_since_last == "new plant room"

    shown = run(demo, "inspection", "show", visit)
    assert "  Weather:        dry, overcast" in shown.stdout.splitlines()[1:3]
    assert "Notes:" not in shown.stdout  # blank details are left out of the walk
    walk = json.loads(run(demo, "inspection", "show", visit, "--json").stdout)
    assert walk["inspection"]["not_inspected"] == "north roof: no safe access"
    assert walk["inspection"]["notes"] == ""

    with Store.open(demo) as store:
        report = {s.title: s.lines for s in text_sections(build_report(store, visit))}
    assert "Accompanied by: the site manager" in report["Inspection"]
    assert "Weather: dry, overcast" in report["Inspection"]
    assert report["Not inspected"] == ("north roof: no safe access",)
    assert report[CHANGES_TITLE] == ("new plant room",)


def test_a_bad_detail_exits_2_names_the_option_and_changes_nothing(demo: Path) -> None:
    visit = start(demo)
    run(demo, "inspection", "details", visit, "--weather", "dry")
    before = snapshot(demo)
    result = run(demo, "inspection", "details", visit, "--notes", "x", "--weather", "w" * 201)
    assert result.exit_code == 2
    assert result.stderr.startswith("inspectkit: --weather: String should have at most 200")
    assert snapshot(demo) == before
    with Store.open(demo) as store:
        saved = store.get(Inspection, visit)
    assert saved is not None and saved.weather == "dry" and saved.notes == ""
