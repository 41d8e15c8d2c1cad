"""Readings as people type them (`180 mΩ`, `0,18`, `OL`) turned into SI values, and back.

An inspector types what the instrument shows, in whatever unit it shows, often
with gloves on. This module accepts the usual spellings and refuses anything it
could misread, because a reading stored wrong by a factor of 1000 passes or
fails an electrode for the wrong reason.

Decisions, so that nobody has to guess:

- A bare number is in the quantity's base unit: `12` is 12 Ω for an earth
  resistance and 12 Ω·m for a soil resistivity.
- A dot is always a decimal point (`1.234` is one point two three four).
- A single comma is a decimal comma (`0,18`) unless it could just as well be a
  thousands separator: `1,234` (comma, then exactly three digits, after a
  non-zero whole part) is refused, as is any number holding both a comma and a
  dot (`1,234.5`, `1.234,5`) or several of either. Type `1234.5`.
- Spaces inside a number (`1 234`) are refused for the same reason.
- A bare prefix after a number applies to the base unit (`1.2k` is 1.2 kΩ),
  except a bare `m` on a soil resistivity, which could be metres or milli.
- Prefixes are case-sensitive where the SI makes them so (`mΩ` milli, `MΩ`
  mega); unit names are not (`OHM`, `Ohm`, `ohms`). `K` is taken as kilo.
- Over-range displays (`OL`, `O.L.`, `over`, `>2000`, `> 2 kΩ`) become an
  over-range reading with its bound, or no bound; never a number.
- Values above the most the record model accepts are refused here already, so
  the inspector hears about a slipped unit while still at the test joint.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from inspectkit.model import QUANTITY_MAX, Quantity

__all__ = ["Measured", "UnitError", "format_value", "parse", "unit_of"]


class UnitError(ValueError):
    """A value that cannot be read as the quantity asked for; the message says what to type."""


@dataclass(frozen=True)
class Measured:
    """A parsed reading in the SI base unit of its quantity.

    Attributes:
        value: The value in Ω, Ω·m or counts; for an over-range reading the bound
            the display was above, or None when it showed no bound (plain `OL`).
        over_range: True when the instrument showed over-range instead of a number.
    """

    value: float | None
    over_range: bool = False


# What each quantity is called in a message, and an example of what to type.
_NOUN = {
    Quantity.EARTH_ISOLATED: "an earth resistance",
    Quantity.EARTH_COMBINED: "an earth resistance",
    Quantity.CONTINUITY: "a continuity reading",
    Quantity.BONDING: "a bonding resistance",
    Quantity.SOIL_RESISTIVITY: "a soil resistivity",
    Quantity.STRIKE_COUNT: "a strike counter value",
}
_EXAMPLE = {
    Quantity.EARTH_ISOLATED: "12.5 or 12.5 Ω",
    Quantity.EARTH_COMBINED: "3.9 or 3.9 Ω",
    Quantity.CONTINUITY: "0.18 or 180 mΩ",
    Quantity.BONDING: "0.05 or 50 mΩ",
    Quantity.SOIL_RESISTIVITY: "85 or 85 Ω·m",
    Quantity.STRIKE_COUNT: "42",
}
# Look-alike characters keyboards and instruments produce, mapped to one spelling.
# Not NFKC: that would also turn a superscript "²" into a "2" and accept "1²" as 12.
_LOOKALIKES = str.maketrans(
    {
        "\u2126": "Ω",  # OHM SIGN
        "\u00b5": "μ",  # MICRO SIGN
        "\u22c5": "·",  # DOT OPERATOR
        "\u2022": "·",  # BULLET
        "\u2219": "·",  # BULLET OPERATOR
        "\u2212": "-",  # MINUS SIGN
        "\u2013": "-",  # EN DASH
        "\u00a0": " ",  # NO-BREAK SPACE
        "\u202f": " ",  # NARROW NO-BREAK SPACE
        "\u2009": " ",  # THIN SPACE
    }
)

_OVER_RANGE_WORDS = frozenset({"ol", "over", "overrange", "overload"})
_OVER_RANGE_BOUND = re.compile(r"^(?:>|over\b)\s*(?P<rest>.*)$", re.IGNORECASE)

# A number as typed: digits with at most some dots and commas (checked afterwards),
# an optional exponent, then whatever follows is the unit.
_NUMBER = re.compile(
    r"^(?P<sign>[+-])?\s*(?P<digits>[0-9.,]*[0-9][0-9.,]*)(?:[eE](?P<exp>[+-]?[0-9]{1,3})(?![0-9]))?\s*(?P<unit>.*)$"
)

# Powers of ten, so that `180 mΩ` is read as float("180e-3"), exactly like `0.18`.
_PREFIX_EXPONENTS = {
    "micro": -6,
    "milli": -3,
    "kilo": 3,
    "kil": 3,  # kilohm
    "mega": 6,
    "meg": 6,  # megohm
    "μ": -6,
    "u": -6,
    "m": -3,
    "k": 3,
    "K": 3,
    "M": 6,
}
# Word prefixes in any case, symbol prefixes exactly; then ohm; then an optional metre.
_UNIT = re.compile(
    r"^(?P<prefix>(?i:micro|milli|kilo|kil|mega|meg)|[μumkKM])?"
    r"(?P<ohm>(?i:Ω|ω|ohms?))?"
    r"(?:\s*[·.*×\-]?\s*(?P<metre>(?i:m|metres?|meters?)))?$"
)
_COUNT_WORDS = frozenset({"", "count", "counts", "strike", "strikes"})


def unit_of(quantity: Quantity) -> str:
    """The unit a quantity's values are stored and shown in: `Ω`, `Ω·m` or `count`."""
    return quantity.unit


