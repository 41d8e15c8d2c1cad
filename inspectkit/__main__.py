"""Lets `python -m inspectkit` run the command line."""

from __future__ import annotations

from inspectkit.cli import main

main()
