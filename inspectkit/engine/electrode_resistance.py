"""What an earth electrode should measure: Dwight's single rod, electrodes in parallel and
BS 7430's rods in line.

Pure functions of SI units; each docstring names its source and how sure we are of
it, in the words of docs/sources.md (as quoted, common practice, from memory).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from types import MappingProxyType

from inspectkit.engine.formula_inputs import EarthingError, positive

# ---------------------------------------------------------------- driven rod


def rod_resistance(resistivity_ohm_m: float, length_m: float, diameter_m: float) -> float:
    """Earth resistance of a single driven rod in uniform soil.

    Source: H. B. Dwight, "Calculation of resistances to ground", AIEE Trans. 1936;
    the same expression is in IEEE Std 142 (Green Book) and BS 7430 (as quoted):
    R = ρ/(2πL)·(ln(8L/d) − 1). It assumes uniform soil and a rod much longer
    than thick; it is an estimate to compare a measurement with, not a measurement.

    Args:
        resistivity_ohm_m: Soil resistivity ρ in Ω·m.
        length_m: Driven length L in m.
        diameter_m: Rod diameter d in m; must be smaller than the length.

    Returns:
        The rod's resistance to remote earth in Ω.
    """
    rho = positive("resistivity_ohm_m", resistivity_ohm_m)
    length = positive("length_m", length_m)
    return rho / (2 * math.pi * length) * _rod_shape(length, diameter_m)


def _rod_shape(length: float, diameter_m: float) -> float:
    """Dwight's shape term ln(8L/d) − 1, refusing a diameter that is not a rod's."""
    diameter = positive("diameter_m", diameter_m)
    if diameter >= length:
        raise EarthingError(
            f"diameter_m ({diameter:g} m) must be smaller than length_m ({length:g} m); "
            "the formula is for a rod, not a plate or a pit (check the units: mm or m?)"
        )
    return math.log(8 * length / diameter) - 1


# ---------------------------------------------------------------- electrodes in parallel


def parallel_resistance(resistances: Sequence[float], spacing_factor: float = 1.0) -> float:
    """Combined resistance of electrodes bonded together.

    Ideal parallel combination 1/Σ(1/Rᵢ), multiplied by a spacing (coupling)
    factor of 1 or more: electrodes closer than about twice their length share
    the same soil and lower the total less than the ideal (common practice; see
    `rods_in_line_spacing_factor` for one way to estimate the factor).

    Args:
        resistances: Each electrode's own resistance in Ω.
        spacing_factor: 1 for electrodes far apart; more when they are close.

    Returns:
        The combined resistance in Ω.
    """
    if len(resistances) == 0:
        raise EarthingError("resistances is empty; give each electrode's resistance in Ω")
    values = [positive(f"resistances[{i}]", r) for i, r in enumerate(resistances)]
    factor = positive("spacing_factor", spacing_factor)
    if factor < 1:
        raise EarthingError(
            f"spacing_factor must be 1 or more (got {factor!r}); close electrodes never "
            "combine to less than the ideal parallel value"
        )
    return factor / sum(1 / r for r in values)


#: λ for n equal rods equally spaced in a straight line (BS 7430 table for rods in
#: line; values from memory). With equal currents λ would be (2/n)·Σ(n−k)/k; the
#: table sits a little below that because end rods carry more current.
RODS_IN_LINE_LAMBDA: Mapping[int, float] = MappingProxyType(
    {2: 1.00, 3: 1.66, 4: 2.15, 5: 2.54, 6: 2.87, 7: 3.15, 8: 3.39, 9: 3.61, 10: 3.81}
)


def rods_in_line_spacing_factor(
    n: int, spacing_m: float, length_m: float, diameter_m: float = 0.016
) -> float:
    """Spacing factor F for n equal rods in a straight line, so that R_total = F·R/n.

    Source: BS 7430 method for rods in line, from memory: R_total = R·(1 + λ·α)/n,
    α = ρ/(2π·R·s), λ from `RODS_IN_LINE_LAMBDA`. With R from Dwight's formula
    (`rod_resistance`) ρ cancels: α = L / (s·(ln(8L/d) − 1)). Meant for spacing
    at least the rod length; at closer spacing it understates the coupling.

    Args:
        n: Number of rods, 1 to 10.
        spacing_m: Distance s between adjacent rods in m.
        length_m: Driven length L of each rod in m.
        diameter_m: Rod diameter d in m (16 mm, a common rod, by default).

    Returns:
        F = 1 + λ·α, at least 1; pass it to `parallel_resistance`.
    """
    if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= max(RODS_IN_LINE_LAMBDA):
        raise EarthingError(
            f"n must be a whole number of rods from 1 to {max(RODS_IN_LINE_LAMBDA)} "
            f"(got {n!r}); the table goes no further"
        )
    spacing = positive("spacing_m", spacing_m)
    length = positive("length_m", length_m)
    shape = _rod_shape(length, diameter_m)
    if n == 1:
        return 1.0
    alpha = length / (spacing * shape)
    return 1 + RODS_IN_LINE_LAMBDA[n] * alpha