def parse(text: str, quantity: Quantity) -> Measured:
    """Read what an inspector typed as a value of `quantity` in its SI base unit.

    Args:
        text: What was typed, e.g. `0,18`, `180 mΩ`, `2.3 kΩ`, `85 ohm-m`, `OL`, `> 2 kΩ`.
        quantity: What the reading measures; it decides the expected unit.

    Returns:
        The value in Ω, Ω·m or counts, or an over-range reading with its bound.

    Raises:
        UnitError: The text is empty, not a number, negative, ambiguous, in a unit
            that does not fit the quantity, or beyond what the quantity can be.
    """
    if not isinstance(text, str):
        raise UnitError(f"{text!r} is not text; type the reading, e.g. {_EXAMPLE[quantity]}")
    typed = text.strip()
    cleaned = " ".join(typed.translate(_LOOKALIKES).split())
    if not cleaned:
        hint = "" if quantity is Quantity.STRIKE_COUNT else ", or OL for over-range"
        raise UnitError(
            f"nothing typed; type {_NOUN[quantity]}, e.g. {_EXAMPLE[quantity]}{hint}"
        )
    over_range_word = re.sub(r"[\s.\-]", "", cleaned).lower() in _OVER_RANGE_WORDS
    bound = None if over_range_word else _OVER_RANGE_BOUND.match(cleaned)
    if (over_range_word or bound) and quantity is Quantity.STRIKE_COUNT:
        raise UnitError(
            f"{typed!r}: a strike counter cannot be over-range; type the number it shows"
        )
    if over_range_word:
        return Measured(None, over_range=True)
    if bound:
        if not bound.group("rest"):
            raise UnitError(
                f"{typed!r} gives no bound after '>'; type e.g. > 2000, or OL if none is shown"
            )
        return Measured(_parse_value(bound.group("rest"), typed, quantity), over_range=True)
    return Measured(_parse_value(cleaned, typed, quantity))


