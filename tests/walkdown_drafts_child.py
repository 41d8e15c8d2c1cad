"""A walkdown with text typed and not saved, in a child process the drafts test kills.

On DC-02 a note is typed with no grade (refused: it waits for one); on DC-03 a
continuity value is typed and not saved. Prints `typed <DC-03 id>` once both had
time to be kept, then waits for the kill.
"""

from __future__ import annotations

import asyncio
import sys
from pathlib import Path

from tests.test_tui_walkdown import WalkHarness, screen_of

NOTE = "clamp loose"
VALUE = "70 mΩ"


async def walk(path: Path, visit_id: str) -> None:
    app = WalkHarness(path, visit_id)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        screen = screen_of(app)
        tags = [s.component.tag for s in screen.stops]
        await screen.show_stop(tags.index("DC-02"))
        note = screen.pane.finding.fields()[0]
        note.input.focus()
        await pilot.pause()
        note.input.value = NOTE
        await pilot.press("enter")  # refused: no grade yet
        await pilot.press("pagedown", "pagedown", "pagedown")  # DC-02, TJ-02, ER-02, DC-03
        await pilot.pause()
        assert screen.stop.component.tag == "DC-03", screen.stop.component.tag
        await pilot.press(*VALUE)  # typed, no Enter: not saved
        await asyncio.sleep(1.2)  # kept within a second of the last key
        print(f"typed {screen.stop.component.id}", flush=True)
        await asyncio.sleep(3600)  # wait for the kill


if __name__ == "__main__":
    asyncio.run(walk(Path(sys.argv[1]), sys.argv[2]))
