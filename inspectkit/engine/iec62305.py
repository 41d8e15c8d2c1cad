"""IEC 62305's figures by protection level and its formulas: rolling sphere, mesh and
down-conductor spacing, striking distance, electrode length l1, separation distance.

Pure functions of SI units; each docstring and table names its source and how sure
we are of it, in the words of docs/sources.md.
"""

from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType
from typing import Literal

from inspectkit.engine.formula_inputs import EarthingError, positive
from inspectkit.model import ProtectionLevel

L1, L2, L3, L4 = ProtectionLevel.I, ProtectionLevel.II, ProtectionLevel.III, ProtectionLevel.IV


def _level(level: ProtectionLevel | str) -> ProtectionLevel:
    """The protection level, given as the enum or its name (`"III"`)."""
    try:
        return ProtectionLevel(level)
    except ValueError:
        raise EarthingError(
            f"level must be a protection level I, II, III or IV (got {level!r})"
        ) from None


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
    return 10 * positive("peak_current_ka", peak_current_ka) ** 0.65


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
    rho = positive("resistivity_ohm_m", resistivity_ohm_m)
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
    length = positive("length_m", length_m)
    if material not in SEPARATION_KM:
        raise EarthingError(
            f"material must be 'air' or 'solid' (brick, concrete, wood); got {material!r}"
        )
    kc = separation_kc(down_conductors, edition)
    return SEPARATION_KI[level] * kc / SEPARATION_KM[material] * length
