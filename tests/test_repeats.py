"""Repeat defects: linking a finding to the earlier open one of the same fault closes that one."""

from __future__ import annotations

from datetime import date
from pathlib import Path

import pytest
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import (
    Component,
    ComponentKind,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    Site,
)
from inspectkit.repeats import RepeatError, mark_repeat
from inspectkit.store import Store


def _site(store: Store) -> tuple[Component, Inspection, Inspection, Finding]:
    site = Site(name="Kiln Yard", protection_level="II")
    terminal = Component(site_id=site.id, kind=ComponentKind.AIR_TERMINAL, tag="AT-05")
    first = Inspection(site_id=site.id, kind=InspectionKind.COMPLETE, date=date(2024, 1, 27))
    later = Inspection(site_id=site.id, kind=InspectionKind.VISUAL, date=date(2026, 5, 1))
    old = Finding(
        inspection_id=first.id, component_id=terminal.id, grade=Grade.DEFECT, text="bent over"
    )
    store.save_all([site, terminal, first, later, old])
    return terminal, first, later, old


def test_marking_a_repeat_closes_the_earlier_finding_in_one_step(tmp_path: Path) -> None:
    with Store.open(tmp_path / "db.sqlite") as store:
        terminal, _, later, old = _site(store)
        new = store.save(
            Finding(
                inspection_id=later.id,
                component_id=terminal.id,
                grade=Grade.DEFECT,
                text="still bent",
            )
        )
        linked = mark_repeat(store, new.id, old.id)
        assert linked.same_as_id == old.id
        assert store.get(Finding, old.id).resolved_by == later.id
        with pytest.raises(RepeatError, match="earlier visit"):
            mark_repeat(store, old.id, new.id)


def test_grade_same_as_open_links_and_a_bad_link_leaves_no_grade(tmp_path: Path) -> None:
    db = tmp_path / "db.sqlite"
    with Store.open(db) as store:
        terminal, first, later, old = _site(store)
    args = ["grade", "--db", str(db), "--inspection", later.id, "--tag", "AT-05"]
    bad = CliRunner().invoke(app, [*args, "--grade", "defect", "--text", "x", "--same-as", "nope"])
    assert bad.exit_code == 2 and "--same-as" in bad.output
    with Store.open(db) as store:
        assert store.select(Finding, "inspection_id = ?", [later.id]) == []
    good = CliRunner().invoke(
        app, [*args, "--grade", "defect", "--text", "still bent", "--same-as", "open"]
    )
    assert good.exit_code == 0, good.output
    assert "closed as still present" in good.output
    with Store.open(db) as store:
        (new,) = store.select(Finding, "inspection_id = ?", [later.id])
        assert new.same_as_id == old.id
        assert store.get(Finding, old.id).resolved_by == later.id
