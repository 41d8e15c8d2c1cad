"""The demo's seasons: the ground and weather on a visit, and how they move earth readings.

Invented for the demo, for an inland temperate climate: wet spring and autumn, dry
summer, frozen spells in winter. Earth readings rise in dry or frozen ground and
fall in wet ground (common practice); the factors are our default for the demo.
"""

from __future__ import annotations

import random
from datetime import date

from inspectkit.model import SoilCondition

#: Ground state by month, as (condition, weight).
_SOIL_BY_MONTH: dict[int, tuple[tuple[SoilCondition, float], ...]] = {
    **dict.fromkeys(
        (12, 1, 2),
        ((SoilCondition.FROZEN, 0.4), (SoilCondition.WET, 0.35), (SoilCondition.NORMAL, 0.25)),
    ),
    **dict.fromkeys((3, 4, 10, 11), ((SoilCondition.WET, 0.6), (SoilCondition.NORMAL, 0.4))),
    **dict.fromkeys(
        (5, 9), ((SoilCondition.NORMAL, 0.7), (SoilCondition.DRY, 0.2), (SoilCondition.WET, 0.1))
    ),
    **dict.fromkeys((6, 7, 8), ((SoilCondition.DRY, 0.6), (SoilCondition.NORMAL, 0.4))),
}
#: An electrode's resistance in that ground, against normal ground (our default for the demo).
SOIL_FACTOR = {
    SoilCondition.FROZEN: 1.3,
    SoilCondition.DRY: 1.22,
    SoilCondition.NORMAL: 1.0,
    SoilCondition.WET: 0.88,
}
#: Words and the range of temperatures (°C) that go with each ground state.
_WEATHER = {
    SoilCondition.FROZEN: ("clear, hard frost", -6, 1),
    SoilCondition.DRY: ("dry, sunny", 18, 29),
    SoilCondition.NORMAL: ("dry, light cloud", 8, 18),
    SoilCondition.WET: ("overcast after rain", 4, 13),
}


def soil_on(day: date, rng: random.Random) -> SoilCondition:
    """The ground on a day, drawn by the season."""
    conditions, weights = zip(*_SOIL_BY_MONTH[day.month], strict=True)
    return rng.choices(conditions, weights)[0]


def weather_in(soil: SoilCondition, rng: random.Random) -> str:
    """A weather note that fits the ground, e.g. 'dry, sunny, 24 °C'."""
    words, coldest, warmest = _WEATHER[soil]
    return f"{words}, {rng.randint(coldest, warmest)} °C"
