"""Great-circle distances between sites, and reading a "LAT,LON" point typed by a person."""

from __future__ import annotations

import math
from typing import NamedTuple

#: Mean Earth radius R1 = (2a + b) / 3 of the WGS84 ellipsoid, in km (IUGG, Moritz,
#: "Geodetic Reference System 1980", Bulletin Géodésique 54, 1980).
EARTH_RADIUS_KM = 6371.0088


class Point(NamedTuple):
    """A position in decimal degrees, north and east positive."""

    lat: float
    lon: float


class PointError(ValueError):
    """A typed position cannot be used; the message says what to type instead."""


def haversine_km(a: Point, b: Point) -> float:
    """Distance along the sphere of mean Earth radius between two points.

    The haversine form stays accurate for short hops between neighbouring sites,
    where the spherical law of cosines loses digits; a sphere is within about 0.5 %
    of the ellipsoid, far less than the road factor's own error.
    """
    lat1, lon1, lat2, lon2 = map(math.radians, (a.lat, a.lon, b.lat, b.lon))
    h = (
        math.sin((lat2 - lat1) / 2) ** 2
        + math.cos(lat1) * math.cos(lat2) * math.sin((lon2 - lon1) / 2) ** 2
    )
    return 2 * EARTH_RADIUS_KM * math.asin(min(1.0, math.sqrt(h)))


def distance_matrix(points: list[Point]) -> list[list[float]]:
    """Every pairwise distance in km; symmetric, zero on the diagonal."""
    n = len(points)
    matrix = [[0.0] * n for _ in range(n)]
    for i in range(n):
        for j in range(i + 1, n):
            matrix[i][j] = matrix[j][i] = haversine_km(points[i], points[j])
    return matrix


def parse_point(text: str, field: str = "--start") -> Point:
    """A point from "LAT,LON" in decimal degrees, e.g. "51.5072,-0.1276".

    Raises:
        PointError: not two numbers, or a latitude/longitude out of range.
    """
    parts = [p.strip() for p in text.replace(";", ",").split(",")]
    if len(parts) != 2:
        raise PointError(
            f"{field}: {text!r} is not a position; type latitude and longitude in decimal "
            "degrees separated by a comma, e.g. 51.5072,-0.1276"
        )
    try:
        lat, lon = float(parts[0]), float(parts[1])
    except ValueError:
        raise PointError(
            f"{field}: {text!r} holds something that is not a number; use decimal degrees "
            "such as 51.5072,-0.1276 (south and west negative)"
        ) from None
    if not (math.isfinite(lat) and -90.0 <= lat <= 90.0):
        raise PointError(f"{field}: latitude {parts[0]} is out of range; it runs from -90 to 90")
    if not (math.isfinite(lon) and -180.0 <= lon <= 180.0):
        raise PointError(f"{field}: longitude {parts[1]} is out of range; it runs from -180 to 180")
    return Point(lat, lon)


def format_point(point: Point) -> str:
    """The "LAT,LON" text `parse_point` reads back."""
    return f"{point.lat:.6f},{point.lon:.6f}"
