"""The project's sources live in the project: docs/sources.md, cited instead of outside files."""

from __future__ import annotations

import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SOURCES = ROOT / "docs" / "sources.md"
STANDINGS = ("as quoted", "from memory", "common practice", "our default")
#: The engine modules holding the formulas of standards and handbooks, each citing its source.
FORMULAS = tuple(
    ROOT / "inspectkit" / "engine" / f"{name}.py"
    for name in ("electrode_resistance", "wenner", "fall_of_potential", "iec62305")
)


def _tracked() -> list[Path]:
    listed = subprocess.run(
        ["git", "ls-files"], cwd=ROOT, capture_output=True, text=True, check=True
    ).stdout.split()
    return [ROOT / name for name in listed if (ROOT / name).suffix in (".py", ".toml", ".md")]


def test_sources_page_names_every_standing_and_the_standards_used() -> None:
    text = SOURCES.read_text(encoding="utf-8")
    for word in STANDINGS:
        assert f"**{word}**" in text
    for standard in ("IEC 62305-3", "IEC 62305-1", "NFPA 780", "BS 6651", "IEEE Std 81", "BS 7430"):
        assert f"## {standard}" in text or standard in text


def test_no_file_cites_a_document_outside_the_repository() -> None:
    outside = "DOMAIN" + ".md"  # spelt apart so this file does not cite it either
    offenders = [p for p in _tracked() if outside in p.read_text(encoding="utf-8")]
    assert offenders == []


def test_standards_are_said_to_be_as_quoted_not_published() -> None:
    for path in (*FORMULAS, *ROOT.glob("templates/**/*.toml")):
        text = path.read_text(encoding="utf-8")
        assert "(published" not in text and "published)" not in text, path
