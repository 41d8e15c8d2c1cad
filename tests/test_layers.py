"""The layer rule as a contract: an import that points up a layer fails here.

The layers are listed in `pyproject.toml` (`[tool.importlinter]`) and explained in
DEVELOPERS.md; import-linter follows indirect imports too, which a grep would miss.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from importlinter.cli import lint_imports

ROOT = Path(__file__).resolve().parents[1]


def test_imports_point_down_the_layers(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.chdir(ROOT)
    assert lint_imports(no_cache=True) == 0


def test_the_contract_catches_an_import_that_points_up(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """The contract is not vacuous: the same layers refuse an engine that reads the store."""
    package = tmp_path / "pkg"
    for name in ("engine", "store"):
        (package / name).mkdir(parents=True)
        (package / name / "__init__.py").write_text("")
    (package / "__init__.py").write_text("")
    (package / "engine" / "rules.py").write_text("import pkg.store\n")
    config = tmp_path / "contract.toml"
    config.write_text(
        '[tool.importlinter]\nroot_package = "pkg"\n'
        '[[tool.importlinter.contracts]]\nname = "side by side"\ntype = "layers"\n'
        'layers = ["pkg.engine | pkg.store"]\n'
    )
    monkeypatch.chdir(tmp_path)
    monkeypatch.syspath_prepend(str(tmp_path))
    assert lint_imports(config_filename=str(config), no_cache=True) == 1
