"""Typing into the walkdown in a real terminal (tmux) at about five keys a second.

The keys go through a terminal, the app's driver and its event loop exactly as an
inspector's do. Values follow each move to the next component straight away; the
database must then hold each value on the component it was typed for.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest

from inspectkit.model import Finding, Quantity, Reading
from inspectkit.store import Store
from inspectkit.units import parse
from inspectkit.walkdown.visit import start_inspection, walk_for
from tests.walkdown_factories import TODAY, build_walk_site

#: Seconds between keys: about five keys a second, a brisk typist on a keyboard.
KEY_GAP = 0.2

#: What is typed on each component from the third stop on, one value per quantity;
#: ER-01's 12.50 fails its 10 Ω limit.
TYPED = {
    "RC-01": ["0.21"],
    "DC-01": ["0,18"],
    "TJ-01": ["3.9"],
    "ER-01": ["12.50", "85"],
    "DC-02": ["88 mΩ"],
    "TJ-02": ["4.1"],
}


def tmux(socket: str, *args: str) -> str:
    done = subprocess.run(["tmux", "-L", socket, *args], capture_output=True, text=True, check=True)
    return done.stdout


def screen_text(socket: str) -> str:
    return tmux(socket, "capture-pane", "-p", "-t", "walk")


def wait_for(socket: str, text: str, seconds: float = 60) -> str:
    end = time.monotonic() + seconds
    while time.monotonic() < end:
        shown = screen_text(socket)
        if text in shown:
            return shown
        time.sleep(0.2)
    raise AssertionError(f"{text!r} never showed; the screen:\n{screen_text(socket)}")


def send(socket: str, key: str, *, literal: bool = False) -> None:
    tmux(socket, "send-keys", "-t", "walk", *(["-l", key] if literal else [key]))
    time.sleep(KEY_GAP)


@pytest.mark.slow
@pytest.mark.skipif(shutil.which("tmux") is None, reason="needs tmux")
def test_values_typed_in_a_terminal_after_each_move_are_stored_where_typed(
    tmp_path: Path,
) -> None:
    path = tmp_path / "walk.sqlite"
    with Store.open(path) as store:
        site = build_walk_site(store)
        visit = start_inspection(store, site.site.id, "complete", None, TODAY)
        stops = walk_for(store, visit.id)
    root = Path(__file__).resolve().parent.parent
    socket = f"inspectkit-test-{os.getpid()}"
    command = (
        f"cd {root} && PYTHONPATH={root} TERM=xterm-256color "
        f"{sys.executable} -m tests.walkdown_terminal_child {path} {visit.id}"
    )
    tmux(socket, "new-session", "-d", "-s", "walk", "-x", "80", "-y", "24", command)
    try:
        wait_for(socket, f"1 of {len(stops)}")
        send(socket, "NPage")  # AT-01 → AT-02: judged by eye only
        send(socket, "NPage")  # AT-02 → RC-01
        for stop in stops[2 : 2 + len(TYPED)]:
            for text in TYPED[stop.component.tag]:
                for char in text:  # one key at a time, as fingers do
                    send(socket, char, literal=True)
                send(socket, "Enter")
            send(socket, "Enter")  # the grade: sound
            send(socket, "NPage")
        wait_for(socket, f"{2 + len(TYPED) + 1} of {len(stops)}")
        time.sleep(1.0)
        shown = screen_text(socket)
    finally:
        subprocess.run(["tmux", "-L", socket, "kill-server"], check=False)

    with Store.open(path) as store:
        readings = store.select(Reading, "inspection_id = ?", [visit.id])
        tags = {s.component.id: s.component.tag for s in stops}
        got = {(tags[r.component_id], r.quantity): r.value for r in readings}
        expected = {
            (stop.component.tag, quantity): parse(text, quantity).value
            for stop in stops[2 : 2 + len(TYPED)]
            for quantity, text in zip(stop.quantities, TYPED[stop.component.tag], strict=True)
        }
        assert got == pytest.approx(expected), f"typed {TYPED}; the last screen:\n{shown}"
        graded = {tags[f.component_id or ""] for f in store.select(Finding)
                  if f.inspection_id == visit.id}  # fmt: skip
        assert graded == set(TYPED)
        assert got[("ER-01", Quantity.EARTH_ISOLATED)] == pytest.approx(12.5)
