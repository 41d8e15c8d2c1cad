"""The app's walkdown driven in a child process that the crash test kills part-way.

Prints `saved <component id> <quantity> <text>` once a field shows "saved", so the
test knows what the screen promised before the process was killed.
"""

from __future__ import annotations

import asyncio
import sys
from pathlib import Path

from inspectkit.store import Store
from inspectkit.walkdown.visit import start_inspection
from tests.test_tui_walkdown import WalkHarness
from tests.walkdown_factories import TODAY, build_walk_site


async def walk(path: Path) -> None:
    with Store.open(path) as store:
        site = build_walk_site(store, down_conductors=12)
        # The harness's day: it stamps readings on it, and they must fall on the visit's day.
        visit = start_inspection(store, site.site.id, "complete", None, TODAY)
    app = WalkHarness(path, visit.id)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        screen = app.screen
        print("ready", flush=True)
        for index, stop in enumerate(screen.stops):  # type: ignore[attr-defined]
            await screen.show_stop(index)  # type: ignore[attr-defined]
            for n, entry in enumerate(screen.pane.entries):  # type: ignore[attr-defined]
                text = f"{index + 1}.{n}" if entry.quantity.value != "strike_count" else "8"
                entry.input.focus()
                entry.input.value = text
                await pilot.press("enter")
                status = str(entry.query_one(".status").render())
                if "✓ saved" in status:
                    print(f"saved {stop.component.id} {entry.quantity.value} {text}", flush=True)
        print("walked", flush=True)
        await asyncio.sleep(3600)  # wait for the kill


if __name__ == "__main__":
    asyncio.run(walk(Path(sys.argv[1])))
