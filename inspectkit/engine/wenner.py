"""Soil resistivity from a Wenner four-probe reading (IEEE Std 81), full and simple forms.

Pure functions of SI units; each docstring names its source and how sure we are of
it, in the words of docs/sources.md.
"""

from __future__ import annotations

import math

from inspectkit.engine.formula_inputs import non_negative, positive


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
    a = positive("spacing_m", spacing_m)
    r = positive("resistance_ohm", resistance_ohm)
    b = non_negative("depth_m", depth_m)
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
    a = positive("spacing_m", spacing_m)
    r = positive("resistance_ohm", resistance_ohm)
    return 2 * math.pi * a * r
