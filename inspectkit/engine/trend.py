"""Electrode trending: a robust slope through each electrode's isolated readings, and a forecast.

Earth readings scatter with the season and the soil, so a straight least-squares
line is pulled about by one dry summer. The Theil–Sen slope (the median of the
slopes between every pair of readings) ignores such outliers; its spread is given
as the 95 % confidence interval of Sen (1968, eq. 2.6), computed the way
`scipy.stats.theilslopes` does, so the two can be compared.
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, timedelta
from functools import cache
from statistics import NormalDist, median
from typing import Any

from inspectkit.engine.history import (
    History,
    electrode_count,
    in_service,
    series,
)
from inspectkit.model import Component, Quantity, Reading, SiteRecords
from inspectkit.profiles import Profile
from inspectkit.wording import counted

#: Days in a mean calendar year, to turn dates into years.
YEAR_DAYS = 365.25
#: Fewest readings a forecast is made from (our default).
MIN_READINGS = 3
#: Shortest span of readings a forecast is made from, in years (our default).
MIN_SPAN_YEARS = 1.0
#: Forecasts further out than this are not given: they say nothing useful.
HORIZON_YEARS = 100


@dataclass(frozen=True)
class TheilSen:
    """A Theil–Sen line y = intercept + slope·x, with the confidence interval of its slope."""

    slope: float
    intercept: float
    low_slope: float | None
    high_slope: float | None


def theil_sen(
    xs: Sequence[float], ys: Sequence[float], confidence: float = 0.95
) -> TheilSen | None:
    """The median of pairwise slopes, or None when every x is the same.

    The intercept is median(y) − slope·median(x) (scipy's "separate" method); the
    slope's interval follows Sen (1968) eq. 2.6 with the tie corrections for
    repeated x and y values, as `scipy.stats.theilslopes` computes it.
    """
    n = len(xs)
    points = sorted(zip(xs, ys, strict=True))
    slopes = [
        (y2 - y1) / (x2 - x1)
        for i, (x1, y1) in enumerate(points)
        for x2, y2 in points[i + 1 :]
        if x2 > x1
    ]
    slopes.sort()
    if not slopes:
        return None
    middle = len(slopes) // 2  # sorted already: no need for statistics.median to sort again
    slope = slopes[middle] if len(slopes) % 2 else (slopes[middle - 1] + slopes[middle]) / 2
    intercept = median(ys) - slope * median(xs)
    z = _normal_quantile(confidence)

    def ties(values: Sequence[float]) -> int:
        if len(set(values)) == len(values):
            return 0
        return sum(k * (k - 1) * (2 * k + 5) for k in Counter(values).values())

    sigma_sq = (n * (n - 1) * (2 * n + 5) - ties(xs) - ties(ys)) / 18
    if sigma_sq < 0:
        return TheilSen(slope, intercept, None, None)
    sigma = math.sqrt(sigma_sq)
    upper = min(int(round((len(slopes) - z * sigma) / 2)), len(slopes) - 1)
    lower = max(int(round((len(slopes) + z * sigma) / 2)) - 1, 0)
    return TheilSen(slope, intercept, slopes[lower], slopes[upper])


@cache
def _normal_quantile(confidence: float) -> float:
    """The normal quantile for a two-sided interval (negative); the same for every fit."""
    alpha = min(confidence, 1 - confidence)
    return NormalDist().inv_cdf(alpha / 2)


@dataclass(frozen=True)
class ElectrodeTrend:
    """How one electrode's isolated resistance moves over time.

    Attributes:
        component_id, component_tag: the electrode (or the test joint the readings are on).
        used: readings in the fit.
        left_out_unreliable: readings marked doubtful or taken with a lapsed instrument.
        left_out_over_range: over-range readings (no number to fit).
        first_day, last_day: dates of the first and last reading used.
        slope_ohm_per_year: Theil–Sen slope, Ω per year (None without a forecast).
        slope_pct_per_year: the slope as a percentage of the median reading; the median,
            unlike the fitted start, is not dragged towards zero by one high reading.
        slope_low, slope_high: the slope's 95 % confidence interval, Ω per year.
        fitted_last: the line's value at `last_day`, Ω.
        limit: the acceptance limit, Ω.
        crossing: forecast date the line reaches the limit: always after the last reading
            (None if not rising, no forecast, or already above the limit).
        above_since: about when the electrode went above its limit, when it already is
            (the fitted line's crossing, or the first of the latest run of readings above).
        next_complete: the next complete inspection's due date.
        before_next_complete: the crossing falls on or before `next_complete`.
        note: one sentence saying what the trend shows, or why there is no forecast.
        days, values, reading_ids: the readings fitted (numbers, not doubtful,
            calibrated instrument), oldest first, as plain columns rather than the
            readings, so that a check of a whole database does not keep every reading alive.
    """

    component_id: str
    component_tag: str
    used: int
    left_out_unreliable: int
    left_out_over_range: int
    first_day: date | None
    last_day: date | None
    limit: float | None
    next_complete: date | None
    note: str
    slope_ohm_per_year: float | None = None
    slope_pct_per_year: float | None = None
    slope_low: float | None = None
    slope_high: float | None = None
    fitted_last: float | None = None
    crossing: date | None = None
    above_since: date | None = None
    before_next_complete: bool = False
    days: tuple[date, ...] = ()
    values: tuple[float, ...] = ()
    reading_ids: tuple[str, ...] = ()

    @property
    def forecast(self) -> bool:
        """A slope was fitted (enough readings over a long enough span)."""
        return self.slope_ohm_per_year is not None


def electrode_trends(
    records: SiteRecords,
    profile: Profile,
    today: date,
    next_complete: date | None,
    history: History | None = None,
) -> list[ElectrodeTrend]:
    """A trend for every component in service with isolated earth readings, by tag.

    Args:
        records: the site's records, cut to `today` (see `history.as_of`).
        profile: the rule set, for the limit.
        today: the day judged.
        next_complete: when the next complete inspection is due (from the schedule).
        history: `records.readings` grouped by `history.series`, if at hand.
    """
    tags = {c.id: c for c in records.components}
    limit = profile.limit_for(Quantity.EARTH_ISOLATED, electrode_count(records, today))
    trends = []
    grouped = series(records.readings) if history is None else history
    # What history.calibration_lapsed asks, looked up once per site rather than per reading.
    due: dict[str | None, date] = {
        key: i.calibration_due
        for key, i in records.instruments.items()
        if i.calibration_due is not None
    }
    for (component_id, quantity), readings in grouped.items():
        if quantity is not Quantity.EARTH_ISOLATED:
            continue
        component = tags.get(component_id)
        if component is None or not in_service(component, today):
            continue
        trends.append(_trend(due, component, readings, limit, next_complete))
    return sorted(trends, key=lambda t: t.component_tag)


def _trend(
    calibration_due: dict[str | None, date],
    component: Component,
    readings: list[Reading],
    limit: float | None,
    next_complete: date | None,
) -> ElectrodeTrend:
    over_range = doubtful = 0
    days: list[date] = []
    values: list[float] = []
    ids: list[str] = []
    last: Reading | None = None  # the latest reading that says something, over-range or not
    for reading in readings:
        value = reading.value
        day = reading.taken_at.date()
        lapse = calibration_due.get(reading.instrument_id)
        if reading.unreliable or (lapse is not None and day > lapse):
            doubtful += 1
            continue
        last = reading
        if reading.over_range or value is None:
            over_range += 1
            continue
        days.append(day)
        values.append(value)
        ids.append(reading.id)
    left_out = _left_out(doubtful, over_range)
    base: dict[str, Any] = dict(
        component_id=component.id,
        component_tag=component.tag,
        used=len(days),
        days=tuple(days),
        values=tuple(values),
        reading_ids=tuple(ids),
        left_out_unreliable=doubtful,
        left_out_over_range=over_range,
        first_day=days[0] if days else None,
        last_day=days[-1] if days else None,
        limit=limit,
        next_complete=next_complete,
    )
    span = (days[-1] - days[0]).days / YEAR_DAYS if days else 0.0
    if len(days) < MIN_READINGS:
        note = (
            f"no forecast: {counted(len(days), 'usable reading')}, {MIN_READINGS} needed{left_out}"
        )
        return ElectrodeTrend(**base, note=note)
    if span < MIN_SPAN_YEARS:
        note = f"no forecast: readings span {span:.1f} years, at least 1 year needed{left_out}"
        return ElectrodeTrend(**base, note=note)
    xs = [(d - days[0]).days / YEAR_DAYS for d in days]
    fit = theil_sen(xs, values)
    assert fit is not None  # the span is at least a year, so two x values differ
    typical = median(values)
    pct = 100 * fit.slope / typical if typical > 0 else None
    crossing = _crossing(fit, days[0], limit)
    above_since = _above_since(last, days, values, crossing, limit)
    if above_since is not None or (crossing is not None and crossing <= days[-1]):
        above_since = above_since or crossing
        crossing = None  # a date already passed is no forecast
    soon = crossing is not None and next_complete is not None and crossing <= next_complete
    return ElectrodeTrend(
        **base,
        slope_ohm_per_year=fit.slope,
        slope_pct_per_year=pct,
        slope_low=fit.low_slope,
        slope_high=fit.high_slope,
        fitted_last=fit.intercept + fit.slope * xs[-1],
        crossing=crossing,
        above_since=above_since,
        before_next_complete=soon,
        note=_describe(fit.slope, pct, crossing, above_since, limit, next_complete, soon)
        + left_out,
    )


def _left_out(doubtful: int, over_range: int) -> str:
    parts = []
    if doubtful:
        parts.append(f"{doubtful} doubtful or uncalibrated")
    if over_range:
        parts.append(f"{over_range} over-range")
    return f" ({' and '.join(parts)} left out)" if parts else ""


def _crossing(fit: TheilSen, first_day: date, limit: float | None) -> date | None:
    """Where the fitted line reaches the limit, if it rises and does so within the horizon."""
    if limit is None or fit.slope <= 0:
        return None
    years = (limit - fit.intercept) / fit.slope
    if years > HORIZON_YEARS:
        return None
    return first_day + timedelta(days=round(max(years, 0.0) * YEAR_DAYS))


def _above_since(
    last: Reading | None,
    days: list[date],
    values: list[float],
    crossing: date | None,
    limit: float | None,
) -> date | None:
    """When an electrode whose latest reading is above its limit went above it, else None.

    `last` is the latest reading that proves something; it may be an over-range one the
    fit leaves out (an open circuit), which is above any limit below its range.
    """
    if limit is None or last is None or last.value is None or last.value <= limit:
        return None
    if crossing is not None and crossing <= last.taken_at.date():
        return crossing
    since = last.taken_at.date()
    for day, value in zip(reversed(days), reversed(values), strict=True):
        if value <= limit:
            break
        since = day
    return since


def _describe(
    slope: float,
    pct: float | None,
    crossing: date | None,
    above_since: date | None,
    limit: float | None,
    next_complete: date | None,
    soon: bool,
) -> str:
    rate = f"{slope:+.2f} Ω/year" + (f" ({pct:+.1f} %/year)" if pct is not None else "")
    if above_since is not None:
        return f"{rate}; above the {limit:g} Ω limit since about {above_since.isoformat()}"
    if crossing is None:
        return f"{rate}; not heading for the limit"
    text = f"{rate}; reaches the {limit:g} Ω limit about {crossing.isoformat()}"
    if soon and next_complete is not None:
        return f"{text}, before the next complete inspection due {next_complete.isoformat()}"
    return text
