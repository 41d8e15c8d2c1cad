"""A site's geometry as a plain TOML file of our own: read, check whole, then store.

The file holds one array of tables per kind (`[[roof]]`, `[[air_terminal]]`,
`[[air_conductor]]`, `[[down_conductor]]`, `[[rooftop_item]]`); positions are
metres from a corner of the site, x east, y north; heights are above ground (`z`),
or for air terminals and rooftop items above the roof under them (`height`). The
README documents it. A file with any mistake is refused whole, naming the table,
its number and the field: an import never leaves half a roof behind.
"""

from __future__ import annotations

import tomllib
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from inspectkit.engine.lps_layout import Layout, on_outline
from inspectkit.model import Component, ComponentKind, GeometryKind, Site, explain
from inspectkit.model.geometry import GeometryItem, box_footprint
from inspectkit.store import Store
from inspectkit.store.geometry import replace_site_geometry
from inspectkit.store.record_queries import site_components

#: The key holding each kind's points, and whether one point or a list.
_POINTS_KEY = {
    GeometryKind.ROOF: ("outline", False),
    GeometryKind.AIR_TERMINAL: ("at", True),
    GeometryKind.AIR_CONDUCTOR: ("run", False),
    GeometryKind.DOWN_CONDUCTOR: ("at", True),
    GeometryKind.ROOFTOP_ITEM: ("footprint", False),
}
#: Kinds whose height may be given above the roof beneath instead of above ground.
_ABOVE_ROOF = (GeometryKind.AIR_TERMINAL, GeometryKind.ROOFTOP_ITEM)
#: The component kind a geometry kind takes its tag over from.
_COMPONENT_KIND = {
    GeometryKind.AIR_TERMINAL: ComponentKind.AIR_TERMINAL,
    GeometryKind.AIR_CONDUCTOR: ComponentKind.AIR_CONDUCTOR,
    GeometryKind.DOWN_CONDUCTOR: ComponentKind.DOWN_CONDUCTOR,
}
_ITEM_KEYS = {"what", "conductive", "bonded", "separated_by", "clearance", "note"}
_BOX_KEYS = {"centre", "size", "turn"}


class GeometryFileError(ValueError):
    """A geometry file that cannot be imported; the message names the place and the fix."""


def read_geometry(
    text: str, site: Site, components: Sequence[Component] = ()
) -> list[GeometryItem]:
    """Every geometry record a file describes, checked, for one site.

    Raises:
        GeometryFileError: the file is not TOML, has an unknown table or key, or a
            record does not validate; nothing is returned for part of a file.
    """
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise GeometryFileError(f"not a TOML file ({exc})") from None
    unknown = sorted(set(data) - {k.value for k in GeometryKind})
    if unknown:
        kinds = ", ".join(f"[[{k.value}]]" for k in GeometryKind)
        raise GeometryFileError(f"{unknown[0]}: not a kind of geometry; use {kinds}")
    tags = {(c.kind, c.tag): c.id for c in components}
    items: list[GeometryItem] = []
    roofs = [_record(GeometryKind.ROOF, n, t, site, tags, None) for n, t in _tables(data, "roof")]
    layout = Layout.of(roofs)
    items += roofs
    for kind in list(GeometryKind)[1:]:
        items += [_record(kind, n, t, site, tags, layout) for n, t in _tables(data, kind.value)]
    seen: set[tuple[GeometryKind, str]] = set()
    for item in items:
        if (item.kind, item.tag) in seen:
            raise GeometryFileError(
                f"{item.kind.value}: tag {item.tag} is given twice; tags differ"
            )
        seen.add((item.kind, item.tag))
    return items


def _tables(data: dict[str, Any], key: str) -> list[tuple[int, dict[str, Any]]]:
    tables = data.get(key, [])
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        raise GeometryFileError(f"{key}: write each one as a [[{key}]] table")
    return list(enumerate(tables, 1))


