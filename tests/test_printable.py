"""Text from outside is data: a control character in a name never reaches the terminal raw."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from sync_factories import build_site
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Site
from inspectkit.printable import printable
from inspectkit.store import Store
from inspectkit.sync.bundle import export_bundle

#: Sets the window title, clears the screen, and a C1 CSI that some terminals obey.
HOSTILE = "Mill\x1b]0;owned\x07\x1b[2J\x9b31m\u202eenot"


def test_printable_escapes_controls_and_keeps_words_tabs_and_newlines():
    assert printable("Zoë Ω\tTJ-01\n") == "Zoë Ω\tTJ-01\n"
    assert printable(HOSTILE) == "Mill\\u001b]0;owned\\u0007\\u001b[2J\\u009b31m\\u202eenot"
    # Each escape is one a JSON reader decodes back to the very character (RFC 8259 §7).
    assert json.loads(f'"{printable(HOSTILE)}"') == HOSTILE


@pytest.fixture
def hostile_bundle(tmp_path: Path) -> Path:
    with Store.open(tmp_path / "theirs.sqlite") as theirs:
        records = build_site(theirs, tmp_path / "in", name=HOSTILE)
        return export_bundle(theirs, records.site.id, tmp_path / "b.zip").path


def test_a_name_with_a_terminal_escape_is_printed_harmlessly(hostile_bundle, tmp_path):
    db = tmp_path / "ours.sqlite"
    imported = CliRunner().invoke(app, ["import", str(hostile_bundle), "--db", str(db)])
    assert imported.exit_code == 0, imported.output
    listed = CliRunner().invoke(app, ["sites", "--db", str(db)])
    as_json = CliRunner().invoke(app, ["sites", "--db", str(db), "--json"])
    for result in (imported, listed, as_json):
        assert "\x1b" not in result.output and "\x9b" not in result.output
        assert "\x07" not in result.output and "\u202e" not in result.output
        assert "Mill\\u001b]0;owned" in result.output
    assert json.loads(as_json.output)[0]["name"] == HOSTILE  # the data itself is kept whole
    with Store.open(db) as store:
        assert store.select(Site)[0].name == HOSTILE


def test_a_refusal_message_naming_hostile_text_is_escaped_too(tmp_path):
    bad = tmp_path / f"{HOSTILE}.zip"
    bad.write_bytes(b"not a zip")
    result = CliRunner().invoke(app, ["import", str(bad), "--db", str(tmp_path / "db.sqlite")])
    assert result.exit_code == 2
    assert "\x1b" not in result.output and "\\u001b" in result.output


async def test_the_sites_list_shows_a_hostile_name_as_text(tmp_path: Path) -> None:
    from textual.widgets import DataTable, Static
    from tui_factories import ANCHOR, build_tui_db, column, settled

    from inspectkit.cautions import ACKNOWLEDGED_SETTING
    from inspectkit.tui.app import make_app

    path = build_tui_db(tmp_path / "tui.sqlite")
    with Store.open(path) as store:
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
        site = store.select(Site, order_by="name")[0]
        store.save(site.model_copy(update={"name": HOSTILE, "client": "[bold red]Acme[/]"}))
    app = make_app(path, today=ANCHOR)
    async with app.run_test(size=(120, 30)) as pilot:
        await settled(pilot)
        table = app.screen.query_one("#sites", DataTable)
        names = column(table, "name")
        assert printable(HOSTILE) in names and HOSTILE not in names
        assert "[bold red]Acme[/]" in column(table, "client")  # markup shown, not obeyed
        table.move_cursor(row=names.index(printable(HOSTILE)))
        await pilot.press("enter")
        await settled(pilot)
        title = str(app.screen.query_one("#site-title", Static).render())
        assert title.startswith(printable(HOSTILE)) and "[bold red]Acme[/]" in title


def test_a_long_import_report_prints_a_few_lines_and_a_count(monkeypatch, hostile_bundle, tmp_path):
    from inspectkit.cli.common import MAX_LINES
    from inspectkit.sync import merge

    many = [f"inspector {n} came with a certificate not trusted here" for n in range(500)]
    real = merge.untrusted_signers
    monkeypatch.setattr(merge, "untrusted_signers", lambda store, b: real(store, b) + many)
    args = ["import", str(hostile_bundle), "--db", str(tmp_path / "o.db")]
    result = CliRunner().invoke(app, args)
    assert result.exit_code == 0, result.output
    assert len(result.output.splitlines()) == MAX_LINES + 1
    assert "more lines (all of them: --json)" in result.output
