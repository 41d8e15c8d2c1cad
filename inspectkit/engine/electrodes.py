"""Checks of one earth electrode: its traverse, its length against l1, its expected resistance.

Pure: each takes the electrode's record, the site's level and design resistivity
and the profile's figures, and returns a plain result with a sentence. The
formulas are those of `engine.fall_of_potential`, `engine.iec62305` and
`engine.electrode_resistance`; what is a verdict (a traverse with no plateau proves
nothing) and what is advice (a reading far from what the soil allows) is said in
each docstring.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from inspectkit.earthing_values import Traverse
from inspectkit.engine.electrode_resistance import rod_resistance
from inspectkit.engine.fall_of_potential import (
    PlateauResult,
    current_probe_min_distance,
    plateau_check,
)
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.engine.iec62305 import min_electrode_length, min_electrode_length_l1
from inspectkit.model import (
    Component,
    EarthingArrangement,
    ElectrodeOrientation,
    ElectrodeType,
    ProtectionLevel,
)

# ---------------------------------------------------------------- traverse


@dataclass(frozen=True)
class TraverseJudgement:
    """What a fall-of-potential traverse proves.

    Attributes:
        plateau: The engine's plateau check.
        move_to_m: With no plateau, the least E–C distance to try next, in m; None
            when the traverse is on its plateau or lacks the readings to tell.
        message: The sentence to show: the plateau's, or "no plateau: move …".
    """

    plateau: PlateauResult
    move_to_m: float | None
    message: str

    @property
    def valid(self) -> bool:
        return self.plateau.valid

    @property
    def value_ohm(self) -> float:
        """The reading to record: the traverse at 61.8 % of E–C."""
        return self.plateau.resistance_ohm


def traverse_reading(traverse: Traverse) -> float:
    """The reading a traverse gives: its value at 61.8 % of E–C, to four significant digits.

    Source: IEEE Std 81, the 61.8 % rule (as quoted); linear between the readings
    either side. Four digits is what an earth tester shows (our default).

    Raises:
        EarthingError: the traverse does not straddle 61.8 % of the E–C distance.
    """
    value = plateau_check(traverse.points, traverse.current_probe_m).resistance_ohm
    return float(f"{value:.4g}")


def judge_traverse(
    traverse: Traverse,
    tolerance: float,
    electrode_size_m: float | None = None,
    probe_factor: float = 5.0,
) -> TraverseJudgement:
    """The value at 61.8 %, whether the traverse lies on a plateau, and where to go if not.

    Over a hemisphere electrode in uniform soil the spread of the 52 % and 72 %
    readings about the 61.8 % one falls as 1/D with the E–C distance D (IEEE
    Std 81's derivation of the 61.8 % rule: the error terms are 1/x and
    1/(D − x)). So a spread s at distance D needs D·s/tolerance to come within
    the tolerance; never less than `probe_factor` times the electrode's size
    (common practice: five times).

    Raises:
        EarthingError: the traverse does not straddle 61.8 % of E–C.
    """
    plateau = plateau_check(traverse.points, traverse.current_probe_m, tolerance)
    if plateau.valid or plateau.spread is None:
        return TraverseJudgement(plateau, None, plateau.message)
    c = traverse.current_probe_m
    needed = c * plateau.spread / tolerance
    if electrode_size_m is not None:
        needed = max(needed, current_probe_min_distance(electrode_size_m, probe_factor))
    move_to = float(math.ceil(max(needed, c + 1)))
    message = (
        f"no plateau: the readings near 52 % and 72 % differ from the 61.8 % value by "
        f"{100 * plateau.spread:.0f} % (more than {100 * tolerance:g} %); move the current "
        f"probe further out, at least {move_to:g} m, and repeat the traverse"
    )
    return TraverseJudgement(plateau, move_to, message)


# ---------------------------------------------------------------- length against l1


@dataclass(frozen=True)
class LengthCheck:
    """An electrode's length (or a ring's radius) against IEC 62305-3's minimum.

    Attributes:
        what: `type A, vertical`, `type A, horizontal`, `type B ring`.
        measure: `length` or `mean radius`.
        actual_m: The electrode's length, or the ring's mean radius.
        required_m: l1, or 0.5·l1 for a vertical or inclined type A electrode.
        l1_m: l1 from Figure 2 for the level and ρ.
        short: The electrode is shorter than required.
        waived: Short, but the earthing resistance is below the waiver figure.
        message: A sentence.
    """

    what: str
    measure: str
    actual_m: float
    required_m: float
    l1_m: float
    short: bool
    waived: bool
    message: str


def length_check(
    electrode: Component,
    level: ProtectionLevel,
    rho_ohm_m: float,
    resistance_ohm: float | None = None,
    waiver_ohm: float = 10.0,
) -> LengthCheck | None:
    """A type A electrode's length against l1 or 0.5·l1, a type B ring's mean radius against l1.

    Sources: IEC 62305-3 clause 5.4.2.1 (type A: horizontal at least l1, vertical
    or inclined at least 0.5·l1; waived when the earthing resistance is below
    10 Ω) and 5.4.2.2 (type B: mean radius r_e at least l1, otherwise add
    electrodes), as quoted; l1 from Figure 2 (key points from memory).

    Args:
        resistance_ohm: The electrode's latest earth resistance, for the waiver.

    Returns:
        None when the record lacks what the check needs (type, length, radius),
        or for a foundation electrode, which has no minimum of its own here.

    Raises:
        EarthingError: ρ beyond Figure 2 (3000 Ω·m).
    """
    kind = electrode.electrode_type
    if kind is None or kind is ElectrodeType.FOUNDATION:
        return None
    l1 = min_electrode_length_l1(level, rho_ohm_m)
    if kind.arrangement is EarthingArrangement.B:
        if electrode.ring_radius_m is None:
            return None
        what, measure, actual, required = "type B ring", "mean radius", electrode.ring_radius_m, l1
        remedy = "add radial or driven electrodes to make up the difference (clause 5.4.2.2)"
    else:
        if electrode.length_m is None:
            return None
        lie = electrode.electrode_orientation or ElectrodeOrientation.VERTICAL
        horizontal = lie is ElectrodeOrientation.HORIZONTAL
        what, measure, actual = f"type A, {lie.value}", "length", electrode.length_m
        required = min_electrode_length(level, rho_ohm_m, vertical=not horizontal)
        remedy = "extend or add electrodes (clause 5.4.2.1)"
    short = actual < required - 1e-9
    waived = short and resistance_ohm is not None and resistance_ohm < waiver_ohm
    need = "l1" if required == l1 else "0.5·l1"
    basis = (
        f"{electrode.tag} ({what}) {measure} {actual:g} m against {need} = {required:.3g} m "
        f"for level {level.value} in {rho_ohm_m:.3g} Ω·m soil"
    )
    if not short:
        message = f"{basis}: long enough"
    elif waived:
        message = (
            f"{basis}: short, but its earth resistance {resistance_ohm:.3g} Ω is below "
            f"{waiver_ohm:g} Ω, so the minimum is waived"
        )
    else:
        message = f"{basis}: short by {required - actual:.2g} m; {remedy}"
    return LengthCheck(what, measure, actual, required, l1, short, waived, message)


# ---------------------------------------------------------------- expected resistance


@dataclass(frozen=True)
class ExpectedResistance:
    """A driven rod's resistance the soil allows, beside the one measured.

    Attributes:
        expected_ohm: Dwight's estimate for the rod's length and diameter.
        measured_ohm: The latest isolated reading, or None.
        ratio: measured / expected, or None.
        far: The ratio is beyond the profile's factor either way.
        message: A sentence; advice, never a verdict.
    """

    expected_ohm: float
    measured_ohm: float | None
    ratio: float | None
    far: bool
    message: str


def expected_resistance(
    electrode: Component, rho_ohm_m: float, measured_ohm: float | None, factor: float
) -> ExpectedResistance | None:
    """Dwight's estimate for a driven rod of the recorded size, against what was measured.

    Source: Dwight (1936) / IEEE Std 142 for the estimate (as quoted). A measured
    value far above it usually means a broken or corroded connection, far below
    it a test joint left closed or other buried metal in parallel (common
    practice); both are said as advice, since layered soil alone can explain
    much of a difference.

    Returns:
        None unless the electrode is a vertical rod with length and diameter recorded.
    """
    lie = electrode.electrode_orientation or ElectrodeOrientation.VERTICAL
    if (
        electrode.electrode_type is not ElectrodeType.ROD
        or lie is not ElectrodeOrientation.VERTICAL
        or electrode.length_m is None
        or electrode.diameter_m is None
    ):
        return None
    try:
        expected = rod_resistance(rho_ohm_m, electrode.length_m, electrode.diameter_m)
    except EarthingError:
        return None
    size = f"a {electrode.length_m:g} m × {electrode.diameter_m * 1000:g} mm rod"
    basis = f"{size} in {rho_ohm_m:.3g} Ω·m soil gives about {expected:.3g} Ω (Dwight)"
    if measured_ohm is None:
        return ExpectedResistance(expected, None, None, False, f"{electrode.tag}: {basis}")
    ratio = measured_ohm / expected
    if ratio > factor:
        advice = (
            f"{electrode.tag} measures {measured_ohm:.3g} Ω, {ratio:.1f} × what {basis}: "
            "a broken or corroded connection is the usual cause; look at the clamp and "
            "the conductor to the rod before re-driving"
        )
    elif ratio < 1 / factor:
        advice = (
            f"{electrode.tag} measures {measured_ohm:.3g} Ω, {1 / ratio:.1f} × below what "
            f"{basis}: check the test joint was open and no other buried metal is in parallel"
        )
    else:
        advice = f"{electrode.tag} measures {measured_ohm:.3g} Ω; {basis}: consistent"
    far = ratio > factor or ratio < 1 / factor
    return ExpectedResistance(expected, measured_ohm, ratio, far, advice)
