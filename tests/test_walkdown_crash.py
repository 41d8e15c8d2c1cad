"""A walkdown killed with SIGKILL part-way loses nothing the screen showed as saved."""

from __future__ import annotations

import os
import signal
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest

from inspectkit.model import Quantity, Reading
from inspectkit.store import Store
from inspectkit.units import parse

#: Readings reported saved before the kill; enough to be mid-walk, far from the end.
KILL_AFTER = 9


@pytest.mark.slow
@pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs SIGKILL")
def test_killed_mid_walkdown_keeps_every_saved_field(tmp_path: Path) -> None:
    path = tmp_path / "walk.sqlite"
    root = Path(__file__).resolve().parent.parent
    child = subprocess.Popen(
        [sys.executable, "-m", "tests.walkdown_crash_child", str(path)],
        cwd=root,
        stdout=subprocess.PIPE,
        stderr=subprocess.DEVNULL,
        text=True,
        env={**os.environ, "PYTHONPATH": str(root)},
    )
    promised: list[tuple[str, str, str]] = []
    try:
        assert child.stdout is not None
        for line in child.stdout:
            if line.startswith("saved "):
                _, component_id, quantity, text = line.split()
                promised.append((component_id, quantity, text))
                if len(promised) == KILL_AFTER:
                    child.send_signal(signal.SIGKILL)
                    break
            assert line.strip() != "walked", "the walk ended before the kill"
    finally:
        child.kill()
        child.wait(timeout=30)
    assert child.returncode == -signal.SIGKILL
    assert len(promised) == KILL_AFTER

    with sqlite3.connect(path) as conn:
        assert conn.execute("PRAGMA integrity_check").fetchone() == ("ok",)
    with Store.open(path) as store:
        draft = "inspection_id IN (SELECT id FROM inspection WHERE finished = 0)"
        saved = {(r.component_id, r.quantity.value): r for r in store.select(Reading, draft)}
        for component_id, quantity, text in promised:
            reading = saved[(component_id, quantity)]
            assert reading.value == pytest.approx(parse(text, Quantity(quantity)).value)
        assert store.verify_audit() == []


def test_each_commit_reaches_the_disk(tmp_path: Path) -> None:
    """A pulled battery is not a SIGKILL: the WAL must be synced at every commit.

    SQLite documentation, PRAGMA synchronous: in WAL mode, FULL (2) syncs the WAL at
    each transaction commit, so a committed transaction survives a power loss;
    NORMAL (1) may lose the last ones.
    """
    with Store.open(tmp_path / "walk.sqlite") as store:
        assert store.db.execute("PRAGMA journal_mode").fetchone() == ("wal",)
        assert store.db.execute("PRAGMA synchronous").fetchone() == (2,)
