"""One list of cautions: the README, the TUI's first start, `inspectkit cautions`, the CLI's
first command and every report carry the same items."""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest
from pypdf import PdfReader
from reportlab import rl_config
from textual.widgets import Static
from tui_factories import ANCHOR, build_tui_db
from typer.testing import CliRunner

from inspectkit.cautions import (
    ACKNOWLEDGED_SETTING,
    CAUTIONS,
    SHOWN_BY_COMMAND_SETTING,
)
from inspectkit.cli import app as cli_app
from inspectkit.cli import common
from inspectkit.store import Store
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.cautions import CautionsDialog
from inspectkit.tui.screens.sites import SitesScreen

README = Path(__file__).resolve().parent.parent / "README.md"


def _plain(text: str) -> str:
    """Text with Markdown emphasis and line breaks folded away, for comparing."""
    return " ".join(text.replace("**", "").replace("•", " ").split())


def _readme_items() -> list[str]:
    section = README.read_text(encoding="utf-8").split("## Safety cautions", 1)[1]
    section = section.split("\n## ", 1)[0]
    items = re.split(r"\n- ", "\n" + section.split("\n- ", 1)[1])
    return [_plain(item) for item in items if item.strip()]


def test_the_readme_lists_exactly_the_cautions() -> None:
    assert _readme_items() == [_plain(c) for c in CAUTIONS]


def test_the_readings_caution_is_in_the_one_list() -> None:
    (readings,) = [c for c in CAUTIONS if c.startswith("Readings:")]
    assert "soil" in readings and "probe placement" in readings and "calibration" in readings


async def test_the_tui_first_start_shows_the_same_items_and_escape_does_not_acknowledge(
    tmp_path: Path,
) -> None:
    path = build_tui_db(tmp_path / "fresh.sqlite")
    app = make_app(path, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert isinstance(app.screen, CautionsDialog)
        shown = [_plain(str(s.render())) for s in app.screen.query(".caution").results(Static)]
        assert shown == [_plain(c) for c in CAUTIONS]
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, SitesScreen)
    with Store.open(path) as store:
        assert store.get_setting(ACKNOWLEDGED_SETTING) is None
    again = make_app(path, today=ANCHOR)
    async with again.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert isinstance(again.screen, CautionsDialog)  # not read yet: shown again
        await pilot.click("#ok")
        await pilot.pause()
    with Store.open(path) as store:
        assert store.get_setting(ACKNOWLEDGED_SETTING) == "yes"


def test_every_report_carries_the_same_items(tmp_path: Path, monkeypatch) -> None:
    from test_report_factory import build_site

    from inspectkit.report.branding import load_branding
    from inspectkit.report.gather import build_report
    from inspectkit.report.render import render_report

    monkeypatch.setattr(rl_config, "invariant", 1)
    with Store.open(tmp_path / "db.sqlite") as store:
        made = build_site(store, tmp_path)
        content = build_report(store, made.current.id)
        data = render_report(content, load_branding()).data
    text = _plain(" ".join(p.extract_text() for p in PdfReader(io.BytesIO(data)).pages))
    assert content.cautions == CAUTIONS
    for caution in CAUTIONS:
        assert _plain(caution) in text


def test_the_cautions_command_prints_them() -> None:
    result = CliRunner().invoke(cli_app, ["cautions"])
    assert result.exit_code == 0
    for caution in CAUTIONS:
        assert _plain(caution) in _plain(result.output)
    as_json = CliRunner().invoke(cli_app, ["cautions", "--json"])
    assert '"cautions"' in as_json.output


def test_the_first_command_a_person_runs_on_a_new_database_shows_them_once(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    db = tmp_path / "new.sqlite"
    Store.open(db).close()
    monkeypatch.setattr(common, "_person_reading", lambda: True)
    first = CliRunner().invoke(cli_app, ["sites", "--db", str(db)])
    assert first.exit_code == 0, first.output
    assert all(_plain(c) in _plain(first.stderr) for c in CAUTIONS)
    second = CliRunner().invoke(cli_app, ["sites", "--db", str(db)])
    assert "Safety cautions" not in second.output
    with Store.open(db) as store:
        assert store.get_setting(SHOWN_BY_COMMAND_SETTING) == "yes"


def test_a_script_is_not_shown_them_and_they_stay_due(tmp_path: Path) -> None:
    db = tmp_path / "new.sqlite"
    Store.open(db).close()
    result = CliRunner().invoke(cli_app, ["sites", "--db", str(db), "--json"])
    assert "Safety cautions" not in result.output
    with Store.open(db) as store:
        assert store.get_setting(SHOWN_BY_COMMAND_SETTING) is None
