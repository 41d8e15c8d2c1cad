"""Who inspected, what was not inspected and why, the joints reconnected, a draft discarded."""

from __future__ import annotations

import json
from datetime import UTC, date, datetime
from pathlib import Path

import pytest
import sqlite_utils
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.engine.check import check_site
from inspectkit.model import (
    Finding,
    Inspection,
    InspectionState,
    Inspector,
    Instrument,
    NotInspected,
    Reading,
    Site,
)
from inspectkit.plan.planner import Window, make_candidates
from inspectkit.plan.settings import load_plan_settings
from inspectkit.profiles import load_profile
from inspectkit.report.content import text_sections
from inspectkit.report.gather import build_report
from inspectkit.store import Store, schema
from inspectkit.store.database import apply_migrations
from inspectkit.store.queries import load_site_records
from inspectkit.sync.bundle import export_bundle
from inspectkit.sync.merge import import_bundle
from inspectkit.walkdown.completion import (
    finish_inspection,
    joints_not_retested,
    missing_for_completion,
    opened_joints,
)
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.grades import clear_not_inspected, grade_component, mark_not_inspected
from inspectkit.walkdown.readings import record_reading
from inspectkit.walkdown.visit import (
    discard_inspection,
    same_day_draft,
    set_inspector,
    start_inspection,
)
from tests.test_store import save_in_old_schema
from tests.walkdown_factories import WalkSite, build_walk_site

DAY = date(2026, 6, 1)
AT = datetime(2026, 6, 1, 10, 0, tzinfo=UTC)
runner = CliRunner()


@pytest.fixture
def walk(tmp_path: Path) -> tuple[Store, WalkSite]:
    store = Store.open(tmp_path / "walk.sqlite")
    yield store, build_walk_site(store)
    store.close()


def _run(store: Store, *args: str):
    return runner.invoke(app, ["--db", str(store.path), *args])


# ------------------------------------------------------------------ the visit's people


def test_an_inspection_started_without_an_inspector_gets_one_later(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "complete", None, DAY)
    assert visit.inspector_id is None
    again = start_inspection(store, site.site.id, "complete", site.inspector.id, DAY)
    assert again.id == visit.id and again.inspector_id == site.inspector.id  # put on the draft
    other = store.save(Inspector(name="Bram Okoro"))
    assert set_inspector(store, visit.id, other.id).inspector_id == other.id
    with pytest.raises(WalkdownError) as err:
        set_inspector(store, visit.id, "0f6d3a4e-1111-4222-8333-944455556666")
    assert err.value.field == "inspector_id"
    result = _run(store, "inspection", "details", visit.id, "--inspector", "Ada Quill")
    assert result.exit_code == 0, result.output
    assert "Inspector:" in result.stdout and "Ada Quill" in result.stdout
    assert store.get(Inspection, visit.id).inspector_id == site.inspector.id
    # A wrong detail changes nothing, not even the inspector given with it.
    bad = _run(store, "inspection", "details", visit.id, "--inspector", "Bram Okoro",
               "--weather", "x" * 300)  # fmt: skip
    assert bad.exit_code == 2 and "--weather" in bad.output
    assert store.get(Inspection, visit.id).inspector_id == site.inspector.id


def test_a_signed_inspection_keeps_its_inspector(walk) -> None:
    store, site = walk
    signed = store.save(
        Inspection(site_id=site.site.id, kind="complete", date=DAY, state="signed",
                   signed_at=AT, inspector_id=site.inspector.id)  # fmt: skip
    )
    other = store.save(Inspector(name="Bram Okoro"))
    with pytest.raises(WalkdownError, match="is signed"):
        set_inspector(store, signed.id, other.id)


