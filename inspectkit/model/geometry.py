"""Site geometry in local metres: roofs, the air-termination system, down conductors and
the rooftop items it must protect.

An inspector measures on site from a corner of the building: x runs east, y north,
z is the height above ground, all in metres. One record per drawn thing keeps the
form, the import file and the store simple; which fields mean something depends on
the kind, and the validators say so field by field. A site with no geometry is not
checked for protection ("no geometry recorded"), never failed.
"""

from __future__ import annotations

import json
import math
from typing import Any, ClassVar

from pydantic import Field, field_serializer, field_validator, model_validator

from inspectkit.model.record import Record, enum_field, tag_field
from inspectkit.model.terms import Between, GeometryKind
from inspectkit.wording import with_article

#: Coordinates beyond this many metres from the site's origin are typing slips (our default).
MAX_COORDINATE_M = 10_000.0
#: Heights above ground up to this (our default, as for a site's height).
MAX_HEIGHT_M = 1_000.0

Point = tuple[float, float]


#: How many points each kind takes: (least, most), and what they are.
POINTS_OF: dict[GeometryKind, tuple[int, int | None, str]] = {
    GeometryKind.ROOF: (3, None, "the outline's corners, in order round the roof"),
    GeometryKind.AIR_TERMINAL: (1, 1, "the rod's position"),
    GeometryKind.AIR_CONDUCTOR: (2, None, "the conductor's run, end to end"),
    GeometryKind.DOWN_CONDUCTOR: (1, 1, "where it leaves the roof edge"),
    GeometryKind.ROOFTOP_ITEM: (3, None, "the footprint's corners, in order"),
}

#: What z means for each kind.
HEIGHT_OF: dict[GeometryKind, str] = {
    GeometryKind.ROOF: "the roof's height above ground",
    GeometryKind.AIR_TERMINAL: "the rod's tip above ground",
    GeometryKind.AIR_CONDUCTOR: "the conductor's height above ground",
    GeometryKind.DOWN_CONDUCTOR: "the top of the down conductor above ground",
    GeometryKind.ROOFTOP_ITEM: "the top of the item above ground",
}


