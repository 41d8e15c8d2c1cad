"""The demo database the earthing tests share: built once a module, copied fresh for each test."""

from __future__ import annotations

from datetime import date
from pathlib import Path

import pytest

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.demo.generate import build_demo
from inspectkit.store import Store

ANCHOR = date(2026, 6, 1)


@pytest.fixture(scope="module")
def demo_template(tmp_path_factory: pytest.TempPathFactory) -> Path:
    path = build_demo(tmp_path_factory.mktemp("demo") / "demo.sqlite", anchor=ANCHOR)
    with Store.open(path) as store:
        store.set_setting(ACKNOWLEDGED_SETTING, "yes")
    return path


@pytest.fixture
def demo(demo_template: Path, tmp_path: Path) -> Path:
    """A fresh copy of the demo for each test, so one test's writes never reach another."""
    copy = tmp_path / "demo.sqlite"
    with Store.open(demo_template) as source:
        source.backup(copy)
    return copy
