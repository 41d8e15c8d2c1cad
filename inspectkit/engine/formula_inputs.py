"""The checks every earthing formula makes on its inputs, and the one error they raise.

A formula applied outside the domain it holds in still returns a number, and that
number would be believed: so each refuses such an input, naming the argument.
The formulas take and return SI units (m, Ω, Ω·m, kA).
"""

from __future__ import annotations

import math


class EarthingError(ValueError):
    """An input outside the domain of an earthing formula; the message names the argument."""


def positive(name: str, value: float) -> float:
    """Refuse a value that is not a finite number above zero."""
    if not isinstance(value, int | float) or not math.isfinite(value) or value <= 0:
        raise EarthingError(f"{name} must be a finite number above zero (got {value!r})")
    return float(value)


def non_negative(name: str, value: float) -> float:
    """Refuse a value that is not a finite number of zero or more."""
    if not isinstance(value, int | float) or not math.isfinite(value) or value < 0:
        raise EarthingError(f"{name} must be a finite number of zero or more (got {value!r})")
    return float(value)
