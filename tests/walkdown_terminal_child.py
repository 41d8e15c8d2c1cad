"""The walkdown alone in a real terminal, for the test that types into it through tmux."""

from __future__ import annotations

import sys
from pathlib import Path

from tests.test_tui_walkdown import WalkHarness

if __name__ == "__main__":
    WalkHarness(Path(sys.argv[1]), sys.argv[2]).run()
