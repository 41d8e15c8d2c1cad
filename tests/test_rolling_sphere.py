"""The rolling sphere's numerical search against the closed forms of IEC 62305-3 Annex A.

The closed forms are the oracle where they apply: the numerical search returns a
bracket [lo, hi] it claims contains the exact height of the protected volume's edge,
so every test asserts that the closed form lies inside the bracket.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from inspectkit.engine.iec62305 import ROLLING_SPHERE_RADIUS_M
from inspectkit.engine.rolling_sphere import (
    GeometryError,
    Obstacles,
    envelope_height,
    protected_radius,
    rod_height_to_cover,
    sag,
)

RADII = sorted(ROLLING_SPHERE_RADIUS_M.values())
#: Float slack on the bracket (the search's own arithmetic), far below its tolerance.
EPS = 1e-6
#: A big flat roof, so its edges are more than 2r from every point tested.
BIG = 400.0


def _turn(x: float, y: float, angle: float, at: tuple[float, float]) -> tuple[float, float]:
    c, s = math.cos(angle), math.sin(angle)
    return (at[0] + c * x - s * y, at[1] + s * x + c * y)


def _roof(height: float, at: tuple[float, float]) -> list[tuple[list[tuple[float, float]], float]]:
    x, y = at
    corners = [(x - BIG, y - BIG), (x + BIG, y - BIG), (x + BIG, y + BIG), (x - BIG, y + BIG)]
    return [(corners, height)]


def test_closed_forms_worked_examples() -> None:
    # Computed from IEC 62305-3 Annex A's formula (as quoted): r = 30 m, w = 10 m →
    # p ≈ 0.42 m; r = 45 m, w = 15 m → p ≈ 0.63 m.
    assert sag(30, 10) == pytest.approx(0.42, abs=0.005)
    assert sag(45, 15) == pytest.approx(0.63, abs=0.005)
    # A rod as tall as the sphere's radius protects a radius r at its foot (h = 0):
    # √(r(2r − r)) = r (IEC 62305-3 Annex A formula, worked by hand).
    assert protected_radius(45, 45, 0) == pytest.approx(45)
    # Inverse of the same formula: the rod that reaches 10 m at 2 m up (hand check).
    h_t = rod_height_to_cover(45, 10, 2)
    assert h_t is not None and protected_radius(45, h_t, 2) == pytest.approx(10)
    assert rod_height_to_cover(20, 25, 0) is None
    with pytest.raises(GeometryError, match="rod_height"):
        protected_radius(20, 25, 1)


@settings(max_examples=25, deadline=None)
@given(
    r=st.sampled_from(RADII),
    rod=st.floats(1.0, 20.0),
    fraction=st.floats(0.02, 0.98),
    roof=st.floats(3.0, 40.0),
    angle=st.floats(0, 2 * math.pi),
    at=st.tuples(st.floats(-500, 500), st.floats(-500, 500)),
)
def test_single_rod_matches_the_closed_form(
    r: float, rod: float, fraction: float, roof: float, angle: float, at: tuple[float, float]
) -> None:
    # IEC 62305-3 Annex A (as quoted): d(h) = √(h_t(2r − h_t)) − √(h(2r − h)), solved for
    # the height h of the protected volume's edge at distance x from a rod on a flat roof.
    reach = math.sqrt(rod * (2 * r - rod))
    x = fraction * reach
    expected = roof + r - math.sqrt(r * r - (reach - x) ** 2)
    assert protected_radius(r, rod, expected - roof) == pytest.approx(x, abs=1e-6)
    obstacles = Obstacles.build([(at, at, roof + rod)], _roof(roof, at))
    px, py = _turn(x, 0.0, angle, at)
    found = envelope_height(obstacles, px, py, r)
    assert found.lo - EPS <= expected <= found.hi + EPS
    assert found.hi - found.lo <= 0.3


@settings(max_examples=25, deadline=None)
@given(
    r=st.sampled_from(RADII),
    width=st.floats(2.0, 20.0),
    height=st.floats(0.0, 20.0),
    angle=st.floats(0, 2 * math.pi),
    at=st.tuples(st.floats(-500, 500), st.floats(-500, 500)),
    along=st.floats(-0.5, 0.5),
)
def test_sag_between_two_conductors_matches_the_closed_form(
    r: float, width: float, height: float, angle: float, at: tuple[float, float], along: float
) -> None:
    # IEC 62305-3 Annex A (as quoted): the sphere sinks p = r − √(r² − (w/2)²) below two
    # parallel conductors w apart. Conductors 6r long, held p + height above the ground,
    # midway along them: the sphere rests on both and on nothing else.
    p = sag(r, width)
    lift = p + height
    half = 3 * r
    a0, a1 = _turn(-half, -width / 2, angle, at), _turn(half, -width / 2, angle, at)
    b0, b1 = _turn(-half, width / 2, angle, at), _turn(half, width / 2, angle, at)
    obstacles = Obstacles.build([(a0, a1, lift), (b0, b1, lift)])
    px, py = _turn(along * r, 0.0, angle, at)
    found = envelope_height(obstacles, px, py, r)
    expected = lift - p
    assert found.lo - EPS <= expected <= found.hi + EPS
    assert set(found.resting) == {0, 1}


@settings(max_examples=25, deadline=None)
@given(
    r=st.sampled_from(RADII),
    width=st.floats(2.0, 30.0),
    rod=st.floats(1.0, 15.0),
    roof=st.floats(3.0, 40.0),
    angle=st.floats(0, 2 * math.pi),
    at=st.tuples(st.floats(-500, 500), st.floats(-500, 500)),
)
def test_sag_between_two_rods_bounds_the_protected_height(
    r: float, width: float, rod: float, roof: float, angle: float, at: tuple[float, float]
) -> None:
    # IEC 62305-3 Annex A (as quoted): a sphere resting on two rod tips w apart sinks
    # p = r − √(r² − (w/2)²) below the line joining them. Beside a pair of rods on a flat
    # roof the sphere can get lower still, so the edge of the protected volume midway
    # lies at or below the tips' height less p, never above it.
    assume(width / 2 < r)
    p = sag(r, width)
    assume(p < rod)  # deeper, and the roof between the rods holds the sphere up
    a, b = _turn(-width / 2, 0, angle, at), _turn(width / 2, 0, angle, at)
    obstacles = Obstacles.build([(a, a, roof + rod), (b, b, roof + rod)], _roof(roof, at))
    found = envelope_height(obstacles, at[0], at[1], r)
    assert found.lo - EPS <= roof + rod - p


@settings(max_examples=20, deadline=None)
@given(
    r=st.sampled_from(RADII),
    width=st.floats(2.0, 20.0),
    cells=st.integers(1, 4),
    lift=st.floats(0.5, 20.0),
    angle=st.floats(0, 2 * math.pi),
    at=st.tuples(st.floats(-500, 500), st.floats(-500, 500)),
    pick=st.tuples(st.integers(0, 3), st.integers(0, 3)),
)
def test_sag_in_a_mesh_cell_matches_the_closed_form(
    r: float,
    width: float,
    cells: int,
    lift: float,
    angle: float,
    at: tuple[float, float],
    pick: tuple[int, int],
) -> None:
    # IEC 62305-3 Annex A (as quoted): across a mesh cell of width w the sphere sinks
    # p = r − √(r² − (w/2)²) below the conductors. A mesh held above the ground (no
    # roof under it) at height H ≥ p + lift shows the sag at every cell's centre.
    p = sag(r, width)
    height = p + lift
    side = cells * width
    lines = []
    for k in range(cells + 1):
        lines.append(((k * width, 0.0), (k * width, side)))
        lines.append(((0.0, k * width), (side, k * width)))
    elements = [(_turn(*a, angle, at), _turn(*b, angle, at), height) for a, b in lines]
    i, j = (min(n, cells - 1) for n in pick)
    px, py = _turn((i + 0.5) * width, (j + 0.5) * width, angle, at)
    found = envelope_height(Obstacles.build(elements), px, py, r)
    expected = height - p
    assert found.lo - EPS <= expected <= found.hi + EPS
    assert found.hi - found.lo <= 0.3


def test_ground_alone_is_the_floor() -> None:
    # With nothing to rest on, the sphere reaches the ground everywhere (the method's
    # definition, IEC 62305-3 Annex A as quoted).
    found = envelope_height(Obstacles.build([]), 3.0, 4.0, 45.0)
    assert found.lo - EPS <= 0.0 <= found.hi + EPS
    assert found.resting == ()


@settings(max_examples=20, deadline=None)
@given(
    r=st.sampled_from(RADII),
    rods=st.lists(
        st.tuples(st.floats(-30, 30), st.floats(-30, 30), st.floats(1.0, 15.0)),
        min_size=2,
        max_size=6,
    ),
    roof=st.floats(3.0, 30.0),
    place=st.tuples(st.floats(-30, 30), st.floats(-30, 30)),
)
def test_random_rod_layouts_protect_at_least_what_each_rod_does_alone(
    r: float, rods: list[tuple[float, float, float]], roof: float, place: tuple[float, float]
) -> None:
    # IEC 62305-3 Annex A (as quoted): a rod alone on a flat roof protects up to
    # h(x) = r − √(r² − (√(h_t(2r − h_t)) − x)²) at distance x. More conductors only hold
    # the sphere higher, so over a random layout of rods the protected volume's edge lies
    # at or above the highest single-rod height, and reaches it where one rod alone
    # holds the sphere there.
    singles = []
    for x, y, h_t in rods:
        reach = math.sqrt(h_t * (2 * r - h_t))
        d = math.dist(place, (x, y))
        singles.append(roof + (r - math.sqrt(r * r - (reach - d) ** 2) if d < reach else 0.0))
    obstacles = Obstacles.build(
        [((x, y), (x, y), roof + h_t) for x, y, h_t in rods], _roof(roof, (0.0, 0.0))
    )
    found = envelope_height(obstacles, place[0], place[1], r)
    assert found.hi + EPS >= max(singles)
    for (x, y, h_t), single in zip(rods, singles, strict=True):
        alone = envelope_height(
            Obstacles.build([((x, y), (x, y), roof + h_t)], _roof(roof, (0.0, 0.0))), *place, r
        )
        assert alone.lo - EPS <= single <= alone.hi + EPS