def test_starting_the_same_kind_on_the_same_day_continues_the_finished_draft(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "complete", site.inspector.id, DAY)
    record_reading(store, visit.id, site.tag("DC-01").id, "continuity", "0.1", taken_at=AT)
    finish_inspection(store, visit.id)
    assert same_day_draft(store, site.site.id, "complete", DAY).id == visit.id
    again = start_inspection(store, site.site.id, "complete", None, DAY)
    assert again.id == visit.id and not again.finished  # open again, not a second visit
    assert len(store.select(Inspection, "date = ?", [DAY.isoformat()])) == 1
    finish_inspection(store, visit.id)
    second = start_inspection(store, site.site.id, "complete", None, DAY, continue_draft=False)
    assert second.id != visit.id
    result = _run(store, "inspection", "start", "--site", "Fernhollow", "--kind", "visual",
                  "--date", DAY.isoformat())  # fmt: skip
    assert "Continuing the open complete draft" in result.stderr  # the second one is open


def test_the_cli_start_says_it_continues_and_opens_again(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "visual", None, DAY)
    finish_inspection(store, visit.id)
    result = _run(store, "inspection", "start", "--site", "Fernhollow", "--kind", "visual",
                  "--date", DAY.isoformat())  # fmt: skip
    assert result.exit_code == 0, result.output
    assert result.stdout.strip() == visit.id
    assert "Continuing the finished visual draft of 2026-06-01" in result.stderr
    assert "No inspector on it: give --inspector" in result.stderr
    finish_inspection(store, visit.id)
    new = _run(store, "inspection", "start", "--site", "Fernhollow", "--kind", "visual",
               "--date", DAY.isoformat(), "--new")  # fmt: skip
    assert new.exit_code == 0 and new.stdout.strip() != visit.id  # a second visit, as asked


# ------------------------------------------------------------------ discarding a draft


def _filled(store: Store, site: WalkSite) -> Inspection:
    visit = start_inspection(store, site.site.id, "complete", site.inspector.id, DAY)
    record_reading(store, visit.id, site.tag("DC-01").id, "continuity", "0.1", taken_at=AT)
    grade_component(store, visit.id, site.tag("AT-01").id, "defect", "tip bent")
    mark_not_inspected(store, visit.id, site.tag("AT-02").id, "unsafe", "ridge iced over")
    earlier_finding = store.select(Finding, "inspection_id = ?", [site.earlier.id])[0]
    store.save(earlier_finding.model_copy(update={"resolved_by": visit.id}))
    return visit


def test_a_draft_is_discarded_with_what_it_recorded_and_the_audit_keeps_it(walk) -> None:
    store, site = walk
    visit = _filled(store, site)
    discard_inspection(store, visit.id)
    assert store.get(Inspection, visit.id) is None
    for model in (Reading, Finding, NotInspected):
        assert store.select(model, "inspection_id = ?", [visit.id]) == []
    assert all(f.resolved_by is None for f in store.select(Finding))  # open again
    deleted = {
        table
        for (table,) in store.db.execute(
            "SELECT DISTINCT table_name FROM audit WHERE action = 'delete'"
        )
    }
    assert deleted == {"inspection", "reading", "finding", "not_inspected"}
    assert store.verify_audit() == []


def test_a_signed_inspection_is_never_discarded(walk) -> None:
    store, site = walk
    signed = store.save(
        Inspection(site_id=site.site.id, kind="complete", date=DAY, state="signed", signed_at=AT)
    )
    with pytest.raises(WalkdownError, match="is signed"):
        discard_inspection(store, signed.id)
    result = _run(store, "inspection", "discard", signed.id, "--yes")
    assert result.exit_code == 2 and store.get(Inspection, signed.id) is not None


def test_the_cli_asks_before_discarding(walk) -> None:
    store, site = walk
    visit = _filled(store, site)
    kept = runner.invoke(app, ["--db", str(store.path), "inspection", "discard", visit.id],
                         input="n\n")  # fmt: skip
    assert kept.exit_code == 1 and store.get(Inspection, visit.id) is not None
    gone = runner.invoke(app, ["--db", str(store.path), "inspection", "discard", visit.id],
                         input="y\n")  # fmt: skip
    assert gone.exit_code == 0 and "audit log keeps it" in gone.stdout
    assert store.get(Inspection, visit.id) is None