def _parse_value(cleaned: str, typed: str, quantity: Quantity) -> float:
    """One number with its unit, checked against the quantity; `typed` is quoted in messages."""
    match = _NUMBER.match(cleaned)
    if match is None:
        raise UnitError(
            f"{typed!r} is not a number; type {_NOUN[quantity]}, e.g. {_EXAMPLE[quantity]}"
        )
    if match.group("sign") == "-":
        raise UnitError(
            f"{typed!r} is negative; {_NOUN[quantity]} is never below zero: "
            "check the sign, or the leads' polarity, and type the value without a minus"
        )
    digits = _read_digits(match.group("digits"), typed)
    exponent = int(match.group("exp") or 0)
    unit = match.group("unit")
    if unit[:1].isdigit():
        raise UnitError(
            f"{typed!r} has a space inside the number; type it without thousands "
            "separators, e.g. 1234.5"
        )
    if quantity is Quantity.STRIKE_COUNT:
        _check_count(match, typed)
    else:
        exponent += _unit_exponent(unit, typed, quantity)
    value = float(f"{digits}e{exponent}")
    if not math.isfinite(value):
        raise UnitError(f"{typed!r} is not a finite number; type e.g. {_EXAMPLE[quantity]}")
    maximum = QUANTITY_MAX[quantity]
    if value > maximum:
        raise UnitError(
            f"{typed!r} is above {format_value(maximum, quantity)}, more than "
            f"{_NOUN[quantity]} can plausibly be; check the unit (kΩ or Ω?)"
        )
    return value


def _read_digits(digits: str, typed: str) -> str:
    """Digits with one decimal point at most, as float() reads them; refuse thousands marks."""
    commas, dots = digits.count(","), digits.count(".")
    fix = "type the number with one decimal separator and no thousands separator, e.g. 1234.5"
    if commas and dots:
        raise UnitError(f"{typed!r} mixes ',' and '.'; {fix}")
    if commas > 1 or dots > 1:
        raise UnitError(f"{typed!r} has more than one separator; {fix}")
    if commas:
        whole, fraction = digits.split(",")
        if len(fraction) == 3 and whole.strip("0"):
            raise UnitError(
                f"{typed!r} could be {whole}.{fraction} or {whole}{fraction}; "
                f"type {whole}.{fraction} or {whole}{fraction}"
            )
        digits = f"{whole}.{fraction}"
    return digits


def _check_count(match: re.Match[str], typed: str) -> None:
    """A strike counter shows a whole number and has no unit."""
    unit = match.group("unit")
    if unit.lower() not in _COUNT_WORDS:
        raise UnitError(
            f"{typed!r}: a strike counter value is a plain whole number with no unit; "
            "type the digits it shows, e.g. 42"
        )
    if match.group("exp") or not match.group("digits").isdigit():
        raise UnitError(
            f"{typed!r}: a strike counter value is a whole number; "
            "type the digits it shows, e.g. 42"
        )


def _unit_exponent(unit: str, typed: str, quantity: Quantity) -> int:
    """The power of ten from the typed unit to the quantity's base unit, or a refusal saying why."""
    resistivity = quantity is Quantity.SOIL_RESISTIVITY
    match = _UNIT.match(unit)
    if match is None:
        raise UnitError(
            f"{typed!r} has a unit {unit!r} that is not one of Ω or Ω·m with m, k or M; "
            f"{_NOUN[quantity]} is in {quantity.unit} (e.g. {_EXAMPLE[quantity]})"
        )
    prefix, ohm, metre = match.group("prefix"), match.group("ohm"), match.group("metre")
    if ohm is None and metre is not None:
        raise UnitError(
            f"{typed!r} reads as metres, a length; "
            f"{_NOUN[quantity]} is in {quantity.unit} (e.g. {_EXAMPLE[quantity]})"
        )
    exponent = 0 if prefix is None else _PREFIX_EXPONENTS[_prefix_key(prefix)]
    if ohm is None:
        if resistivity and prefix == "m":
            raise UnitError(
                f"{typed!r}: 'm' could mean metres or milli; "
                "type the unit in full, e.g. 85 Ω·m (or 0.085 for milli)"
            )
        return exponent
    if metre is not None and not resistivity:
        raise UnitError(
            f"{typed!r} is a soil resistivity unit; "
            f"{_NOUN[quantity]} is in Ω (e.g. {_EXAMPLE[quantity]})"
        )
    if metre is None and resistivity:
        raise UnitError(
            f"{typed!r} is a resistance unit; a soil resistivity is in Ω·m "
            f"(e.g. {_EXAMPLE[quantity]}); if it is the Wenner reading R, "
            "work out ρ = 2π·a·R first"
        )
    return exponent


