"""The form for one geometry item: kind, tag (or a component's tag), points typed, heights."""

from __future__ import annotations

from collections.abc import Callable, Sequence
from typing import Any

from textual.screen import Screen

from inspectkit.engine.conformity import assess
from inspectkit.model import Between, Component, ComponentKind, GeometryKind
from inspectkit.model.geometry import HEIGHT_OF, POINTS_OF, GeometryItem
from inspectkit.store import Store, StoreError
from inspectkit.store.geometry import save_geometry_item, site_geometry
from inspectkit.store.queries import load_site_records
from inspectkit.tui.dialogs.record_form import Field, RecordDialog

#: The components whose tags a geometry item may take over.
_LPS_KINDS = (ComponentKind.AIR_TERMINAL, ComponentKind.AIR_CONDUCTOR, ComponentKind.DOWN_CONDUCTOR)


class GeometryDialog(RecordDialog[GeometryItem]):
    """A geometry form where a tag left blank is taken from the component chosen."""

    def __init__(self, *args: Any, components: Sequence[Component] = ()) -> None:
        super().__init__(*args)
        self.tags = {c.id: c.tag for c in components}

    def values(self) -> dict[str, Any]:
        typed = super().values()
        if not typed.get("tag") and typed.get("component_id") in self.tags:
            typed["tag"] = self.tags[typed["component_id"]]
        return typed


def geometry_dialog(
    site_id: str, item: GeometryItem | None, components: Sequence[Component]
) -> GeometryDialog:
    """Add or edit one geometry item of a site; positions typed as `x,y; x,y` in metres."""
    lps = [c for c in components if c.kind in _LPS_KINDS and c.retired_on is None]
    points_hint = "; ".join(f"{k.label}: {what}" for k, (_, _, what) in POINTS_OF.items())
    fields = [
        Field("kind", "Kind", "what is drawn", choices=[(k.label, k.value) for k in GeometryKind]),
        Field(
            "component_id",
            "Component",
            optional=True,
            choices=[(f"{c.tag} ({c.kind.label})", c.id) for c in sorted(lps, key=lambda c: c.tag)],
        ),
        Field("tag", "Tag", "the tag on site; blank: the component's"),
        Field("points", "Points (m)", "x,y; x,y from the site's corner, x east, y north"),
        Field("z_m", "Height z (m)", "above ground: " + "; ".join(HEIGHT_OF.values())),
        Field("what", "What it is", "rooftop items: e.g. air handler"),
        Field("conductive", "Conductive", flag=True),
        Field("bonded", "Bonded to LPS", flag=True),
        Field(
            "separated_by",
            "Separated by",
            choices=[
                ("air", Between.AIR.value),
                ("solid (brick, concrete, wood)", Between.SOLID.value),
            ],
        ),
        Field("clearance_m", "Clearance (m)", "measured to the nearest conductor", optional=True),
        Field("note", "Note", "e.g. added since the last visit"),
    ]
    if item is None:
        base: dict[str, Any] = {
            "site_id": site_id,
            "kind": GeometryKind.ROOFTOP_ITEM.value,
            "separated_by": Between.AIR.value,
        }
        title = f"New geometry item. Points: {points_hint}"
    else:
        base = item.model_dump()
        base["points"] = "; ".join(f"{x:g},{y:g}" for x, y in item.points)
        title = f"Edit {item.tag} ({item.kind.label})"
    return GeometryDialog(title, GeometryItem, fields, base, components=lps)


def edit_geometry(
    screen: Screen[Any],
    site_id: str,
    item: GeometryItem | None = None,
    saved: Callable[[GeometryItem], None] | None = None,
) -> None:
    """Open the form for a geometry item of a site; once saved, say its verdict at once.

    Used by the site screen's roof plan and the walkdown, so an item added or edited on
    the roof is judged the moment it is saved.
    """
    store = screen.app.store  # type: ignore[attr-defined]
    records = load_site_records(store, site_id)

    def done(record: GeometryItem | None) -> None:
        if record is None:
            return
        try:
            save_geometry_item(store, record)
        except StoreError as error:
            screen.notify(str(error), severity="error")
            return
        judged = load_site_records(store, site_id)
        verdict = next(
            (v for v in assess(judged.site, judged.geometry).items if v.tag == record.tag), None
        )
        if verdict is None:
            screen.notify(f"{record.tag} saved")
        else:
            level = {"fail": "error", "watch": "warning"}.get(verdict.severity.value, "information")
            screen.notify(f"{record.tag} saved. {verdict.message}", severity=level, timeout=12)
        if saved is not None:
            saved(record)

    screen.app.push_screen(geometry_dialog(site_id, item, records.components), done)


def geometry_for(store: Store, site_id: str, component: Component) -> GeometryItem | None:
    """The geometry drawn for a component (linked to it, or under its tag), if any."""
    drawn = site_geometry(store, site_id)
    return next(
        (g for g in drawn if g.component_id == component.id),
        next((g for g in drawn if g.tag == component.tag), None),
    )
