"""Lengths and shares as people type them: `10 ft`, `5/8 in`, `16 mm`, `61.8 %`."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from inspectkit.units import UnitError, parse_fraction, parse_length


@pytest.mark.parametrize(
    ("typed", "metres"),
    [
        # The inch is 25.4 mm and the foot 0.3048 m exactly (international yard and
        # pound agreement, 1959).
        ("10 ft", 3.048),
        ("8'", 2.4384),
        ("5/8 in", 0.015875),
        ('3/4"', 0.01905),
        ("1 1/2 in", 0.0381),
        # SI prefixes (SI Brochure, BIPM, 9th ed., Table 7).
        ("16 mm", 0.016),
        ("2.5 cm", 0.025),
        ("0.2 km", 200.0),
        ("3 m", 3.0),
        ("3m", 3.0),
        ("2,5", 2.5),
        ("6 metres", 6.0),
        ("12", 12.0),
    ],
)
def test_lengths_in_metres(typed: str, metres: float) -> None:
    assert parse_length(typed) == pytest.approx(metres, rel=1e-12)


@pytest.mark.parametrize(
    ("typed", "says"),
    [
        ("", "nothing typed"),
        ("-3 m", "negative"),
        ("0", "not above zero"),
        ("3 kg", "not a length"),
        ("1 5", "space inside the number"),
        ("1/0 in", "divides by zero"),
        ("1,234", "could be 1.234 or 1234"),
        ("three", "not a length"),
    ],
)
def test_lengths_refused_naming_the_input(typed: str, says: str) -> None:
    with pytest.raises(UnitError, match=says) as caught:
        parse_length(typed, "--length")
    assert str(caught.value).startswith("--length: ")


@given(st.floats(min_value=1e-3, max_value=1e4, allow_nan=False))
def test_millimetres_and_metres_agree(metres: float) -> None:
    # 1 mm = 10⁻³ m (SI Brochure, Table 7); typed back as shown it reads the same.
    assert parse_length(f"{metres * 1000!r} mm") == pytest.approx(parse_length(f"{metres!r}"))


@pytest.mark.parametrize(
    ("typed", "share"), [("61.8 %", 0.618), ("52%", 0.52), ("0.72", 0.72), ("72", 0.72)]
)
def test_shares(typed: str, share: float) -> None:
    assert parse_fraction(typed, "position") == pytest.approx(share)


@pytest.mark.parametrize("typed", ["0 %", "100 %", "120%", "-5 %", "half"])
def test_shares_outside_the_traverse_are_refused(typed: str) -> None:
    with pytest.raises(UnitError, match="position"):
        parse_fraction(typed, "position")
