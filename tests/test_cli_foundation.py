"""The first commands: version, help, sites, and exit codes that mean something."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

from typer.testing import CliRunner

from inspectkit import __version__
from inspectkit.cli import app
from inspectkit.model import Site
from inspectkit.store import Store

runner = CliRunner()


def test_version() -> None:
    result = runner.invoke(app, ["--version"])
    assert result.exit_code == 0
    assert result.output.strip() == f"inspectkit {__version__}"


def test_every_command_has_help_text() -> None:
    result = runner.invoke(app, ["--help"])
    assert result.exit_code == 0
    for command in app.registered_commands:
        name = command.name or command.callback.__name__
        assert name in result.output
        assert (command.callback.__doc__ or "").strip(), f"{name} has no help text"


def test_sites_json_lists_each_site(db_path: Path) -> None:
    with Store.open(db_path) as store:
        store.save(Site(name="Brindle Works", client="Brindle Ltd", protection_level="III"))
    result = runner.invoke(app, ["sites", "--db", str(db_path), "--json"])
    assert result.exit_code == 0
    rows = json.loads(result.output)
    assert [(r["name"], r["protection_level"], r["last_visit"]) for r in rows] == [
        ("Brindle Works", "III", None)
    ]
    assert rows[0]["id"]


def test_db_before_the_command_works_too(db_path: Path) -> None:
    with Store.open(db_path) as store:
        store.save(Site(name="Brindle Works", protection_level="III"))
    result = runner.invoke(app, ["--db", str(db_path), "sites"])
    assert result.exit_code == 0
    assert "Brindle Works" in result.output and "never" in result.output


def test_a_missing_database_is_bad_input(tmp_path: Path) -> None:
    result = runner.invoke(app, ["sites", "--db", str(tmp_path / "none.sqlite")])
    assert result.exit_code == 2
    assert "no such database" in result.output


def test_an_unknown_option_is_bad_input() -> None:
    assert runner.invoke(app, ["sites", "--colour"]).exit_code == 2


def test_python_dash_m_runs_the_command() -> None:
    done = subprocess.run(
        [sys.executable, "-m", "inspectkit", "--version"],
        capture_output=True,
        text=True,
        check=False,
    )
    assert done.returncode == 0 and __version__ in done.stdout
