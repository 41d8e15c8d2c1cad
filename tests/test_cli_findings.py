"""`inspectkit findings` on a demo copy: open defects with age and due date, and resolving one."""

# ruff: noqa: F811 - the demo fixture is imported, then named as an argument

from __future__ import annotations

import json
from pathlib import Path

from inspectkit.model import Finding, Grade
from inspectkit.store import Store
from inspectkit.store.queries import last_write, open_findings
from tests.test_cli_inspection import ANCHOR, demo, run  # noqa: F401 - demo is a fixture

SITE = "Aldermere Water Treatment Works"


def listed(db: Path, *args: str) -> list[dict[str, object]]:
    result = run(db, "findings", "--json", "--today", ANCHOR.isoformat(), *args)
    assert result.exit_code in (0, 1), result.output
    return json.loads(result.stdout)


def test_open_findings_with_age_and_due_date(demo: Path) -> None:
    items = listed(demo)
    with Store.open(demo) as store:
        expected = open_findings(store)
    assert [i["id"] for i in items] == [o.finding.id for o in expected]
    assert all(i["grade"] != "sound" for i in items)
    # Soonest due first; those without a due date last.
    dues = [i["due_by"] for i in items if i["due_by"]]
    assert dues == sorted(dues)
    for item, found in zip(items, expected, strict=True):
        # Age in days, counted by the calendar (date.toordinal), not by the command.
        assert item["age_days"] == ANCHOR.toordinal() - found.found_on.toordinal()
        assert item["late"] == (found.finding.due_by is not None and found.finding.due_by < ANCHOR)


def test_the_table_says_late_in_words_and_exits_1(demo: Path) -> None:
    result = run(demo, "findings", "--today", ANCHOR.isoformat())
    assert result.exit_code == 1  # a finding past its due date is something to act on
    late = [line for line in result.stdout.splitlines() if " LATE " in line]
    assert late and all(SITE in line or "LATE" in line for line in late)
    assert result.stdout.rstrip().endswith("open findings.")
    early = run(demo, "findings", "--today", "2020-01-01")
    assert early.exit_code == 0 and " LATE " not in early.stdout


def test_one_site_only(demo: Path) -> None:
    items = listed(demo, "--site", "Aldermere")
    assert items and {i["site"] for i in items} == {SITE}
    assert run(demo, "findings", "--site", "Nowhere Mill").exit_code == 2


def test_resolve_by_a_later_visit(demo: Path) -> None:
    item = listed(demo, "--site", SITE)[0]
    started = run(
        demo, "inspection", "start", "--site", SITE, "--kind", "visual", "--date", "2026-06-01"
    )
    visit = started.stdout.strip()
    result = run(demo, "findings", "resolve", str(item["id"])[:8], "--by", visit[:8])
    assert result.exit_code == 0, result.output
    assert "marked resolved by the visit of 2026-06-01" in result.stdout
    assert item["id"] not in {i["id"] for i in listed(demo)}
    with Store.open(demo) as store:
        finding = store.get(Finding, str(item["id"]))
        assert finding is not None and finding.resolved_by == visit
        assert store.verify_audit() == []


def test_resolve_refuses_what_cannot_have_put_it_right(demo: Path) -> None:
    item = listed(demo, "--site", SITE)[0]
    elsewhere = run(
        demo,
        "inspection",
        "start",
        "--site",
        "Pellow Ridge",
        "--kind",
        "visual",
        "--date",
        "2026-06-01",
    ).stdout.strip()
    graded = run(demo, "grade", "--inspection", elsewhere, "--tag", "AT-01", "--grade", "sound")
    assert graded.exit_code == 0, graded.output
    with Store.open(demo) as store:
        sound = store.select(Finding, "inspection_id = ?", [elsewhere])[0]
        assert sound.grade is Grade.SOUND
        before = last_write(store)
    wrong_site = run(demo, "findings", "resolve", str(item["id"]), "--by", elsewhere)
    assert wrong_site.exit_code == 2
    assert "--by" in wrong_site.stderr and f"a visit to {SITE} since" in wrong_site.stderr
    not_open = run(demo, "findings", "resolve", sound.id, "--by", elsewhere)
    assert not_open.exit_code == 2 and "not open" in not_open.stderr
    nothing = run(demo, "findings", "resolve", "ffffffff-none", "--by", elsewhere)
    assert nothing.exit_code == 2 and "FINDING_ID" in nothing.stderr
    with Store.open(demo) as store:
        assert last_write(store) == before