def test_a_bundle_carries_the_discard_like_a_withdrawal(walk, tmp_path: Path) -> None:
    store, site = walk
    visit = _filled(store, site)
    laptop = Store.open(tmp_path / "laptop.sqlite")
    import_bundle(laptop, export_bundle(store, site.site.id, tmp_path / "one.zip").path)
    assert laptop.get(Inspection, visit.id) is not None
    discard_inspection(store, visit.id)
    report = import_bundle(laptop, export_bundle(store, site.site.id, tmp_path / "two.zip").path)
    assert laptop.get(Inspection, visit.id) is None
    assert laptop.select(Reading, "inspection_id = ?", [visit.id]) == []
    assert report.removed["inspection"] == 1 and report.removed["reading"] == 1
    assert laptop.verify_audit() == []
    # Back the other way, the discarded draft stays discarded.
    back = import_bundle(store, export_bundle(laptop, site.site.id, tmp_path / "three.zip").path)
    assert store.get(Inspection, visit.id) is None and not back.added
    laptop.close()


def test_a_discarded_draft_the_other_side_added_to_is_kept_there(walk, tmp_path: Path) -> None:
    store, site = walk
    visit = _filled(store, site)
    laptop = Store.open(tmp_path / "laptop.sqlite")
    import_bundle(laptop, export_bundle(store, site.site.id, tmp_path / "one.zip").path)
    record_reading(laptop, visit.id, site.tag("DC-02").id, "continuity", "0.1", taken_at=AT)
    discard_inspection(store, visit.id)
    report = import_bundle(laptop, export_bundle(store, site.site.id, tmp_path / "two.zip").path)
    assert laptop.get(Inspection, visit.id) is not None  # it holds a reading not discarded
    assert any(visit.id in label for label in report.kept_edited)
    laptop.close()


# ------------------------------------------------------------------ not inspected


def test_a_component_marked_not_inspected_stands_instead_of_a_grade(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "visual", None, DAY)
    at = site.tag("AT-01").id
    with pytest.raises(WalkdownError) as err:
        mark_not_inspected(store, visit.id, at, "other")
    assert err.value.field == "text"
    with pytest.raises(WalkdownError) as err:
        mark_not_inspected(store, visit.id, at, "far away")
    assert err.value.field == "reason" and "no_access, unsafe, covered, removed, other" in str(
        err.value
    )
    grade_component(store, visit.id, at, "sound")
    mark = mark_not_inspected(store, visit.id, at, "no_access", "scaffold taken down")
    assert mark.why == "no access: scaffold taken down"
    assert store.select(Finding, "inspection_id = ? AND component_id = ?", [visit.id, at]) == []
    assert "AT-01: not graded yet" not in [m.what for m in missing_for_completion(store, visit.id)]
    grade_component(store, visit.id, at, "sound")  # inspected after all
    assert store.select(NotInspected, "inspection_id = ?", [visit.id]) == []
    mark_not_inspected(store, visit.id, at, "covered")
    clear_not_inspected(store, visit.id, at)
    assert "AT-01: not graded yet" in [m.what for m in missing_for_completion(store, visit.id)]


def test_the_cli_marks_and_clears(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "visual", None, DAY)
    base = ["not-inspected", "--inspection", visit.id, "--tag", "SPD-01"]
    none = _run(store, *base)
    assert none.exit_code == 2 and "--reason:" in none.output
    marked = _run(store, *base, "--reason", "removed", "--text", "board replaced")
    assert marked.exit_code == 0
    assert "SPD-01: not inspected (removed: board replaced)" in marked.stdout
    cleared = _run(store, *base, "--clear")
    assert cleared.exit_code == 0 and store.select(NotInspected) == []


def _complete_visit(store: Store, site: WalkSite) -> Inspection:
    """A complete visit with every test taken and every part graded but three."""
    visit = start_inspection(store, site.site.id, "complete", site.inspector.id, DAY)
    for n in (1, 2, 3):
        record_reading(store, visit.id, site.tag(f"ER-0{n}").id, "earth_isolated", "4.1",
                       instrument_id=site.instrument.id, taken_at=AT)  # fmt: skip
        record_reading(store, visit.id, site.tag(f"DC-0{n}").id, "continuity", "0.1",
                       taken_at=AT)  # fmt: skip
    for stop_tag, part in site.parts.items():
        if part.retired_on is None and stop_tag not in ("BD-01", "SPD-01", "AT-02"):
            grade_component(store, visit.id, part.id, "sound")
    mark_not_inspected(store, visit.id, site.tag("AT-02").id, "unsafe", "ridge iced over")
    return visit