def _prefix_key(prefix: str) -> str:
    """Word prefixes are matched in any case; symbol prefixes exactly."""
    return prefix.lower() if len(prefix) > 1 else prefix


# Display prefixes for resistances, smallest first: (lower bound in Ω, factor, symbol).
_RESISTANCE_PREFIXES = (
    (0.0, 1e-6, "µΩ"),
    (1e-3, 1e-3, "mΩ"),
    (1.0, 1.0, "Ω"),
    (1e3, 1e3, "kΩ"),
    (1e6, 1e6, "MΩ"),
)
#: Significant digits shown by default: enough that `parse(format_value(x))` gives
#: back x within 5e-12 relative, while a value as typed (0.18) shows as typed.
PRECISE_DIGITS = 12


def format_value(
    value: float | None,
    quantity: Quantity,
    over_range: bool = False,
    *,
    digits: int | None = None,
) -> str:
    """Show a value the way an inspector would write it, with a prefix that suits its size.

    Resistances take µΩ, mΩ, Ω, kΩ or MΩ so that the number sits between 1 and 1000;
    soil resistivity stays in Ω·m as the trade writes it (`3000 Ω·m`); strike counts
    are plain whole numbers. Over-range shows as `> 2 kΩ`, or `OL` with no bound.

    Args:
        value: The value in the quantity's SI base unit, or the over-range bound.
        quantity: What the value measures.
        over_range: The instrument showed over-range; `value` is its bound or None.
        digits: Significant digits for display of a computed result (e.g. 3 gives
            `33.1 Ω`). By default up to 12, so the text parses back to the same
            value within 1e-9 relative; trailing zeros are never shown.

    Returns:
        The text, e.g. `180 mΩ`, `2.3 kΩ`, `85 Ω·m`, `42`, `> 2 kΩ`, `OL`.

    Raises:
        UnitError: No value where one is needed, a negative or non-finite value, a
            strike count that is not whole, or digits below 1.
    """
    if over_range:
        return "OL" if value is None else f"> {format_value(value, quantity, digits=digits)}"
    if value is None:
        raise UnitError(f"no value to show for {_NOUN[quantity]}; give one, or over_range=True")
    if not math.isfinite(value) or value < 0:
        raise UnitError(f"{value!r} cannot be shown as {_NOUN[quantity]}; it must be finite, ≥ 0")
    if digits is not None and digits < 1:
        raise UnitError(f"digits={digits} shows nothing; give 1 or more significant digits")
    if quantity is Quantity.STRIKE_COUNT:
        if value != int(value):
            raise UnitError(f"{value!r} is not a whole number; a strike count is whole")
        return str(int(value))
    sig = PRECISE_DIGITS if digits is None else digits
    if quantity is Quantity.SOIL_RESISTIVITY:
        return f"{_significant(value, sig)} Ω·m"
    if value == 0:
        return "0 Ω"
    factor, symbol = next(
        (f, s) for low, f, s in reversed(_RESISTANCE_PREFIXES) if value >= low
    )
    return f"{_significant(value / factor, sig)} {symbol}"


def _significant(number: float, sig: int) -> str:
    """`number` rounded to `sig` significant digits, in plain decimals, trailing zeros dropped."""
    if number == 0:
        return "0"
    decimals = sig - 1 - math.floor(math.log10(abs(number)))
    if decimals <= 0:
        return f"{round(number, decimals):.0f}"
    return f"{number:.{decimals}f}".rstrip("0").rstrip(".")


# ------------------------------------------------------------------ lengths

