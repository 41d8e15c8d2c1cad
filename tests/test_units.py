"""Tests for reading typed values with units, and showing them again."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from inspectkit.model import MAX_COUNT, Quantity
from inspectkit.units import Measured, UnitError, format_value, parse, unit_of

C = Quantity.CONTINUITY
E = Quantity.EARTH_ISOLATED
B = Quantity.BONDING
S = Quantity.SOIL_RESISTIVITY
N = Quantity.STRIKE_COUNT
RESISTANCES = (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED, C, B)


# SI prefixes (BIPM, The International System of Units, 9th ed., Table 7): m = 1e-3,
# µ = 1e-6, k = 1e3, M = 1e6.
@pytest.mark.parametrize(
    ("typed", "quantity", "expected"),
    [
        ("0.18", C, 0.18),
        ("180 mΩ", C, 0.18),
        ("180mΩ", C, 0.18),
        ("180mohm", C, 0.18),
        ("180 milliohm", C, 0.18),
        ("180 mOhm", C, 0.18),
        ("0,18", C, 0.18),
        ("0,180", C, 0.18),
        (",5", C, 0.5),
        ("1,5", C, 1.5),
        ("12,3456", E, 12.3456),
        ("2.3 kΩ", E, 2300.0),
        ("2.3kohm", E, 2300.0),
        ("2.3 kilohm", E, 2300.0),
        ("2.3 K", E, 2300.0),
        ("12 ohm", E, 12.0),
        ("12 ohms", E, 12.0),
        ("12 OHM", E, 12.0),
        ("12", E, 12.0),
        ("+12", E, 12.0),
        ("  12 Ω  ", E, 12.0),
        ("1.2k", E, 1200.0),
        ("180m", C, 0.18),
        ("0.5 MΩ", E, 500_000.0),
        ("0.5 Mohm", E, 500_000.0),
        ("0.5 megohm", E, 500_000.0),
        ("0.5M", E, 500_000.0),
        ("12 \u2126", E, 12.0),  # OHM SIGN
        ("12 \u03a9", E, 12.0),  # GREEK CAPITAL OMEGA
        ("12\u00a0Ω", E, 12.0),  # no-break space
        ("50 µΩ", C, 50e-6),  # MICRO SIGN
        ("50 \u03bcΩ", C, 50e-6),  # GREEK SMALL MU
        ("50 uohm", C, 50e-6),
        ("50 uΩ", C, 50e-6),
        ("1.5e-3", C, 0.0015),
        ("1.5E3", E, 1500.0),
        ("5.", E, 5.0),
        ("0", C, 0.0),
        ("85 Ω·m", S, 85.0),
        ("85 \u2126\u22c5m", S, 85.0),  # OHM SIGN, DOT OPERATOR
        ("85 Ωm", S, 85.0),
        ("85 Ω.m", S, 85.0),
        ("85 Ω-m", S, 85.0),
        ("85 ohm-m", S, 85.0),
        ("85 ohm m", S, 85.0),
        ("85 ohm·m", S, 85.0),
        ("85 ohm-metre", S, 85.0),
        ("85 ohm meters", S, 85.0),
        ("85", S, 85.0),
        ("1,2k", S, 1200.0),
        ("2.5 kΩ·m", S, 2500.0),
        ("42", N, 42.0),
        ("000042", N, 42.0),
        ("42 counts", N, 42.0),
        ("0", N, 0.0),
    ],
)
def test_typed_values_become_si(typed: str, quantity: Quantity, expected: float) -> None:
    measured = parse(typed, quantity)
    assert measured == Measured(expected)
    assert measured.value == pytest.approx(expected, rel=1e-15)


def test_prefix_is_read_as_exactly_as_the_decimal() -> None:
    # 180 mΩ must be the very float 0.18 is, or equal readings would compare unequal.
    assert parse("180 mΩ", C).value == parse("0.18", C).value == 0.18
    assert parse("50 µΩ", C).value == 5e-05


@pytest.mark.parametrize(
    ("typed", "quantity", "bound"),
    [
        ("OL", E, None),
        ("ol", E, None),
        ("O.L.", E, None),
        ("O.L", E, None),
        ("OL.", E, None),
        ("over", E, None),
        ("OVER", E, None),
        ("over range", E, None),
        ("over-range", C, None),
        ("overload", B, None),
        (">2000", E, 2000.0),
        ("> 2000", E, 2000.0),
        ("> 2 kΩ", E, 2000.0),
        (">2k", E, 2000.0),
        ("over 2 kΩ", E, 2000.0),
        ("> 200 mΩ", C, 0.2),
        ("> 20000 Ω·m", S, 20000.0),
        ("OL", S, None),
    ],
)
def test_over_range_keeps_its_bound_not_a_number(
    typed: str, quantity: Quantity, bound: float | None
) -> None:
    assert parse(typed, quantity) == Measured(bound, over_range=True)


@pytest.mark.parametrize(
    ("typed", "quantity", "says"),
    [
        ("", C, "nothing typed"),
        ("   ", C, "nothing typed"),
        ("85 Ω·m", C, "is a soil resistivity unit; a continuity reading is in Ω (e.g. 0.18"),
        ("85 ohm-m", E, "is a soil resistivity unit; an earth resistance is in Ω"),
        ("85 Ω", S, "is a resistance unit; a soil resistivity is in Ω·m"),
        ("85 kohm", S, "is a resistance unit"),
        ("85 m", S, "'m' could mean metres or milli"),
        ("3 km", E, "reads as metres"),
        ("-0.5", C, "is negative"),
        ("\u22120.5", C, "is negative"),  # MINUS SIGN
        ("> -5", E, "is negative"),
        ("abc", C, "is not a number"),
        ("nan", C, "is not a number"),
        ("inf", C, "is not a number"),
        ("-inf", C, "is not a number"),
        ("1e999", E, "is not a finite number"),
        ("Ω", E, "is not a number"),
        ("1,234", E, "could be 1.234 or 1234"),
        ("12,500", S, "could be 12.500 or 12500"),
        ("1,234.5", E, "mixes ',' and '.'"),
        ("1.234,5", E, "mixes ',' and '.'"),
        ("1,234,567", S, "more than one separator"),
        ("1.2.3", E, "more than one separator"),
        ("1 234", E, "space inside the number"),
        ("12 V", E, "has a unit 'V'"),
        ("12 Ω/m", E, "has a unit"),
        ("2 MΩ", E, "above 1 MΩ"),
        (">", E, "no bound"),
        ("> OL", E, "is not a number"),
        ("4.5", N, "whole number"),
        ("1e3", N, "whole number"),
        ("42 Ω", N, "no unit"),
        ("OL", N, "cannot be over-range"),
        ("> 10", N, "cannot be over-range"),
        ("1234567", N, "above 999999"),
    ],
)
def test_refusals_say_what_is_wrong_and_what_to_type(
    typed: str, quantity: Quantity, says: str
) -> None:
    with pytest.raises(UnitError) as caught:
        parse(typed, quantity)
    message = str(caught.value)
    assert says in message
    if typed.strip():
        assert repr(typed.strip()) in message or typed.strip() in message


def test_refusals_suggest_something_to_type() -> None:
    for typed, quantity in [("abc", C), ("85 Ω·m", C), ("85 Ω", S), ("", E), ("1,234", E)]:
        with pytest.raises(UnitError, match=r"e\.g\.|type"):
            parse(typed, quantity)


def test_unit_error_is_a_value_error() -> None:
    assert issubclass(UnitError, ValueError)


def test_non_text_is_refused() -> None:
    with pytest.raises(UnitError):
        parse(0.18, C)  # type: ignore[arg-type]


def test_unit_of() -> None:
    assert [unit_of(q) for q in (E, C, B, S, N)] == ["Ω", "Ω", "Ω", "Ω·m", "count"]


@pytest.mark.parametrize(
    ("value", "quantity", "shown"),
    [
        (0.18, C, "180 mΩ"),
        (0.0015, C, "1.5 mΩ"),
        (50e-6, C, "50 µΩ"),
        (0.0, C, "0 Ω"),
        (1.0, E, "1 Ω"),
        (12.5, E, "12.5 Ω"),
        (999.0, E, "999 Ω"),
        (1000.0, E, "1 kΩ"),
        (2300.0, E, "2.3 kΩ"),
        (500_000.0, E, "500 kΩ"),
        (1e6, E, "1 MΩ"),
        (85.0, S, "85 Ω·m"),
        (3000.0, S, "3000 Ω·m"),
        (0.2, S, "0.2 Ω·m"),
        (42.0, N, "42"),
    ],
)
def test_format_uses_a_sensible_prefix(value: float, quantity: Quantity, shown: str) -> None:
    assert format_value(value, quantity) == shown
    assert parse(shown, quantity).value == pytest.approx(value, rel=1e-12)


def test_format_of_a_computed_value() -> None:
    assert format_value(33.110747, E) == "33.110747 Ω"
    assert format_value(33.110747, E, digits=3) == "33.1 Ω"
    assert format_value(3012.4, S, digits=3) == "3010 Ω·m"
    assert format_value(0.123456, C, digits=2) == "120 mΩ"


def test_format_over_range() -> None:
    assert format_value(2000.0, E, over_range=True) == "> 2 kΩ"
    assert format_value(None, E, over_range=True) == "OL"
    assert parse(format_value(2000.0, E, over_range=True), E) == Measured(2000.0, True)
    assert parse(format_value(None, C, over_range=True), C) == Measured(None, True)


@pytest.mark.parametrize(
    ("value", "quantity", "kwargs"),
    [
        (None, E, {}),
        (-1.0, E, {}),
        (math.nan, E, {}),
        (math.inf, S, {}),
        (4.5, N, {}),
        (1.0, E, {"digits": 0}),
    ],
)
def test_format_refuses_what_it_cannot_show(
    value: float | None, quantity: Quantity, kwargs: dict[str, int]
) -> None:
    with pytest.raises(UnitError):
        format_value(value, quantity, **kwargs)


def _relative_gap(a: float, b: float) -> float:
    return abs(a - b) / max(abs(a), abs(b), 1e-300)


@given(
    st.sampled_from(RESISTANCES),
    st.one_of(
        st.just(0.0),
        st.floats(min_value=1e-9, max_value=1e6, allow_nan=False, allow_infinity=False),
    ),
)
def test_format_then_parse_gives_the_value_back_resistance(
    quantity: Quantity, value: float
) -> None:
    back = parse(format_value(value, quantity), quantity)
    assert not back.over_range
    assert back.value is not None
    assert _relative_gap(back.value, value) <= 1e-9


@given(st.floats(min_value=1e-6, max_value=1e6, allow_nan=False, allow_infinity=False))
def test_format_then_parse_gives_the_value_back_resistivity(value: float) -> None:
    back = parse(format_value(value, S), S).value
    assert back is not None
    assert _relative_gap(back, value) <= 1e-9


@given(st.integers(min_value=0, max_value=MAX_COUNT))
def test_format_then_parse_gives_the_count_back(count: int) -> None:
    assert parse(format_value(float(count), N), N) == Measured(float(count))


@given(
    st.sampled_from(RESISTANCES),
    st.floats(min_value=1e-6, max_value=1e6, allow_nan=False, allow_infinity=False),
)
def test_over_range_bound_survives_a_round_trip(quantity: Quantity, bound: float) -> None:
    back = parse(format_value(bound, quantity, over_range=True), quantity)
    assert back.over_range
    assert back.value is not None
    assert _relative_gap(back.value, bound) <= 1e-9


@given(st.text(), st.sampled_from(list(Quantity)))
def test_any_text_gives_a_measurement_or_a_unit_error(text: str, quantity: Quantity) -> None:
    try:
        measured = parse(text, quantity)
    except UnitError:
        return
    if measured.value is not None:
        assert math.isfinite(measured.value)
        assert measured.value >= 0


@given(
    st.text(alphabet="0123456789.,+-eEΩωmkKMuµ·  ohOHlLrv>", max_size=12),
    st.sampled_from(list(Quantity)),
)
def test_number_like_text_gives_a_measurement_or_a_unit_error(
    text: str, quantity: Quantity
) -> None:
    try:
        parse(text, quantity)
    except UnitError:
        pass
