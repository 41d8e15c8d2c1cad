"""Where inspectkit's files live: the shipped templates, the user's data and config folders."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

import platformdirs

APP_NAME = "inspectkit"


def _shipped(name: str) -> Path:
    """A top-level folder of the repository that ships with the package.

    A wheel carries it inside the package (hatch force-include); a source checkout
    or an editable install keeps it at the top of the repository.
    """
    packaged = Path(str(resources.files("inspectkit"))) / name
    if packaged.is_dir():
        return packaged
    return Path(__file__).resolve().parent.parent / name


def templates_dir() -> Path:
    """The folder holding profiles, checklists and report branding."""
    return _shipped("templates")


def demo_dir() -> Path:
    """The folder holding the invented demo scenario."""
    return _shipped("demo_db")


def user_data_dir() -> Path:
    """Per-user folder for the default database and its photos."""
    return Path(platformdirs.user_data_dir(APP_NAME, appauthor=False))


def user_config_dir() -> Path:
    """Per-user folder for the user's own profiles and settings."""
    return Path(platformdirs.user_config_dir(APP_NAME, appauthor=False))


def default_db_path() -> Path:
    """The database used when no `--db` is given."""
    return user_data_dir() / "inspectkit.sqlite"