def test_check_lists_components_neither_graded_nor_marked_and_those_not_inspected(walk) -> None:
    store, site = walk
    visit = _complete_visit(store, site)
    records = load_site_records(store, site.site.id)
    results = check_site(records, load_profile(site.site.profile), DAY).results
    (ungraded,) = [r for r in results if r.rule == "ungraded"]
    assert ungraded.severity.value == "incomplete" and ungraded.components == ("BD-01", "SPD-01")
    assert "draft complete inspection of 2026-06-01 neither graded nor marked" in ungraded.message
    (skipped,) = [r for r in results if r.rule == "not-inspected"]
    assert skipped.component_tag == "AT-02" and "unsafe: ridge iced over" in skipped.message
    check = _run(store, "check", "--json", "--today", DAY.isoformat())
    rules = {(r["rule"], r["component"]) for r in json.loads(check.stdout)}
    assert ("not-inspected", "AT-02") in rules and ("ungraded", None) in rules
    # A later visit that grades it closes the gap.
    finish_inspection(store, visit.id, reconnected=True)
    later = start_inspection(store, site.site.id, "visual", None, date(2026, 6, 20))
    grade_component(store, later.id, site.tag("AT-02").id, "sound")
    records = load_site_records(store, site.site.id)
    results = check_site(records, load_profile(site.site.profile), date(2026, 6, 21)).results
    assert not [r for r in results if r.rule == "not-inspected"]


# ------------------------------------------------------------------ test joints reconnected


def test_finishing_a_visit_that_opened_joints_asks_for_the_reconnection(walk) -> None:
    store, site = walk
    visit = _complete_visit(store, site)
    assert [c.tag for c in opened_joints(store, visit.id)] == ["TJ-01", "TJ-02", "TJ-03"]
    with pytest.raises(WalkdownError) as err:
        finish_inspection(store, visit.id)
    assert err.value.field == "reconnected" and "(TJ-01, TJ-02, TJ-03)" in str(err.value)
    assert not store.get(Inspection, visit.id).finished  # nothing saved
    finish_inspection(store, visit.id, not_reconnected="TJ-03 bolt seized; left for the fitter")
    done = store.get(Inspection, visit.id)
    assert done.finished and done.joints_reconnected is False
    lines = dict(
        line.split(": ", 1)
        for section in text_sections(build_report(store, visit.id))
        for line in section.lines
        if section.title == "Inspection"
    )
    assert lines["Test joints"].startswith("NOT confirmed reconnected and re-tested: TJ-03 bolt")


def test_the_report_prints_the_confirmation_and_what_was_not_inspected(walk) -> None:
    store, site = walk
    visit = _complete_visit(store, site)
    result = _run(store, "inspection", "finish", visit.id, "--anyway", "--reconnected")
    assert result.exit_code == 0, result.output
    sections = {s.title: s.lines for s in text_sections(build_report(store, visit.id))}
    assert (
        "Test joints: every test joint opened for an isolated reading was reconnected and "
        "re-tested" in sections["Inspection"]
    )
    assert "AT-02 (air terminal): unsafe: ridge iced over" in sections["Not inspected"]
    readings = "\n".join(sections["Readings"])
    assert "[ET-4471]" in readings  # each reading names its instrument
    assert "3 earth resistance, electrode isolated" in "\n".join(sections["Instruments"])


def test_a_visit_without_isolated_readings_is_not_asked(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "visual", None, DAY)
    finish_inspection(store, visit.id)
    assert store.get(Inspection, visit.id).joints_reconnected is None


# ------------------------------------------------------------------ one visit, one report


