"""Electrode trending: the Theil–Sen line against scipy, forecasts and what is left out."""

from __future__ import annotations

import math
from datetime import date, timedelta

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.stats import theilslopes

from inspectkit.engine.trend import electrode_trends, theil_sen
from inspectkit.model import InspectionKind, Quantity
from inspectkit.profiles import load_profile
from tests.engine_factories import SiteBuilder

IEC = load_profile("iec-62305-3")

values = st.floats(min_value=0.0, max_value=500.0, allow_nan=False)


# scipy takes the square root of a negative tie-corrected variance for heavily tied
# series and then gives no interval; ours gives None there.
@pytest.mark.filterwarnings("ignore:invalid value encountered in sqrt:RuntimeWarning")
@settings(max_examples=200, deadline=None)
@given(
    st.lists(
        st.tuples(st.integers(min_value=0, max_value=20 * 365), values), min_size=2, max_size=25
    )
)
def test_theil_sen_matches_scipy(points):
    xs = [day / 365.25 for day, _ in points]
    ys = [y for _, y in points]
    ours = theil_sen(xs, ys)
    if len(set(xs)) == 1:
        assert ours is None
        return
    # Oracle: scipy.stats.theilslopes (Theil 1950, Sen 1968; CI from Sen 1968 eq. 2.6).
    slope, intercept, low, high = theilslopes(ys, xs, 0.95)
    assert ours.slope == pytest.approx(slope, rel=1e-9, abs=1e-9)
    assert ours.intercept == pytest.approx(intercept, rel=1e-9, abs=1e-6)
    if math.isnan(low):
        assert ours.low_slope is None
    else:
        assert ours.low_slope == pytest.approx(low, rel=1e-9, abs=1e-9)
        assert ours.high_slope == pytest.approx(high, rel=1e-9, abs=1e-9)


def test_theil_sen_ignores_one_outlier():
    # Robustness of the median of pairwise slopes (Sen 1968): one wild value barely moves it.
    xs = [0, 1, 2, 3, 4, 5, 6]
    ys = [2, 3, 4, 50, 6, 7, 8]
    assert theil_sen(xs, ys).slope == pytest.approx(1.0)


def _electrode(values_by_day, **reading_fields):
    site = SiteBuilder("II")
    _, electrode = site.joint_with_electrode(1)
    for day, value in values_by_day:
        visit = site.visit(day, InspectionKind.COMPLETE)
        site.reading(
            visit, electrode, Quantity.EARTH_ISOLATED, value, **reading_fields.get(day, {})
        )
    return site


def _only(site, next_complete=date(2030, 1, 1)):
    (trend,) = electrode_trends(site.records(), IEC, date(2026, 12, 1), next_complete)
    return trend


def test_rising_electrode_is_forecast_to_cross_before_next_complete():
    days = [date(2020, 6, 1) + timedelta(days=round(365.25 * k)) for k in range(6)]
    site = _electrode(zip(days, [5.0, 5.8, 6.6, 7.4, 8.2, 9.0], strict=True))
    trend = _only(site)
    assert trend.slope_ohm_per_year == pytest.approx(0.8, rel=1e-3)
    assert trend.slope_pct_per_year == pytest.approx(100 * 0.8 / 7.0, rel=1e-3)  # of the median 7 Ω
    # 5 Ω + 0.8 Ω/year reaches 10 Ω after 6.25 years.
    assert abs((trend.crossing - date(2026, 9, 1)).days) <= 2
    assert trend.before_next_complete
    assert "before the next complete inspection" in trend.note
    assert not _only(site, next_complete=date(2026, 1, 1)).before_next_complete


def test_single_reading_gives_no_forecast():
    trend = _only(_electrode([(date(2024, 3, 1), 4.0)]))
    assert not trend.forecast and trend.crossing is None
    assert "1 usable reading, 3 needed" in trend.note


def test_readings_on_the_same_day_give_no_forecast():
    site = SiteBuilder("II")
    _, electrode = site.joint_with_electrode(1)
    visit = site.visit(date(2024, 3, 1))
    for hour, value in ((9, 4.0), (10, 4.2), (11, 4.1)):
        site.reading(visit, electrode, Quantity.EARTH_ISOLATED, value, hour=hour)
    trend = _only(site)
    assert not trend.forecast
    assert "span 0.0 years" in trend.note


