"""The visual checklist for each component kind, read from `templates/checklists/<kind>.toml`.

The items live in files rather than code so that a contractor can word them for
their own crews without touching the program.
"""

from __future__ import annotations

from functools import cache
from pathlib import Path

from inspectkit.model import ComponentKind
from inspectkit.paths import templates_dir
from inspectkit.tomlfile import read_toml


class ChecklistError(ValueError):
    """A checklist file is missing or malformed; the message names the file and the fix."""


def checklists_dir() -> Path:
    return templates_dir() / "checklists"


@cache
def load_checklist(kind: ComponentKind) -> tuple[str, ...]:
    """The checklist items for one kind of component, in the order they are walked.

    Cached: the files do not change while the program runs, and the walkdown asks
    for the same kind at every component.

    Raises:
        ChecklistError: the file is missing, is not TOML, or holds no list of items.
    """
    path = checklists_dir() / f"{kind.value}.toml"
    data = read_toml(
        path, ChecklistError, "the checklist", missing=f"missing; add a checklist for {kind.label}"
    )
    items = data.get("items")
    if not isinstance(items, list) or not all(isinstance(i, str) and i.strip() for i in items):
        raise ChecklistError(f"{path}: 'items' must be a list of non-empty texts")
    if data.get("kind", kind.value) != kind.value:
        raise ChecklistError(f"{path}: says kind = {data['kind']!r}; it must be {kind.value!r}")
    return tuple(i.strip() for i in items)
