"""Text typed and not saved survives a kill as a draft, and is offered back where it was."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import zipfile
from pathlib import Path

import pytest

from inspectkit.model import Finding, Inspection, Quantity, Reading
from inspectkit.report.gather import build_report
from inspectkit.store import Store
from inspectkit.sync.bundle import export_bundle
from inspectkit.walkdown.continuing import drafts_for, drafts_told, keep_drafts, saved_entries
from inspectkit.walkdown.readings import record_reading
from inspectkit.walkdown.visit import start_inspection
from tests.test_tui_walkdown import WalkHarness, screen_of, status_of
from tests.walkdown_drafts_child import NOTE, VALUE
from tests.walkdown_factories import TODAY, build_walk_site, on_the_day


@pytest.fixture
def walk(tmp_path: Path) -> tuple[Path, str, dict[str, str]]:
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        visit = start_inspection(store, site.site.id, "complete", None, TODAY)
    return path, visit.id, {tag: c.id for tag, c in site.parts.items()}


@pytest.mark.slow
@pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs SIGKILL")
async def test_a_killed_walkdown_offers_back_what_was_typed_where_it_was(
    walk: tuple[Path, str, dict[str, str]], monkeypatch: pytest.MonkeyPatch
) -> None:
    path, visit_id, ids = walk
    root = Path(__file__).resolve().parent.parent
    child = subprocess.Popen(
        [sys.executable, "-m", "tests.walkdown_drafts_child", str(path), visit_id],
        cwd=root, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True,
        env={**os.environ, "PYTHONPATH": str(root)},
    )  # fmt: skip
    try:
        assert child.stdout is not None
        line = child.stdout.readline()
        assert line.startswith("typed "), line
        child.send_signal(signal.SIGKILL)
    finally:
        child.kill()
        child.wait(timeout=30)
    assert child.returncode == -signal.SIGKILL
    assert line.split()[1] == ids["DC-03"]

    with Store.open(path) as store:
        assert store.select(Reading, "inspection_id = ?", [visit_id]) == []  # nothing saved
        assert store.select(Finding, "inspection_id = ?", [visit_id]) == []
        kept = drafts_for(store, visit_id)
        assert kept.place == ids["DC-03"]
        assert kept.texts == {(ids["DC-03"], "q-continuity"): VALUE,
                              (ids["DC-02"], "finding-text"): NOTE}  # fmt: skip

    told: list[str] = []
    app = WalkHarness(path, visit_id)
    notify = app.notify
    monkeypatch.setattr(
        app, "notify", lambda message, **kw: (told.append(message), notify(message, **kw))[1]
    )
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        screen = screen_of(app)
        assert screen.stop.component.tag == "DC-03"  # back where the inspector was
        entry = screen.pane.entries[0]
        assert entry.input.value == VALUE and "not saved yet" in status_of(entry)
        assert app.focused is entry.input
        assert any("2 entries were not saved" in m and f"DC-03 continuity '{VALUE}'" in m
                   and f"DC-02 note '{NOTE}'" in m for m in told), told  # fmt: skip
        await pilot.press("enter")  # saved now, as a reading like any other
        await pilot.pause(0.7)
        reading = app.store.select(Reading, "inspection_id = ?", [visit_id])[0]
        assert reading.value == pytest.approx(0.070)
        assert drafts_for(app.store, visit_id).texts == {(ids["DC-02"], "finding-text"): NOTE}


def test_drafts_are_not_readings(walk: tuple[Path, str, dict[str, str]], tmp_path: Path) -> None:
    """Not judged, not counted, not in a report or a bundle: a draft is only text kept."""
    path, visit_id, ids = walk
    with Store.open(path) as store:
        record_reading(store, visit_id, ids["DC-01"], "continuity", "0.12", taken_at=on_the_day())
        site_id = store.get(Inspection, visit_id).site_id
        typed = {(ids["ER-01"], "q-earth_isolated"): "25", (ids["DC-02"], "q-continuity"): "  "}
        keep_drafts(store, visit_id, typed, ids["ER-01"])
        saved = saved_entries(store, visit_id)
        assert list(saved.readings) == [(ids["DC-01"], Quantity.CONTINUITY)]
        assert [r.component_id for r in store.select(Reading)].count(ids["ER-01"]) == 1  # earlier
        assert drafts_for(store, visit_id).texts == {(ids["ER-01"], "q-earth_isolated"): "25"}
        bundle = tmp_path / "site.zip"
        export_bundle(store, site_id, bundle)
        with zipfile.ZipFile(bundle) as archive:
            packed = b"".join(archive.read(name) for name in archive.namelist())
        assert b"q-earth_isolated" not in packed and b"entry_draft" not in packed
        rows = build_report(store, visit_id).readings
        assert any(row.tag == "DC-01" for row in rows)  # the saved reading is reported
        assert not any(row.tag == "ER-01" and row.value.startswith("25") for row in rows)
        assert store.verify_audit() == []


def test_the_message_names_each_draft() -> None:
    told = drafts_told({("a", "q-bonding"): "88 mΩ", ("b", "finding-text"): "bent"},
                       {"a": "BD-01", "b": "AT-02"})  # fmt: skip
    assert told == "2 entries were not saved: BD-01 bonding resistance '88 mΩ', AT-02 note 'bent'"
