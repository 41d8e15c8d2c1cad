"""One order of sites: the sites screen, `inspectkit sites` and `inspectkit check` agree."""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument
from __future__ import annotations

import json
from datetime import date
from pathlib import Path

from textual.widgets import DataTable
from tui_factories import ANCHOR, column, settled, tui_db  # noqa: F401
from typer.testing import CliRunner

from inspectkit.cli import app as cli
from inspectkit.engine.standing import WORDS_WORST_FIRST, order_key, rank
from inspectkit.tui.app import make_app


def test_worse_words_and_sooner_dates_come_first() -> None:
    assert [rank(w) for w in WORDS_WORST_FIRST] == sorted(rank(w) for w in WORDS_WORST_FIRST)
    assert rank("error") < rank("overdue")  # a site nobody could judge is looked at first
    early, late = date(2026, 1, 1), date(2026, 6, 1)
    assert order_key("watch", late, "A") < order_key("ok", early, "A")
    assert order_key("fail", early, "Z") < order_key("fail", late, "A")
    assert order_key("ok", None, "A") > order_key("ok", late, "Z")


def _names(*args: str) -> list[str]:
    result = CliRunner().invoke(cli, [*args, "--today", ANCHOR.isoformat(), "--json"])
    assert result.exit_code in (0, 1), result.output
    # `check` gives one object per site; `sites` one per site too, under "name".
    return list(dict.fromkeys(i.get("name") or i["site"] for i in json.loads(result.output)))


async def test_the_screen_the_sites_command_and_check_order_sites_alike(tui_db: Path) -> None:
    listed = _names("sites", "--db", str(tui_db))
    checked = _names("check", "--db", str(tui_db))
    assert listed == checked
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(120, 30)) as pilot:
        await settled(pilot)
        assert column(app.screen.query_one("#sites", DataTable), "name") == listed