def test_a_report_covers_its_own_inspection_only(walk) -> None:
    store, site = walk
    first = start_inspection(store, site.site.id, "complete", site.inspector.id, DAY)
    grade_component(store, first.id, site.tag("AT-01").id, "defect", "tip bent")
    finish_inspection(store, first.id)
    second = start_inspection(store, site.site.id, "complete", None, DAY, continue_draft=False)
    grade_component(store, second.id, site.tag("AT-01").id, "defect", "tip bent")
    notices = [n.message for n in build_report(store, second.id).notices]
    assert sum("tip bent" in m for m in notices) == 1  # not twice, once per draft
    assert not any("draft complete inspection" in m for m in notices)


# ------------------------------------------------------------------ the schema step


def test_a_database_before_the_visit_records_step_opens_and_keeps_its_records(
    tmp_path: Path,
) -> None:
    path = tmp_path / "old.sqlite"
    db = sqlite_utils.Database(path)
    apply_migrations(db, upto=schema.MIGRATIONS.index(schema._visit_records))
    site = Site(name="Old Chapel", protection_level="III")
    visit = Inspection(site_id=site.id, kind="visual", date=date(2026, 5, 4), finished=True)
    meter = Instrument(description="Earth tester", serial="OLD-1")
    for record in (site, visit, meter):
        save_in_old_schema(db, record)
    db.close()
    with Store.open(path) as store:
        assert store.schema_version() == schema.SCHEMA_VERSION
        assert store.get(Instrument, meter.id).kind is None  # not judged until given
        kept = store.get(Inspection, visit.id)
        assert kept.joints_reconnected is None and kept.reconnection_note == ""
        assert store.select(NotInspected) == []
        assert store.verify_audit() == [], "the new columns are logged, not taken for an edit"
        assert kept.state is InspectionState.DRAFT


def test_the_plan_proposes_a_return_for_a_component_not_inspected(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "visual", site.inspector.id, DAY)
    for part in site.parts.values():
        if part.retired_on is None and part.tag != "AT-02":
            grade_component(store, visit.id, part.id, "sound")
    mark_not_inspected(store, visit.id, site.tag("AT-02").id, "unsafe", "ridge iced over")
    finish_inspection(store, visit.id)
    records = load_site_records(store, site.site.id)
    profile = load_profile(site.site.profile)
    window = Window(date(2026, 6, 8), 5)
    (found,) = make_candidates([(records, profile)], window, load_plan_settings())
    (owed,) = [r for r in found.reasons if r.what == "return"]
    assert owed.text == "return for AT-02, not inspected on 2026-06-01 (unsafe: ridge iced over)"
    assert "return visit" in found.kind_label


def test_the_question_names_joints_with_no_reading_across_them_since(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "complete", None, DAY)
    for n in (1, 2):
        record_reading(store, visit.id, site.tag(f"ER-0{n}").id, "earth_isolated", "4",
                       taken_at=AT)  # fmt: skip
    later = AT.replace(hour=11)
    record_reading(store, visit.id, site.tag("TJ-01").id, "earth_combined", "2.1", taken_at=later)
    record_reading(store, visit.id, site.tag("DC-02").id, "continuity", "0.1",
                   taken_at=AT.replace(hour=9))  # before TJ-02 was opened: not across it
    assert joints_not_retested(store, visit.id) == ["TJ-02"]
    with pytest.raises(WalkdownError, match=r"\(TJ-01, TJ-02\) \(no reading across TJ-02 since\)"):
        finish_inspection(store, visit.id)
    record_reading(store, visit.id, site.tag("DC-02").id, "continuity", "0.1", taken_at=later)
    assert joints_not_retested(store, visit.id) == []


def test_inspection_show_says_what_was_not_inspected(walk) -> None:
    store, site = walk
    visit = start_inspection(store, site.site.id, "visual", None, DAY)
    mark_not_inspected(store, visit.id, site.tag("SPD-01").id, "covered", "board boxed in")
    shown = _run(store, "inspection", "show", visit.id)
    assert any("SPD-01" in line and "not inspected (covered: board boxed in)" in line
               for line in shown.stdout.splitlines())  # fmt: skip
    stops = json.loads(_run(store, "inspection", "show", visit.id, "--json").stdout)["stops"]
    [spd] = [s for s in stops if s["tag"] == "SPD-01"]
    assert spd["not_inspected"] == {"reason": "covered", "text": "board boxed in"}