def test_less_than_a_year_gives_no_forecast():
    site = _electrode([(date(2024, 1, 1), 4.0), (date(2024, 5, 1), 5.0), (date(2024, 9, 1), 6.0)])
    assert "at least 1 year" in _only(site).note


def test_doubtful_lapsed_and_over_range_readings_are_left_out_and_counted():
    site = SiteBuilder("II")
    _, electrode = site.joint_with_electrode(1)
    lapsed = site.instrument(calibration_due=date(2021, 1, 1))
    for year, value in zip(range(2019, 2025), [4.0, 4.1, 40.0, 4.3, 4.4, 4.5], strict=True):
        visit = site.visit(date(year, 5, 1))
        fields = {}
        if year == 2021:
            fields = {"instrument_id": lapsed.id}
        if year == 2022:
            fields = {"unreliable": True}
        site.reading(visit, electrode, Quantity.EARTH_ISOLATED, value, **fields)
    over = site.visit(date(2025, 5, 1))
    site.reading(over, electrode, Quantity.EARTH_ISOLATED, 2000.0, over_range=True)
    trend = _only(site)
    assert trend.used == 4
    assert trend.left_out_unreliable == 2
    assert trend.left_out_over_range == 1
    assert "2 doubtful or uncalibrated and 1 over-range left out" in trend.note


def test_falling_electrode_has_no_crossing():
    site = _electrode([(date(2020 + k, 1, 1), 9.0 - k) for k in range(4)])
    trend = _only(site)
    assert trend.slope_ohm_per_year < 0
    assert trend.crossing is None
    assert "not heading for the limit" in trend.note


def test_an_electrode_above_its_limit_gets_no_future_crossing():
    # 11.9 Ω against 10 Ω (IEC 62305-3 clause 5.4, as quoted): already above, so no
    # "reaches the limit about" a date to come, and the rise's start is said instead.
    days = [date(2021 + k, 6, 1) for k in range(5)]
    site = _electrode(zip(days, [4.0, 4.2, 4.1, 4.3, 11.9], strict=True))
    trend = _only(site)
    assert trend.crossing is None and not trend.before_next_complete
    assert trend.above_since == date(2025, 6, 1)
    assert "above the 10 Ω limit since about 2025-06-01" in trend.note
    assert "reaches" not in trend.note


def test_a_fitted_line_crossed_in_the_past_says_since_when():
    days = [date(2018 + k, 6, 1) for k in range(6)]
    site = _electrode(zip(days, [9.0, 10.5, 12.0, 13.5, 15.0, 16.5], strict=True))
    trend = _only(site)
    assert trend.crossing is None
    assert trend.above_since is not None and trend.above_since < days[2]
    assert f"since about {trend.above_since.isoformat()}" in trend.note


def test_an_open_circuit_after_good_readings_is_above_the_limit_at_once():
    days = [date(2021 + k, 6, 1) for k in range(4)]
    site = _electrode(zip(days[:-1], [4.0, 4.4, 4.8], strict=True))
    electrode = site.components[-1]
    site.reading(site.visit(days[-1]), electrode, Quantity.EARTH_ISOLATED, 2000.0, over_range=True)
    trend = _only(site)
    assert trend.crossing is None and trend.above_since == days[-1]


@settings(max_examples=150, deadline=None)
@given(st.lists(st.floats(min_value=0.1, max_value=60.0, allow_nan=False), min_size=3, max_size=10))
def test_no_reading_above_its_limit_gets_a_future_crossing(series):
    # Property: whatever the history, an electrode whose latest reading is above the
    # 10 Ω limit is never forecast to reach it later, and a crossing given is after
    # the last reading.
    days = [date(2015 + k, 6, 1) for k in range(len(series))]
    trend = _only(_electrode(zip(days, series, strict=True)))
    if series[-1] > 10.0:
        assert trend.crossing is None and trend.above_since is not None
        assert trend.above_since <= days[-1]
    if trend.crossing is not None:
        assert trend.crossing > days[-1]
