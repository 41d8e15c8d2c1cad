"""inspectkit: offline records, checks, schedules and signed reports for LPS inspection."""

from __future__ import annotations

__version__ = "0.1.0"