def _record(
    kind: GeometryKind,
    number: int,
    table: dict[str, Any],
    site: Site,
    tags: dict[tuple[ComponentKind, str], str],
    layout: Layout | None,
) -> GeometryItem:
    """One table as a record; errors name `kind[number].field`."""
    where = f"{kind.value}[{number}]"
    key, single = _POINTS_KEY[kind]
    allowed = {"tag", "z", key} | (
        _ITEM_KEYS | _BOX_KEYS if kind is GeometryKind.ROOFTOP_ITEM else set()
    )
    if kind in _ABOVE_ROOF:
        allowed.add("height")
    extra = sorted(set(table) - allowed)
    if extra:
        raise GeometryFileError(
            f"{where}.{extra[0]}: not a field here; use {', '.join(sorted(allowed))}"
        )
    try:
        points = _points(kind, table, key, single)
        fields: dict[str, Any] = {
            "site_id": site.id,
            "kind": kind,
            "tag": str(table.get("tag", "")),
            "points": points,
            "z_m": _height(kind, table, points, layout),
        }
    except (TypeError, ValueError) as exc:
        raise GeometryFileError(f"{where}: {exc}") from None
    if kind is GeometryKind.ROOFTOP_ITEM:
        fields |= {k: table[k] for k in _ITEM_KEYS - {"clearance"} if k in table}
        if "clearance" in table:
            fields["clearance_m"] = table["clearance"]
    component = _COMPONENT_KIND.get(kind)
    fields["component_id"] = (
        tags.get((component, fields["tag"].strip().upper())) if component else None
    )
    try:
        return GeometryItem.model_validate(fields)
    except ValidationError as exc:
        first = explain(exc).splitlines()[0].removeprefix("record: ")
        first = first.replace("z_m:", "z:").replace("clearance_m:", "clearance:")
        raise GeometryFileError(f"{where}.{first}") from None


def _points(
    kind: GeometryKind, table: dict[str, Any], key: str, single: bool
) -> list[tuple[float, float]]:
    if kind is GeometryKind.ROOFTOP_ITEM and "centre" in table:
        if key in table:
            raise ValueError(f"give either {key} or centre and size, not both")
        centre, size = _pair(table["centre"], "centre"), _pair(table.get("size"), "size")
        return box_footprint(centre, size, float(table.get("turn", 0.0)))
    if key not in table:
        raise ValueError(f"{key} is missing; give " + ("[x, y]" if single else "[[x, y], …]"))
    value = table[key]
    if single:
        return [_pair(value, key)]
    if not isinstance(value, list):
        raise ValueError(f"{key} must be a list of [x, y] pairs in metres")
    return [_pair(p, key) for p in value]


def _pair(value: Any, name: str) -> tuple[float, float]:
    if (
        not isinstance(value, list)
        or len(value) != 2
        or not all(isinstance(v, int | float) and not isinstance(v, bool) for v in value)
    ):
        raise ValueError(f"{name}: {value!r} is not a pair of numbers [x, y] in metres")
    return (float(value[0]), float(value[1]))


def _height(
    kind: GeometryKind,
    table: dict[str, Any],
    points: list[tuple[float, float]],
    layout: Layout | None,
) -> float:
    """z above ground: as given, or the roof beneath plus `height`; a down conductor
    without z runs from the highest roof it stands on."""
    if "z" in table and "height" in table:
        raise ValueError("give z (above ground) or height (above the roof), not both")
    if "height" in table:
        above = _number(table["height"], "height")
        xs, ys = zip(*points, strict=True)
        base = layout.roof_height_at((sum(xs) / len(xs), sum(ys) / len(ys))) if layout else 0.0
        return base + above
    if "z" in table:
        return _number(table["z"], "z")
    if kind is GeometryKind.DOWN_CONDUCTOR and layout is not None:
        heights = [r.z_m for r in layout.roofs if on_outline(r, points[0])]
        if heights:
            return max(heights)
    raise ValueError("z is missing; give the height above ground in metres")


def _number(value: Any, name: str) -> float:
    if not isinstance(value, int | float) or isinstance(value, bool):
        raise ValueError(f"{name}: {value!r} is not a number of metres")
    return float(value)


def import_geometry(store: Store, site: Site, path: Path) -> list[GeometryItem]:
    """Read a geometry file and put it in place of the site's geometry, all or nothing.

    Raises:
        GeometryFileError: the file cannot be read or has a mistake (nothing written).
    """
    try:
        text = path.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise GeometryFileError(f"{path}: cannot be read ({exc})") from None
    components = site_components(store, site.id)
    items = read_geometry(text, site, components)
    replace_site_geometry(store, site.id, items)
    return items
