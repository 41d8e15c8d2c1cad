"""Traverses and Wenner surveys as an inspector types them, read into numbers.

One written form serves the command line, the CSV import and the screens:

- a traverse: `52%=10.1; 61.8%=10.3; 72%=10.6` with the current probe's
  distance (`50 m`), or positions in metres: `26=10.1; 30.9 m=10.3; 36=10.6`;
- a survey: `1 m=25.1; 2 m=11.9; 4 m=5.6` (spacing a = reading R).

Points are separated by `;` or new lines (a comma may be a decimal comma);
readings take any unit `units.parse` reads (`180 mΩ`), lengths any that
`units.parse_length` reads (`10 ft`).
"""

from __future__ import annotations

import re

from inspectkit.earthing_values import SeriesError, Traverse, make_traverse, survey_text
from inspectkit.model import Quantity
from inspectkit.units import UnitError, parse, parse_fraction, parse_length

_SEPARATOR = re.compile(r"[;\n]")


def _pairs(text: str, name: str, example: str, left_name: str) -> list[tuple[str, str]]:
    """`left=right` pieces of a series, each stripped; refuse one without `=`."""
    pieces = [p.strip() for p in _SEPARATOR.split(text or "") if p.strip()]
    if not pieces:
        raise UnitError(f"{name}: nothing typed; type e.g. {example}")
    pairs = []
    for piece in pieces:
        left, sep, right = (s.strip() for s in piece.partition("="))
        if not sep or not left or not right:
            raise UnitError(f"{name}: {piece!r} must be {left_name}=reading, e.g. {example}")
        pairs.append((left, right))
    return pairs


def _ohms(text: str, name: str) -> float:
    try:
        measured = parse(text, Quantity.EARTH_ISOLATED)
    except UnitError as exc:
        raise UnitError(f"{name}: {exc}") from None
    if measured.over_range or measured.value is None or measured.value <= 0:
        raise UnitError(f"{name}: {text!r} must be a reading above zero, not over-range")
    return measured.value


def parse_traverse(points: str, current_probe: str) -> Traverse:
    """A traverse from its typed points and the E–C distance.

    Args:
        points: `52%=10.1; 61.8%=10.3; 72%=10.6` or positions in metres.
        current_probe: Distance from the electrode to the current probe, e.g. `50 m`.

    Raises:
        UnitError: a piece cannot be read, or the traverse has the wrong shape;
            the message starts with the input it is about.
    """
    example = "52%=10.1; 61.8%=10.3; 72%=10.6"
    c = parse_length(current_probe, "current probe distance")
    readings = []
    for position, reading in _pairs(points, "traverse", example, "position"):
        where = f"traverse point {position!r}"
        if position.endswith("%"):
            # To the micrometre, so 61.8 % of 50 m is stored as 30.9, not 30.900000000000002.
            distance = round(parse_fraction(position, where) * c, 6)
        else:
            distance = parse_length(position, where)
        readings.append((distance, _ohms(reading, where)))
    try:
        return make_traverse(c, readings)
    except SeriesError as exc:
        raise UnitError(str(exc)) from None


def parse_survey(points: str) -> str:
    """A Wenner survey's typed points as the stored text (`SoilSurvey.points`).

    Args:
        points: `1 m=25.1; 2 m=11.9; 4 m=5.6`: spacing a, then the reading R.

    Raises:
        UnitError: a piece cannot be read, or two readings share a spacing.
    """
    readings = []
    for spacing, reading in _pairs(points, "survey", "1 m=25.1; 2 m=11.9; 4 m=5.6", "spacing"):
        where = f"survey point {spacing!r}"
        readings.append((parse_length(spacing, where), _ohms(reading, where)))
    try:
        return survey_text(readings)
    except SeriesError as exc:
        raise UnitError(str(exc)) from None


def traverse_as_typed(traverse: Traverse) -> str:
    """A traverse written back in the typed form, positions as % of E–C."""
    return "; ".join(
        f"{100 * d / traverse.current_probe_m:.4g}%={r:.6g}" for d, r in traverse.points
    )
