"""Great-circle distances against the WGS84 geodesic, and typed positions."""

from __future__ import annotations

import pytest
from geographiclib.geodesic import Geodesic

from inspectkit.plan.geo import (
    EARTH_RADIUS_KM,
    Point,
    PointError,
    distance_matrix,
    format_point,
    haversine_km,
    parse_point,
)

#: City centres in decimal degrees (rounded public coordinates; any nearby point would do,
#: the check is the formula against the ellipsoid, not the cities).
CITY_PAIRS = [
    ("London", Point(51.5074, -0.1278), "Paris", Point(48.8566, 2.3522)),
    ("New York", Point(40.7128, -74.0060), "Los Angeles", Point(34.0522, -118.2437)),
    ("Sydney", Point(-33.8688, 151.2093), "Melbourne", Point(-37.8136, 144.9631)),
    ("Quito", Point(-0.1807, -78.4678), "Nairobi", Point(-1.2921, 36.8219)),
    ("Oslo", Point(59.9139, 10.7522), "Cape Town", Point(-33.9249, 18.4241)),
]


@pytest.mark.parametrize(("name_a", "a", "name_b", "b"), CITY_PAIRS)
def test_haversine_within_half_a_percent_of_the_geodesic(
    name_a: str, a: Point, name_b: str, b: Point
) -> None:
    # Oracle: WGS84 geodesic via geographiclib (Karney, "Algorithms for geodesics",
    # J. Geodesy 87, 2013); a sphere of mean radius stays within about 0.5 % of it.
    geodesic_km = Geodesic.WGS84.Inverse(a.lat, a.lon, b.lat, b.lon)["s12"] / 1000
    assert haversine_km(a, b) == pytest.approx(geodesic_km, rel=0.005), (name_a, name_b)


def test_mean_earth_radius_is_the_iugg_value() -> None:
    # IUGG mean radius R1 = (2a + b) / 3 of GRS80/WGS84 (Moritz 1980): 6371.0088 km.
    a_km, f = Geodesic.WGS84.a / 1000, Geodesic.WGS84.f
    assert EARTH_RADIUS_KM == pytest.approx((2 * a_km + a_km * (1 - f)) / 3, abs=1e-4)


def test_quarter_meridian_on_the_sphere() -> None:
    # Pole to equator is a quarter of a great circle: π R / 2.
    assert haversine_km(Point(0, 0), Point(90, 0)) == pytest.approx(
        3.141592653589793 * EARTH_RADIUS_KM / 2
    )


def test_antipodes_do_not_fail_on_rounding() -> None:
    assert haversine_km(Point(10, 20), Point(-10, -160)) == pytest.approx(
        3.141592653589793 * EARTH_RADIUS_KM
    )


def test_distance_matrix_is_symmetric_with_a_zero_diagonal() -> None:
    points = [p for _, a, _, b in CITY_PAIRS[:2] for p in (a, b)]
    matrix = distance_matrix(points)
    for i, row in enumerate(matrix):
        assert row[i] == 0
        for j, value in enumerate(row):
            assert value == matrix[j][i]


@pytest.mark.parametrize(
    ("text", "point"),
    [("51.5072,-0.1276", Point(51.5072, -0.1276)), (" -33.9 ; 18.4 ", Point(-33.9, 18.4))],
)
def test_parse_point(text: str, point: Point) -> None:
    assert parse_point(text) == point
    assert parse_point(format_point(point)) == pytest.approx(point)


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("51.5", "separated by a comma"),
        ("north,west", "not a number"),
        ("95,0", "latitude 95 is out of range"),
        ("0,181", "longitude 181 is out of range"),
        ("nan,0", "latitude nan is out of range"),
    ],
)
def test_bad_points_say_what_to_type(text: str, words: str) -> None:
    with pytest.raises(PointError, match="--start") as caught:
        parse_point(text)
    assert words in str(caught.value)
