"""Earthing formulas an inspector uses on site: rods, Wenner, fall-of-potential, IEC 62305.

Pure functions: SI units in (m, Ω, Ω·m, kA), SI units out. Every function refuses
inputs outside the domain its formula holds in, naming the argument, because a
formula applied outside it still returns a number and that number would be
believed. Each docstring names its source and how sure we are of it, in the words
of docs/sources.md: as quoted (a standard's clause or table), common practice, or
from memory.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType
from typing import Literal

from inspectkit.model import ProtectionLevel
from inspectkit.wording import counted

L1, L2, L3, L4 = ProtectionLevel.I, ProtectionLevel.II, ProtectionLevel.III, ProtectionLevel.IV


class EarthingError(ValueError):
    """An input outside the domain of an earthing formula; the message names the argument."""


def _positive(name: str, value: float) -> float:
    """Refuse a value that is not a finite number above zero."""
    if not isinstance(value, int | float) or not math.isfinite(value) or value <= 0:
        raise EarthingError(f"{name} must be a finite number above zero (got {value!r})")
    return float(value)


def _non_negative(name: str, value: float) -> float:
    """Refuse a value that is not a finite number of zero or more."""
    if not isinstance(value, int | float) or not math.isfinite(value) or value < 0:
        raise EarthingError(f"{name} must be a finite number of zero or more (got {value!r})")
    return float(value)


def _level(level: ProtectionLevel | str) -> ProtectionLevel:
    """The protection level, given as the enum or its name (`"III"`)."""
    try:
        return ProtectionLevel(level)
    except ValueError:
        raise EarthingError(
            f"level must be a protection level I, II, III or IV (got {level!r})"
        ) from None


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
    rho = _positive("resistivity_ohm_m", resistivity_ohm_m)
    length = _positive("length_m", length_m)
    return rho / (2 * math.pi * length) * _rod_shape(length, diameter_m)


def _rod_shape(length: float, diameter_m: float) -> float:
    """Dwight's shape term ln(8L/d) − 1, refusing a diameter that is not a rod's."""
    diameter = _positive("diameter_m", diameter_m)
    if diameter >= length:
        raise EarthingError(
            f"diameter_m ({diameter:g} m) must be smaller than length_m ({length:g} m); "
            "the formula is for a rod, not a plate or a pit (check the units: mm or m?)"
        )
    return math.log(8 * length / diameter) - 1


# ---------------------------------------------------------------- Wenner soil resistivity


def wenner_resistivity(spacing_m: float, resistance_ohm: float, depth_m: float = 0.0) -> float:
    """Apparent soil resistivity from a Wenner four-probe reading, with the probes' depth.

    Source: IEEE Std 81 (Wenner arrangement), full form from memory:
    ρ = 4π·a·R / (1 + 2a/√(a² + 4b²) − a/√(a² + b²)). With b = 0 it is the
    simple form 2π·a·R; for deep probes it tends to 4π·a·R.

    Args:
        spacing_m: Equal spacing a between adjacent probes in m.
        resistance_ohm: Reading R (potential over current) in Ω.
        depth_m: Depth b the probes are driven to in m; 0 for surface probes.

    Returns:
        The apparent resistivity ρ in Ω·m.
    """
    a = _positive("spacing_m", spacing_m)
    r = _positive("resistance_ohm", resistance_ohm)
    b = _non_negative("depth_m", depth_m)
    denominator = 1 + 2 * a / math.hypot(a, 2 * b) - a / math.hypot(a, b)
    return 4 * math.pi * a * r / denominator


def wenner_resistivity_simple(spacing_m: float, resistance_ohm: float) -> float:
    """Apparent soil resistivity ρ = 2π·a·R, for probes shallow against their spacing.

    Source: IEEE Std 81 (as quoted); valid when a > 20·b, b being the
    probes' depth. Use `wenner_resistivity` with the depth otherwise.

    Args:
        spacing_m: Equal spacing a between adjacent probes in m.
        resistance_ohm: Reading R in Ω.

    Returns:
        The apparent resistivity ρ in Ω·m.
    """
    a = _positive("spacing_m", spacing_m)
    r = _positive("resistance_ohm", resistance_ohm)
    return 2 * math.pi * a * r


# ---------------------------------------------------------------- fall-of-potential

#: Potential probe position as a fraction of the E–C distance (IEEE Std 81, as quoted).
POTENTIAL_PROBE_FRACTION = 0.618
#: Plateau check positions either side of it (common practice).
PLATEAU_FRACTIONS = (0.52, 0.72)
#: How far (fraction of the E–C distance) a reading may sit from a check position
#: and still stand for it (our default).
POSITION_TOLERANCE = 0.05


def potential_probe_distance(current_probe_distance_m: float) -> float:
    """Where to drive the potential probe: 61.8 % of the way to the current probe.

    Source: IEEE Std 81, fall-of-potential method, the 61.8 % rule (as quoted).

    Args:
        current_probe_distance_m: Distance from the electrode E to the current probe C in m.

    Returns:
        Distance from E to the potential probe P in m.
    """
    return POTENTIAL_PROBE_FRACTION * _positive(
        "current_probe_distance_m", current_probe_distance_m
    )


def current_probe_min_distance(electrode_size_m: float, factor: float = 5.0) -> float:
    """How far out the current probe must go at least, so the two resistance areas don't overlap.

    Source: common practice, at least five times the electrode's largest dimension
    (a rod's length, a ring's or grid's diagonal).

    Args:
        electrode_size_m: The electrode's largest dimension in m.
        factor: Multiple of that dimension; 5 by common practice.

    Returns:
        The least E–C distance in m.
    """
    size = _positive("electrode_size_m", electrode_size_m)
    if _positive("factor", factor) < 1:
        raise EarthingError(
            f"factor must be 1 or more (got {factor!r}); the current probe cannot sit "
            "inside the electrode's own extent"
        )
    return factor * size


@dataclass(frozen=True)
class PlateauResult:
    """Outcome of a fall-of-potential plateau check.

    Attributes:
        valid: True when the readings near 52 % and 72 % are within the tolerance
            of the 61.8 % reading, so the probes sit on the plateau.
        resistance_ohm: The value to report: the traverse at 61.8 % of E–C,
            interpolated linearly between the readings either side of it.
        low_ohm: The reading nearest 52 % (None when no reading is near enough).
        high_ohm: The reading nearest 72 % (None when no reading is near enough).
        spread: The larger deviation of those two from the 61.8 % value, as a
            fraction of it (0.09 is 9 %); None when either is missing.
        message: A sentence an inspector can act on.
    """

    valid: bool
    resistance_ohm: float
    low_ohm: float | None
    high_ohm: float | None
    spread: float | None
    message: str


def plateau_check(
    points: Sequence[tuple[float, float]],
    current_probe_distance_m: float,
    tolerance: float = 0.05,
) -> PlateauResult:
    """Check that a fall-of-potential traverse has reached the plateau, and say what to report.

    Source: IEEE Std 81 (61.8 % position, as quoted); repeating at about 52 % and
    72 % and accepting when they agree within ±5 % is common practice. A reading
    stands for a check position when it lies within 5 % of E–C of it (our default).

    Args:
        points: (distance of P from E in m, resistance in Ω) along the traverse,
            at least three, in any order, each strictly between E and C.
        current_probe_distance_m: Distance from E to the current probe C in m.
        tolerance: Accepted deviation of the 52 % and 72 % readings from the
            61.8 % value, as a fraction (0.05 is ±5 %).

    Returns:
        Whether the reading is valid, the value to report, the spread and a sentence.
    """
    c = _positive("current_probe_distance_m", current_probe_distance_m)
    if not 0 < _positive("tolerance", tolerance) < 1:
        raise EarthingError(f"tolerance must be a fraction between 0 and 1 (got {tolerance!r})")
    traverse = _checked_traverse(points, c)
    at = POTENTIAL_PROBE_FRACTION * c
    lowest, farthest = traverse[0][0], traverse[-1][0]
    if not lowest <= at <= farthest:
        raise EarthingError(
            f"points run from {_percent(lowest / c)} to {_percent(farthest / c)} of the "
            f"E–C distance; take readings either side of 61.8 % ({at:.2f} m)"
        )
    reported = _interpolate(traverse, at)
    nearest = [_nearest(traverse, fraction * c, c) for fraction in PLATEAU_FRACTIONS]
    missing = [f for f, point in zip(PLATEAU_FRACTIONS, nearest, strict=True) if point is None]
    low, high = (None if p is None else p[1] for p in nearest)
    if missing:
        where = " and ".join(f"{_percent(f)} ({f * c:.2f} m)" for f in missing)
        return PlateauResult(
            False,
            reported,
            low,
            high,
            None,
            f"no reading near {where} of the E–C distance: take one there to check the plateau",
        )
    assert low is not None and high is not None
    spread = max(abs(low - reported), abs(high - reported)) / reported
    positions = " and ".join(_percent(p[0] / c) for p in nearest if p is not None)
    if spread <= tolerance:
        message = (
            f"readings at {positions} are within {_percent(spread)} of the 61.8 % value: "
            f"on the plateau, report {reported:.3g} Ω"
        )
    else:
        message = (
            f"readings at {positions} differ from the 61.8 % value by up to {_percent(spread)} "
            f"(more than {_percent(tolerance)}): move the current probe further out and repeat"
        )
    return PlateauResult(spread <= tolerance, reported, low, high, spread, message)


def _checked_traverse(points: Sequence[tuple[float, float]], c: float) -> list[tuple[float, float]]:
    """The points sorted by distance, each checked; refuse fewer than three or any out of (0, C)."""
    if len(points) < 3:
        raise EarthingError(
            f"points holds {counted(len(points), 'reading')}; a plateau check needs at least three "
            "(about 52 %, 61.8 % and 72 % of the E–C distance)"
        )
    traverse = []
    for distance, resistance in points:
        d = _positive("points: distance", distance)
        if d >= c:
            raise EarthingError(
                f"points: distance {d:g} m is not between the electrode and the current "
                f"probe (0 to {c:g} m); check the distance or current_probe_distance_m"
            )
        traverse.append((d, _positive("points: resistance", resistance)))
    traverse.sort()
    for (d1, _), (d2, _) in zip(traverse, traverse[1:], strict=False):
        if d1 == d2:
            raise EarthingError(f"points: two readings at {d1:g} m; keep one of them")
    return traverse


def _interpolate(traverse: list[tuple[float, float]], at: float) -> float:
    """The traverse's resistance at `at`, linear between the readings either side."""
    for (d1, r1), (d2, r2) in zip(traverse, traverse[1:], strict=False):
        if d1 <= at <= d2:
            return r1 + (r2 - r1) * (at - d1) / (d2 - d1)
    raise AssertionError("caller checks that `at` lies within the traverse")


def _nearest(
    traverse: list[tuple[float, float]], target: float, c: float
) -> tuple[float, float] | None:
    """The reading nearest `target`, or None when none lies within the position tolerance."""
    point = min(traverse, key=lambda p: abs(p[0] - target))
    return point if abs(point[0] - target) <= POSITION_TOLERANCE * c + 1e-12 else None


def _percent(fraction: float) -> str:
    """A fraction as the trade writes it: 0.52 → "52 %", 0.618 → "61.8 %"."""
    return f"{100 * fraction:.1f}".removesuffix(".0") + " %"


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
    values = [_positive(f"resistances[{i}]", r) for i, r in enumerate(resistances)]
    factor = _positive("spacing_factor", spacing_factor)
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
    spacing = _positive("spacing_m", spacing_m)
    length = _positive("length_m", length_m)
    shape = _rod_shape(length, diameter_m)
    if n == 1:
        return 1.0
    alpha = length / (spacing * shape)
    return 1 + RODS_IN_LINE_LAMBDA[n] * alpha


# ---------------------------------------------------------------- IEC 62305 geometry

#: Rolling sphere radius r in m (IEC 62305-3 Table 2, as quoted).
ROLLING_SPHERE_RADIUS_M: Mapping[ProtectionLevel, float] = MappingProxyType(
    {L1: 20.0, L2: 30.0, L3: 45.0, L4: 60.0}
)
#: Mesh size of an air-termination mesh in m, square side (IEC 62305-3 Table 2, as quoted).
MESH_SIZE_M: Mapping[ProtectionLevel, float] = MappingProxyType(
    {L1: 5.0, L2: 10.0, L3: 15.0, L4: 20.0}
)
#: Typical spacing between down conductors in m (IEC 62305-3 Table 4, as quoted).
DOWN_CONDUCTOR_SPACING_M: Mapping[ProtectionLevel, float] = MappingProxyType(
    {L1: 10.0, L2: 10.0, L3: 15.0, L4: 20.0}
)
#: Minimum peak current the level intercepts, in kA (IEC 62305-1 Table 5, from memory).
MIN_PEAK_CURRENT_KA: Mapping[ProtectionLevel, float] = MappingProxyType(
    {L1: 3.0, L2: 5.0, L3: 10.0, L4: 16.0}
)
#: Highest soil resistivity Figure 2 of IEC 62305-3 covers, in Ω·m.
FIGURE_2_MAX_RESISTIVITY_OHM_M = 3000.0


def striking_distance_m(peak_current_ka: float) -> float:
    """Striking distance r = 10·I^0.65 of a downward leader with peak current I.

    Source: IEC 62305-1 (electrogeometric model, as quoted). It gives
    20.4, 28.5, 44.7 and 60.6 m for the levels' minimum currents: close to, but
    not the same as, the rounded radii of IEC 62305-3 Table 2.

    Args:
        peak_current_ka: Peak current I of the first return stroke in kA.

    Returns:
        The striking distance in m.
    """
    return 10 * _positive("peak_current_ka", peak_current_ka) ** 0.65


def min_electrode_length_l1(level: ProtectionLevel, resistivity_ohm_m: float) -> float:
    """Minimum length l1 of each type A earth electrode for a level and a soil resistivity.

    Source: IEC 62305-3 Figure 2 (key points from memory): level I 5 m up to
    500 Ω·m, then 0.03·ρ − 10 (80 m at 3000 Ω·m); level II 5 m up to 800 Ω·m,
    then 0.02·ρ − 11; levels III and IV 5 m whatever ρ. The minimum may be
    waived when the earthing resistance is below 10 Ω (clause 5.4.2.1, as quoted).

    Args:
        level: Protection level of the LPS.
        resistivity_ohm_m: Soil resistivity ρ in Ω·m, up to 3000 (the figure's range).

    Returns:
        l1 in m.
    """
    level = _level(level)
    rho = _positive("resistivity_ohm_m", resistivity_ohm_m)
    if rho > FIGURE_2_MAX_RESISTIVITY_OHM_M:
        raise EarthingError(
            f"resistivity_ohm_m {rho:g} is beyond IEC 62305-3 Figure 2, which ends at "
            f"{FIGURE_2_MAX_RESISTIVITY_OHM_M:g} Ω·m; the electrode needs a design, not a rule"
        )
    if level is L1:
        return max(5.0, 0.03 * rho - 10)
    if level is L2:
        return max(5.0, 0.02 * rho - 11)
    return 5.0


def min_electrode_length(level: ProtectionLevel, resistivity_ohm_m: float, vertical: bool) -> float:
    """Minimum length of each type A electrode: l1 laid horizontally, 0.5·l1 driven vertically.

    Source: IEC 62305-3 clause 5.4.2.1 (as quoted), with l1 from Figure 2.

    Args:
        level: Protection level of the LPS.
        resistivity_ohm_m: Soil resistivity ρ in Ω·m.
        vertical: True for a driven rod, False for a horizontal (radial) conductor.

    Returns:
        The minimum length in m.
    """
    l1 = min_electrode_length_l1(level, resistivity_ohm_m)
    return 0.5 * l1 if vertical else l1


#: ki of the separation distance formula (IEC 62305-3:2010 Table 10, as quoted).
SEPARATION_KI: Mapping[ProtectionLevel, float] = MappingProxyType(
    {L1: 0.08, L2: 0.06, L3: 0.04, L4: 0.04}
)
#: km: insulating material between the conductor and the metal part (IEC 62305-3 Table 11).
SEPARATION_KM: Mapping[str, float] = MappingProxyType({"air": 1.0, "solid": 0.5})


def separation_kc(down_conductors: int, edition: Literal["2010", "2006"] = "2010") -> float:
    """Current-sharing coefficient kc, simplified method, by number of down conductors.

    Source: IEC 62305-3:2010 Table 12 (as quoted): 1 for one, 0.66 for two, 0.44
    for three or more; the 2006 edition gave 0.5 for two.

    Args:
        down_conductors: Number of down conductors, 1 or more.
        edition: Edition of IEC 62305-3 the LPS is checked against.

    Returns:
        kc.
    """
    if isinstance(down_conductors, bool) or not isinstance(down_conductors, int):
        raise EarthingError(f"down_conductors must be a whole number (got {down_conductors!r})")
    if down_conductors < 1:
        raise EarthingError(f"down_conductors must be 1 or more (got {down_conductors})")
    if edition not in ("2010", "2006"):
        raise EarthingError(f"edition must be '2010' or '2006' (got {edition!r})")
    if down_conductors == 1:
        return 1.0
    if down_conductors == 2:
        return 0.66 if edition == "2010" else 0.5
    return 0.44


def separation_distance_m(
    level: ProtectionLevel,
    down_conductors: int,
    length_m: float,
    material: Literal["air", "solid"],
    edition: Literal["2010", "2006"] = "2010",
) -> float:
    """Least distance between an LPS conductor and other metal, so no spark jumps across.

    Source: IEC 62305-3:2010 clause 6.3 (as quoted): s = ki·(kc/km)·l.
    Worked check (as quoted): level III, four down conductors, masonry, l = 10 m
    gives 0.04 × 0.44 / 0.5 × 10 = 0.352 m.

    Args:
        level: Protection level of the LPS.
        down_conductors: Number of down conductors sharing the current.
        length_m: Length l along the conductor from the point considered to the
            nearest equipotential bonding point, in m.
        material: "air", or "solid" for brick, concrete or wood between them.
        edition: Edition of IEC 62305-3 ("2010" or "2006"); they differ in kc.

    Returns:
        The separation distance s in m.
    """
    level = _level(level)
    length = _positive("length_m", length_m)
    if material not in SEPARATION_KM:
        raise EarthingError(
            f"material must be 'air' or 'solid' (brick, concrete, wood); got {material!r}"
        )
    kc = separation_kc(down_conductors, edition)
    return SEPARATION_KI[level] * kc / SEPARATION_KM[material] * length
