"""The fall-of-potential method (IEEE Std 81): where the probes go, and whether a traverse
has reached the plateau and what value to report from it.

Pure functions of SI units; each docstring names its source and how sure we are of
it, in the words of docs/sources.md.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from inspectkit.engine.formula_inputs import EarthingError, positive
from inspectkit.wording import counted

#: Potential probe position as a fraction of the E–C distance (IEEE Std 81, as quoted).
POTENTIAL_PROBE_FRACTION = 0.618
#: Plateau check positions either side of it (common practice).
PLATEAU_FRACTIONS = (0.52, 0.72)
#: How far (fraction of the E–C distance) a reading may sit from a check position
#: and still stand for it (our default).
POSITION_TOLERANCE = 0.05


def potential_probe_distance(current_probe_distance_m: float) -> float:
    """Where to drive the potential probe: 61.8 % of the way to the current probe.

    Source: IEEE Std 81, fall-of-potential method, the 61.8 % rule (as quoted).

    Args:
        current_probe_distance_m: Distance from the electrode E to the current probe C in m.

    Returns:
        Distance from E to the potential probe P in m.
    """
    return POTENTIAL_PROBE_FRACTION * positive("current_probe_distance_m", current_probe_distance_m)


def current_probe_min_distance(electrode_size_m: float, factor: float = 5.0) -> float:
    """How far out the current probe must go at least, so the two resistance areas don't overlap.

    Source: common practice, at least five times the electrode's largest dimension
    (a rod's length, a ring's or grid's diagonal).

    Args:
        electrode_size_m: The electrode's largest dimension in m.
        factor: Multiple of that dimension; 5 by common practice.

    Returns:
        The least E–C distance in m.
    """
    size = positive("electrode_size_m", electrode_size_m)
    if positive("factor", factor) < 1:
        raise EarthingError(
            f"factor must be 1 or more (got {factor!r}); the current probe cannot sit "
            "inside the electrode's own extent"
        )
    return factor * size


@dataclass(frozen=True)
class PlateauResult:
    """Outcome of a fall-of-potential plateau check.

    Attributes:
        valid: True when the readings near 52 % and 72 % are within the tolerance
            of the 61.8 % reading, so the probes sit on the plateau.
        resistance_ohm: The value to report: the traverse at 61.8 % of E–C,
            interpolated linearly between the readings either side of it.
        low_ohm: The reading nearest 52 % (None when no reading is near enough).
        high_ohm: The reading nearest 72 % (None when no reading is near enough).
        spread: The larger deviation of those two from the 61.8 % value, as a
            fraction of it (0.09 is 9 %); None when either is missing.
        message: A sentence an inspector can act on.
    """

    valid: bool
    resistance_ohm: float
    low_ohm: float | None
    high_ohm: float | None
    spread: float | None
    message: str


def plateau_check(
    points: Sequence[tuple[float, float]],
    current_probe_distance_m: float,
    tolerance: float = 0.05,
) -> PlateauResult:
    """Check that a fall-of-potential traverse has reached the plateau, and say what to report.

    Source: IEEE Std 81 (61.8 % position, as quoted); repeating at about 52 % and
    72 % and accepting when they agree within ±5 % is common practice. A reading
    stands for a check position when it lies within 5 % of E–C of it (our default).

    Args:
        points: (distance of P from E in m, resistance in Ω) along the traverse,
            at least three, in any order, each strictly between E and C.
        current_probe_distance_m: Distance from E to the current probe C in m.
        tolerance: Accepted deviation of the 52 % and 72 % readings from the
            61.8 % value, as a fraction (0.05 is ±5 %).

    Returns:
        Whether the reading is valid, the value to report, the spread and a sentence.
    """
    c = positive("current_probe_distance_m", current_probe_distance_m)
    if not 0 < positive("tolerance", tolerance) < 1:
        raise EarthingError(f"tolerance must be a fraction between 0 and 1 (got {tolerance!r})")
    traverse = _checked_traverse(points, c)
    at = POTENTIAL_PROBE_FRACTION * c
    lowest, farthest = traverse[0][0], traverse[-1][0]
    if not lowest <= at <= farthest:
        raise EarthingError(
            f"points run from {_percent(lowest / c)} to {_percent(farthest / c)} of the "
            f"E–C distance; take readings either side of 61.8 % ({at:.2f} m)"
        )
    reported = _interpolate(traverse, at)
    nearest = [_nearest(traverse, fraction * c, c) for fraction in PLATEAU_FRACTIONS]
    missing = [f for f, point in zip(PLATEAU_FRACTIONS, nearest, strict=True) if point is None]
    low, high = (None if p is None else p[1] for p in nearest)
    if missing:
        where = " and ".join(f"{_percent(f)} ({f * c:.2f} m)" for f in missing)
        return PlateauResult(
            False,
            reported,
            low,
            high,
            None,
            f"no reading near {where} of the E–C distance: take one there to check the plateau",
        )
    assert low is not None and high is not None
    spread = max(abs(low - reported), abs(high - reported)) / reported
    positions = " and ".join(_percent(p[0] / c) for p in nearest if p is not None)
    if spread <= tolerance:
        message = (
            f"readings at {positions} are within {_percent(spread)} of the 61.8 % value: "
            f"on the plateau, report {reported:.3g} Ω"
        )
    else:
        message = (
            f"readings at {positions} differ from the 61.8 % value by up to {_percent(spread)} "
            f"(more than {_percent(tolerance)}): move the current probe further out and repeat"
        )
    return PlateauResult(spread <= tolerance, reported, low, high, spread, message)


def _checked_traverse(points: Sequence[tuple[float, float]], c: float) -> list[tuple[float, float]]:
    """The points sorted by distance, each checked; refuse fewer than three or any out of (0, C)."""
    if len(points) < 3:
        raise EarthingError(
            f"points holds {counted(len(points), 'reading')}; a plateau check needs at least three "
            "(about 52 %, 61.8 % and 72 % of the E–C distance)"
        )
    traverse = []
    for distance, resistance in points:
        d = positive("points: distance", distance)
        if d >= c:
            raise EarthingError(
                f"points: distance {d:g} m is not between the electrode and the current "
                f"probe (0 to {c:g} m); check the distance or current_probe_distance_m"
            )
        traverse.append((d, positive("points: resistance", resistance)))
    traverse.sort()
    for (d1, _), (d2, _) in zip(traverse, traverse[1:], strict=False):
        if d1 == d2:
            raise EarthingError(f"points: two readings at {d1:g} m; keep one of them")
    return traverse


def _interpolate(traverse: list[tuple[float, float]], at: float) -> float:
    """The traverse's resistance at `at`, linear between the readings either side."""
    for (d1, r1), (d2, r2) in zip(traverse, traverse[1:], strict=False):
        if d1 <= at <= d2:
            return r1 + (r2 - r1) * (at - d1) / (d2 - d1)
    raise AssertionError("caller checks that `at` lies within the traverse")


def _nearest(
    traverse: list[tuple[float, float]], target: float, c: float
) -> tuple[float, float] | None:
    """The reading nearest `target`, or None when none lies within the position tolerance."""
    point = min(traverse, key=lambda p: abs(p[0] - target))
    return point if abs(point[0] - target) <= POSITION_TOLERANCE * c + 1e-12 else None


def _percent(fraction: float) -> str:
    """A fraction as the trade writes it: 0.52 → "52 %", 0.618 → "61.8 %"."""
    return f"{100 * fraction:.1f}".removesuffix(".0") + " %"
