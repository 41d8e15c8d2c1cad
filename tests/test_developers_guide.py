"""DEVELOPERS.md's layout and layer table describe the tree as it is.

A newcomer learns the architecture from that page; a module added, moved or renamed
without it being told there fails here, and so does a top-level module the import
contract in pyproject.toml does not place in a layer.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
PACKAGE = ROOT / "inspectkit"
GUIDE = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")

# The entry points are not layers: `python -m inspectkit` and the package itself.
NOT_LAYERED = {"__init__", "__main__"}


def top_level_names() -> set[str]:
    """Every module and package directly under inspectkit/."""
    names = {p.stem for p in PACKAGE.glob("*.py")}
    names |= {p.name for p in PACKAGE.iterdir() if (p / "__init__.py").is_file()}
    return names - NOT_LAYERED


def layout_block() -> str:
    """The fenced tree under `## Layout`."""
    section = GUIDE.split("## Layout", 1)[1]
    return section.split("```", 2)[1]


def layout_entries() -> dict[str, str]:
    """Each inspectkit/ entry the layout names, with the text that describes it."""
    entries: dict[str, str] = {}
    current = None
    for line in layout_block().splitlines():
        named = re.match(r"  (\w+)(\.py|/)\s", line + " ")
        if named:
            current = named.group(1)
            entries[current] = line
        elif line.startswith("   ") and current is not None:
            entries[current] += "\n" + line
        else:
            current = None
    return entries


def contract_layers() -> set[str]:
    pyproject = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    contract = pyproject["tool"]["importlinter"]["contracts"][0]
    return {
        name.strip().removeprefix("inspectkit.")
        for layer in contract["layers"]
        for name in re.split(r"[|:]", layer)
    }


def guide_layer_table() -> set[str]:
    """The names in backticks in the table under "The layers, top to bottom"."""
    table = GUIDE.split("The layers, top to bottom", 1)[1].split("\n\n", 2)[1]
    packages = [row.split("|")[2] for row in table.splitlines()]
    return {name for cell in packages for name in re.findall(r"`(\w+)`", cell)}


def test_the_layout_names_every_top_level_module_and_nothing_gone() -> None:
    assert set(layout_entries()) == top_level_names()


def test_each_module_file_the_layout_names_exists_in_its_package() -> None:
    for name, text in layout_entries().items():
        package = PACKAGE / name
        if not package.is_dir():
            continue
        files = {p.name for p in package.rglob("*.py")}
        named = set(re.findall(r"\b(\w+\.py)\b", text))
        assert named <= files, f"{name}/ in DEVELOPERS.md names missing files: {named - files}"


def test_every_top_level_module_sits_in_a_layer_of_the_import_contract() -> None:
    assert top_level_names() <= contract_layers()


def test_the_guide_layer_table_is_the_import_contract() -> None:
    assert guide_layer_table() == contract_layers()