class GeometryItem(Record):
    """One drawn thing of a site's geometry."""

    table: ClassVar[str] = "geometry_item"

    site_id: str
    kind: GeometryKind
    #: The tag painted on site (e.g. AT-03, AHU-2); a component's tag when linked to one.
    tag: str = Field(min_length=1, max_length=40)
    #: The component this draws, where the site has one (air terminals, conductors).
    component_id: str | None = None
    #: Corners or positions (x east, y north) in metres from the site's origin.
    points: tuple[Point, ...]
    #: Height above ground in metres; what it is depends on the kind (HEIGHT_OF).
    z_m: float
    #: What a rooftop item is, e.g. "air handler", "PV array", "antenna mast".
    what: str = Field(default="", max_length=200)
    #: A rooftop item of metal (or with metal parts) that a flash could spark to.
    conductive: bool = False
    #: Bonded (connected) to the LPS: then no separation distance applies.
    bonded: bool = False
    #: What lies between the item and the nearest conductor, for km.
    separated_by: Between = Between.AIR
    #: Clearance measured on site to the nearest LPS conductor, m (else computed).
    clearance_m: float | None = None
    #: Anything worth knowing, e.g. "added since the last visit".
    note: str = Field(default="", max_length=500)

    _kind = enum_field("kind", GeometryKind, "geometry kind")
    _between = enum_field("separated_by", Between, "material between item and conductor")
    _tag = tag_field("AT-03")

    @field_validator("points", mode="before")
    @classmethod
    def _points_text(cls, value: Any) -> Any:
        """Stored as JSON text; typed as `x,y; x,y` in forms."""
        if isinstance(value, str):
            return parse_points(value)
        return value

    @field_validator("points")
    @classmethod
    def _points_finite(cls, value: tuple[Point, ...]) -> tuple[Point, ...]:
        for x, y in value:
            if (
                not (math.isfinite(x) and math.isfinite(y))
                or max(abs(x), abs(y)) > MAX_COORDINATE_M
            ):
                raise ValueError(
                    f"({x}, {y}) is not a position on a site; give metres from the site's "
                    f"origin, within ±{MAX_COORDINATE_M:g}"
                )
        return value

    @field_validator("z_m")
    @classmethod
    def _height(cls, value: float) -> float:
        if not math.isfinite(value) or not 0 < value <= MAX_HEIGHT_M:
            raise ValueError(
                f"{value} m is not a height above ground; give metres above 0 and up to "
                f"{MAX_HEIGHT_M:g}"
            )
        return value

    @field_validator("clearance_m")
    @classmethod
    def _clearance(cls, value: float | None) -> float | None:
        if value is not None and (not math.isfinite(value) or not 0 <= value <= 100):
            raise ValueError(f"{value} m is not a clearance; give metres from 0 to 100, or none")
        return value

    @model_validator(mode="after")
    def _fits_kind(self) -> GeometryItem:
        least, most, what = POINTS_OF[self.kind]
        n = len(self.points)
        if n < least or (most is not None and n > most):
            count = f"exactly {least}" if least == most else f"at least {least}"
            raise ValueError(
                f"points: {with_article(self.kind.label)} takes {count} point(s) ({what}); got {n}"
            )
        if self.kind is not GeometryKind.ROOFTOP_ITEM and (
            self.conductive or self.bonded or self.clearance_m is not None
        ):
            raise ValueError(
                "conductive, bonded and clearance_m describe rooftop items only; leave them empty"
            )
        if self.bonded and not self.conductive:
            raise ValueError("bonded: only a conductive item can be bonded; set conductive too")
        if self.kind in (GeometryKind.ROOF, GeometryKind.ROOFTOP_ITEM) and _area(self.points) == 0:
            raise ValueError("points: the corners enclose no area; give them in order round it")
        return self

    @field_serializer("points", when_used="json")
    def _points_json(self, value: tuple[Point, ...]) -> str:
        return json.dumps([[x, y] for x, y in value])


def parse_points(text: str) -> list[Point]:
    """Points from `x,y; x,y; …` (as typed) or a JSON list of pairs (as stored)."""
    text = text.strip()
    if text.startswith("["):
        try:
            return [(float(x), float(y)) for x, y in json.loads(text)]
        except (ValueError, TypeError) as exc:
            raise ValueError(f"not a list of [x, y] pairs ({exc})") from None
    points = []
    for part in filter(None, (p.strip() for p in text.split(";"))):
        pieces = [p.strip() for p in part.split(",")]
        try:
            x, y = (float(p) for p in pieces)
        except ValueError:
            raise ValueError(
                f"{part!r} is not a position; type x,y in metres, points separated by ';' "
                "(e.g. 0,0; 20,0; 20,12)"
            ) from None
        points.append((x, y))
    return points


def box_footprint(centre: Point, size: tuple[float, float], angle_deg: float = 0.0) -> list[Point]:
    """The corners of a rectangle given by its centre, its size along x and y, and a turn
    (degrees anticlockwise), as the import file allows for rooftop items."""
    (cx, cy), (w, d) = centre, size
    if not (w > 0 and d > 0):
        raise ValueError(f"size must be two lengths above zero in metres (got {w}, {d})")
    c, s = math.cos(math.radians(angle_deg)), math.sin(math.radians(angle_deg))
    corners = ((-w / 2, -d / 2), (w / 2, -d / 2), (w / 2, d / 2), (-w / 2, d / 2))
    return [(cx + c * x - s * y, cy + s * x + c * y) for x, y in corners]


def _area(points: tuple[Point, ...]) -> float:
    """Area of a polygon by the shoelace formula (absolute value)."""
    n = len(points)
    twice = sum(
        points[i][0] * points[(i + 1) % n][1] - points[(i + 1) % n][0] * points[i][1]
        for i in range(n)
    )
    return abs(twice) / 2
