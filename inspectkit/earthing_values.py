"""Series kept inside a record: a fall-of-potential traverse, a Wenner survey's readings.

Each series is one column of canonical JSON text, so that the audit chain, bundles
and exports carry it like any other field and a copy made on another laptop
compares equal byte for byte. Only the shape is checked here (numbers, order,
count); whether a traverse reached its plateau is the engine's question.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from typing import Any

#: Most readings one series may hold: a traverse of every 5 % of E–C has 19 (our default).
MAX_POINTS = 60
#: Longest distance or spacing accepted, in m: a traverse or survey longer is a typing slip.
MAX_DISTANCE_M = 10_000.0
#: Highest reading in Ω a series may hold, as for any resistance reading (our default).
MAX_READING_OHM = 1.0e6
_CANONICAL = json.JSONEncoder(sort_keys=True, separators=(",", ":"))


class SeriesError(ValueError):
    """A stored series that is not of the expected shape; the message says what is wrong."""


@dataclass(frozen=True)
class Traverse:
    """A fall-of-potential traverse: where the potential probe stood and what was read.

    Attributes:
        current_probe_m: Distance from the electrode E to the current probe C, in m.
        points: (distance of P from E in m, resistance in Ω), nearest first.
    """

    current_probe_m: float
    points: tuple[tuple[float, float], ...]

    def to_text(self) -> str:
        """The canonical JSON a reading stores."""
        return _CANONICAL.encode(
            {"current_probe_m": self.current_probe_m, "points": [list(p) for p in self.points]}
        )

    @property
    def fractions(self) -> tuple[tuple[float, float], ...]:
        """(P as a fraction of E–C, resistance in Ω), for a curve."""
        return tuple((d / self.current_probe_m, r) for d, r in self.points)


def make_traverse(current_probe_m: float, points: Any) -> Traverse:
    """A traverse from numbers, checked and sorted by distance.

    Raises:
        SeriesError: fewer than three points, more than `MAX_POINTS`, a number
            that is not finite and above zero, a point not between E and C, or
            two points at one distance.
    """
    c = _number("current_probe_m", current_probe_m)
    pairs = _pairs("traverse", points, minimum=3)
    for distance, _ in pairs:
        if distance >= c:
            raise SeriesError(
                f"traverse: a potential probe at {distance:g} m is not between the electrode "
                f"and the current probe ({c:g} m away)"
            )
    return Traverse(c, pairs)


def read_traverse(text: str) -> Traverse:
    """The traverse a reading stores as text.

    Raises:
        SeriesError: not JSON of the stored shape, or a traverse `make_traverse` refuses.
    """
    data = _json("traverse", text)
    if not isinstance(data, dict) or set(data) != {"current_probe_m", "points"}:
        raise SeriesError("traverse: must hold current_probe_m and points, nothing else")
    return make_traverse(data["current_probe_m"], data["points"])


def canonical_traverse(text: str) -> str:
    """The stored form of a traverse given as text (what the record model keeps)."""
    return read_traverse(text).to_text()


def survey_text(points: Any) -> str:
    """The canonical JSON of a Wenner survey's (spacing a in m, resistance R in Ω) pairs.

    Raises:
        SeriesError: no points, a number not finite and above zero, two at one spacing.
    """
    return _CANONICAL.encode([list(p) for p in _pairs("points", points, minimum=1)])


def read_survey(text: str) -> tuple[tuple[float, float], ...]:
    """A survey's (spacing in m, resistance in Ω) pairs, by spacing, from its stored text.

    Raises:
        SeriesError: not a JSON list of pairs `survey_text` accepts.
    """
    return _pairs("points", _json("points", text), minimum=1)


def canonical_survey(text: str) -> str:
    """The stored form of a survey's points given as text."""
    return survey_text(read_survey(text))


def _json(name: str, text: str) -> Any:
    if not isinstance(text, str):
        raise SeriesError(f"{name}: must be JSON text")
    try:
        return json.loads(text)
    except ValueError:
        raise SeriesError(f"{name}: is not JSON; inspectkit writes it, not a person") from None


def _pairs(name: str, points: Any, minimum: int) -> tuple[tuple[float, float], ...]:
    """Pairs of positive numbers, sorted by the first, none repeated."""
    if not isinstance(points, list | tuple):
        raise SeriesError(f"{name}: must be a list of [distance, resistance] pairs")
    if not minimum <= len(points) <= MAX_POINTS:
        raise SeriesError(
            f"{name}: holds {len(points)} reading(s); give {minimum} to {MAX_POINTS}"
            + (" (about 52 %, 61.8 % and 72 % of the E–C distance)" if minimum == 3 else "")
        )
    pairs = []
    for point in points:
        if not isinstance(point, list | tuple) or len(point) != 2:
            raise SeriesError(f"{name}: {point!r} is not a [distance, resistance] pair")
        distance = _number(f"{name}: distance", point[0])
        pairs.append((distance, _number(f"{name}: reading", point[1], MAX_READING_OHM)))
    pairs.sort()
    for (d1, _), (d2, _) in zip(pairs, pairs[1:], strict=False):
        if d1 == d2:
            raise SeriesError(f"{name}: two readings at {d1:g} m; keep one of them")
    return tuple(pairs)


def _number(name: str, value: Any, most: float = MAX_DISTANCE_M) -> float:
    """A finite number above zero and at most `most` (m for distances, Ω for readings)."""
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise SeriesError(f"{name}: {value!r} is not a number")
    if not math.isfinite(value) or value <= 0:
        raise SeriesError(f"{name}: {value!r} must be a finite number above zero")
    if value > most:
        raise SeriesError(f"{name}: {value:g} is beyond {most:g}; check the unit")
    return float(value)