#: Metres per unit of length as people type them; an inch and a foot are exact by
#: definition (international yard and pound agreement, 1959).
_METRES_PER = {
    "mm": 1e-3, "millimetre": 1e-3, "millimetres": 1e-3, "millimeter": 1e-3, "millimeters": 1e-3,
    "cm": 1e-2, "centimetre": 1e-2, "centimetres": 1e-2, "centimeter": 1e-2, "centimeters": 1e-2,
    "m": 1.0, "metre": 1.0, "metres": 1.0, "meter": 1.0, "meters": 1.0,
    "km": 1e3,
    "in": 0.0254, "inch": 0.0254, "inches": 0.0254, '"': 0.0254,
    "ft": 0.3048, "foot": 0.3048, "feet": 0.3048, "'": 0.3048,
}  # fmt: skip
# A length as typed: a number, a fraction (5/8) or a whole and a fraction (1 1/2), a unit.
_LENGTH = re.compile(
    r"^(?:(?P<whole>[0-9]+)\s+)?(?P<number>[0-9.,]*[0-9][0-9.,]*)"
    r"(?:\s*/\s*(?P<denominator>[0-9]+))?\s*(?P<unit>.*)$"
)


def parse_length(text: str, name: str = "length") -> float:
    """Read a length as typed (`3 m`, `10 ft`, `5/8 in`, `16 mm`, `2,5`) in metres.

    A bare number is in metres. Used for rod lengths and diameters, probe spacings
    and distances, so that `16` meant as millimetres is caught by the formula's
    own range check rather than guessed at here.

    Args:
        text: What was typed.
        name: The input's name, for the message (e.g. `--diameter`).

    Returns:
        The length in m, above zero.

    Raises:
        UnitError: empty, not a number, negative, zero, or a unit that is not a length.
    """
    typed = text.strip() if isinstance(text, str) else ""
    cleaned = " ".join(typed.translate(_LOOKALIKES).split())
    example = "e.g. 3 m, 10 ft, 5/8 in or 16 mm"
    if not cleaned:
        raise UnitError(f"{name}: nothing typed; type a length, {example}")
    if cleaned.startswith("-"):
        raise UnitError(f"{name}: {typed!r} is negative; a length is above zero")
    match = _LENGTH.match(cleaned)
    if match is None:
        raise UnitError(f"{name}: {typed!r} is not a length; type {example}")
    try:
        number = float(_read_digits(match.group("number"), typed))
    except UnitError as exc:
        raise UnitError(f"{name}: {exc}") from None
    if match.group("denominator"):
        denominator = int(match.group("denominator"))
        if denominator == 0:
            raise UnitError(f"{name}: {typed!r} divides by zero; type e.g. 5/8 in")
        number /= denominator
    if match.group("whole"):
        if not match.group("denominator"):
            raise UnitError(f"{name}: {typed!r} has a space inside the number; type e.g. 1.5 m")
        number += int(match.group("whole"))
    unit = match.group("unit").strip().rstrip(".")
    factor = 1.0 if unit == "" else _METRES_PER.get(unit if unit in "'\"" else unit.lower())
    if factor is None:
        raise UnitError(f"{name}: {typed!r} has a unit {unit!r} that is not a length; {example}")
    metres = number * factor
    if not math.isfinite(metres) or metres <= 0:
        raise UnitError(f"{name}: {typed!r} is not above zero; a length is above zero")
    return metres


def parse_fraction(text: str, name: str) -> float:
    """Read a share as typed, `61.8 %` or `0.618`, as a fraction (0.618).

    A number followed by `%` is a percentage; a bare number of 1 or less is a
    fraction, and a bare number above 1 is taken as a percentage (nobody means
    a probe 52 times the current probe's distance away).

    Raises:
        UnitError: not a number, or not between 0 and 100 %.
    """
    typed = text.strip() if isinstance(text, str) else ""
    percent = typed.endswith("%")
    digits = typed.removesuffix("%").strip()
    if not re.fullmatch(r"[0-9.,]*[0-9][0-9.,]*", digits):
        raise UnitError(f"{name}: {typed!r} is not a share; type e.g. 61.8 % or 0.618")
    value = float(_read_digits(digits, typed))
    if percent or value > 1:
        value /= 100
    if not 0 < value < 1:
        raise UnitError(f"{name}: {typed!r} must lie between 0 and 100 %")
    return value
