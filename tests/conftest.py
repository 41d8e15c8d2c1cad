"""Shared fixtures: throwaway databases, and the developer's own folders kept out of tests."""

from __future__ import annotations

from pathlib import Path

import pytest

from inspectkit.store import Store


@pytest.fixture(autouse=True)
def _isolated_home(
    tmp_path_factory: pytest.TempPathFactory, monkeypatch: pytest.MonkeyPatch
) -> None:
    """No test reads or writes the developer's real data or config folders."""
    home = tmp_path_factory.mktemp("home")
    monkeypatch.setenv("HOME", str(home))
    monkeypatch.setenv("XDG_DATA_HOME", str(home / "data"))
    monkeypatch.setenv("XDG_CONFIG_HOME", str(home / "config"))
    monkeypatch.delenv("INSPECTKIT_PASSPHRASE", raising=False)


@pytest.fixture
def store() -> Store:
    """An empty in-memory database."""
    with Store.memory() as db:
        yield db


@pytest.fixture
def db_path(tmp_path: Path) -> Path:
    """Path for a database file in a fresh folder."""
    return tmp_path / "inspect.sqlite"
