"""The demo sites' roof plans: geometry files in demo_db/geometry/, read like any import."""

from __future__ import annotations

import uuid
from collections.abc import Sequence
from typing import Any

from inspectkit.model import Component, Site
from inspectkit.model.geometry import GeometryItem
from inspectkit.paths import demo_dir
from inspectkit.sync.geometry_file import GeometryFileError, read_geometry

#: Geometry ids come from the site and the tag, not from the demo's random stream, so
#: adding a plan to a site leaves every other demo record as it was.
_IDS = uuid.UUID("6a0f3e0c-5d0b-4a55-9a0e-2f1d6c7b8e90")


def demo_geometry(
    name: str | None, site: Site, components: Sequence[Component], stamps: dict[str, Any]
) -> list[GeometryItem]:
    """The geometry file a scenario site names, as records of that site.

    Raises:
        GeometryFileError: the file is missing or has a mistake (named with the file).
    """
    if not name:
        return []
    path = demo_dir() / name
    try:
        items = read_geometry(path.read_text(encoding="utf-8"), site, components)
    except (OSError, GeometryFileError) as exc:
        raise GeometryFileError(f"{path}: {exc}") from None
    return [
        item.model_copy(
            update={"id": str(uuid.uuid5(_IDS, f"{site.id}/{item.kind}/{item.tag}")), **stamps}
        )
        for item in items
    ]
