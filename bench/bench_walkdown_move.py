"""Time from Page Down in the walkdown to the next component's field taking a key.

On a fresh copy of the demo database, the walkdown of its largest site (by
components in service) is opened headless at 80×24 with an open complete
inspection. For each move, Page Down and a digit are sent together, as a typist
who does not wait; the time is taken until the digit went into the first field of
the next component (the time of that Input's Changed message; the digit is then
taken out again, so nothing is saved).

The floor, in the same process: a bare Textual app with as many Input widgets as
the walkdown's pane, whose Page Down sets every Input's value and focuses the
first, timed the same way. The two run turn about, several rounds each. Prints the
ratio of medians (target <= 1.5), the median and worst move in ms for both, and the
process's peak memory.

    python bench/bench_walkdown_move.py [--rounds N] [--size WxH]
"""

from __future__ import annotations

import argparse
import asyncio
import resource
import statistics
import sys
import tempfile
import time
from collections.abc import Callable
from datetime import date
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from textual import events  # noqa: E402
from textual.app import App, ComposeResult  # noqa: E402
from textual.binding import Binding  # noqa: E402
from textual.message import Message  # noqa: E402
from textual.pilot import Pilot  # noqa: E402
from textual.widgets import Input  # noqa: E402

from inspectkit.demo.generate import build_demo  # noqa: E402
from inspectkit.model import Component, Site  # noqa: E402
from inspectkit.store import Store  # noqa: E402
from inspectkit.tui.screens.walkdown import WalkdownScreen  # noqa: E402
from inspectkit.tui.widgets.stop_pane import FINDING_FIELDS, SLOTS  # noqa: E402
from inspectkit.walkdown.visit import start_inspection  # noqa: E402

ANCHOR = date(2026, 6, 1)


class WalkApp(App[None]):
    """The walkdown screen alone on a store, as the site screen pushes it."""

    def __init__(self, path: Path, inspection_id: str) -> None:
        super().__init__()
        self.store = Store.open(path, user="bench")
        self.today = ANCHOR
        self.inspection_id = inspection_id

    def on_mount(self) -> None:
        self.push_screen(WalkdownScreen(self.inspection_id))


class BareApp(App[None]):
    """The floor: a column of Inputs whose values Page Down swaps, focusing the first."""

    BINDINGS = [Binding("pagedown", "step", priority=True)]

    def __init__(self, fields: int) -> None:
        super().__init__()
        self.fields = fields
        self.index = 0

    def compose(self) -> ComposeResult:
        for n in range(self.fields):
            yield Input(id=f"f{n}")

    def action_step(self) -> None:
        self.index += 1
        inputs = list(self.query(Input))
        for n, field in enumerate(inputs):
            with field.prevent(Input.Changed):
                field.value = f"{self.index}.{n}" if n else ""
        self.set_focus(inputs[0], scroll_visible=False)


def largest_site(path: Path) -> str:
    with Store.open(path) as store:
        sites = store.select(Site)
        return max(
            sites,
            key=lambda s: len(store.select(Component, "site_id = ? AND retired_on IS NULL",
                                           [s.id])),
        ).id  # fmt: skip


class Accepted:
    """When the digit went into a field: the time of the Input's own Changed message.

    Taken from the message rather than from a task watching the field, so that a
    repaint running before the watcher does not count against the move.
    """

    def __init__(self) -> None:
        self.at: float | None = None

    def hook(self, message: Message) -> None:
        if isinstance(message, Input.Changed) and message.value.endswith("7"):
            self.at = message.time


async def timed_move(pilot: Pilot[None], accepted: Accepted, field: Callable[[], Input]) -> float:
    """Seconds from Page Down (a digit sent straight after) until the digit is in the field.

    Each move starts with the app idle (the last one painted), as after a typist's pause.
    """
    app = pilot.app
    await pilot.pause()
    accepted.at = None
    start = time.monotonic()  # the clock of Message.time on Linux and macOS
    app.post_message(events.Key("pagedown", None))
    app.post_message(events.Key("7", "7"))
    while accepted.at is None:
        await asyncio.sleep(0)
    seconds = accepted.at - start
    target = field()
    with target.prevent(Input.Changed):
        target.value = target.value.removesuffix("7")  # nothing typed is left to save
    return seconds


async def walk_round(path: Path, inspection_id: str, size: tuple[int, int]) -> list[float]:
    """Every move of the walk that lands on a reading (a stop with none starts on the grade)."""
    app = WalkApp(path, inspection_id)
    accepted = Accepted()
    times = []
    async with app.run_test(size=size, message_hook=accepted.hook) as pilot:
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, WalkdownScreen)
        for index, stop in enumerate(screen.stops[1:], start=1):
            if not stop.quantities:
                await screen.show_stop(index)
                continue
            times.append(await timed_move(pilot, accepted, lambda: screen.pane.entries[0].input))
    return times


async def bare_round(fields: int, moves: int, size: tuple[int, int]) -> list[float]:
    app = BareApp(fields)
    accepted = Accepted()
    async with app.run_test(size=size, message_hook=accepted.hook) as pilot:
        await pilot.pause()
        first = app.query_one("#f0", Input)
        return [await timed_move(pilot, accepted, lambda: first) for _ in range(moves)]


async def bench(rounds: int, size: tuple[int, int]) -> None:
    with tempfile.TemporaryDirectory() as scratch:
        path = build_demo(Path(scratch) / "demo.sqlite", anchor=ANCHOR)
        site_id = largest_site(path)
        with Store.open(path, user="bench") as store:
            visit = start_inspection(store, site_id, "complete", None, ANCHOR)
        real: list[float] = []
        floor: list[float] = []
        fields = SLOTS + len(FINDING_FIELDS) + 1  # the pane's Inputs, photo too
        for _ in range(rounds):
            times = await walk_round(path, visit.id, size)
            real.extend(times)
            floor.extend(await bare_round(fields, len(times), size))
    ratio = statistics.median(real) / statistics.median(floor)
    print(f"moves timed: {len(real)} on the largest demo site, {rounds} round(s), {size}")
    print(f"walkdown: median {statistics.median(real) * 1000:.2f} ms, "
          f"worst {max(real) * 1000:.2f} ms")  # fmt: skip
    print(f"bare app swapping {fields} Inputs: median {statistics.median(floor) * 1000:.2f} ms, "
          f"worst {max(floor) * 1000:.2f} ms")  # fmt: skip
    print(f"ratio of medians: {ratio:.2f} (target <= 1.5)")
    print(f"peak RSS: {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.0f} MB")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=3, help="walks of the site, each way")
    parser.add_argument("--size", default="80x24", help="terminal size, WxH")
    args = parser.parse_args()
    width, height = (int(n) for n in args.size.split("x"))
    asyncio.run(bench(args.rounds, (width, height)))


if __name__ == "__main__":
    main()
