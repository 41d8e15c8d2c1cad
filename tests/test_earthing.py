"""Tests for the on-site earthing formulas, each against the source it comes from."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy.integrate import quad

from inspectkit.engine.electrode_resistance import (
    RODS_IN_LINE_LAMBDA,
    parallel_resistance,
    rod_resistance,
    rods_in_line_spacing_factor,
)
from inspectkit.engine.fall_of_potential import (
    PlateauResult,
    current_probe_min_distance,
    plateau_check,
    potential_probe_distance,
)
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.engine.iec62305 import (
    DOWN_CONDUCTOR_SPACING_M,
    MESH_SIZE_M,
    MIN_PEAK_CURRENT_KA,
    ROLLING_SPHERE_RADIUS_M,
    min_electrode_length,
    min_electrode_length_l1,
    separation_distance_m,
    separation_kc,
    striking_distance_m,
)
from inspectkit.engine.wenner import wenner_resistivity, wenner_resistivity_simple
from inspectkit.model import ProtectionLevel

I, II, III, IV = tuple(ProtectionLevel)  # noqa: E741 - the standard's own names
FIVE_EIGHTHS_INCH_M = 0.015875


# ---------------------------------------------------------------- driven rod


@pytest.mark.parametrize(
    ("length_m", "expected_ohm"),
    [
        # Dwight (1936) / IEEE Std 142: computed from the formula, no published table
        # at hand: 10 ft (3.048 m) × 5/8 in rod in 100 Ω·m soil.
        (3.048, 33.1),
        # Same, 8 ft (2.438 m) rod; computed from the formula, no published table at hand.
        (2.438, 39.9),
    ],
)
def test_rod_resistance_check_values(length_m: float, expected_ohm: float) -> None:
    assert rod_resistance(100.0, length_m, FIVE_EIGHTHS_INCH_M) == pytest.approx(
        expected_ohm, abs=0.05
    )


def test_rod_resistance_handbook_example() -> None:
    # Handbook-style example, from memory (no published worked example confirmed):
    # a 3 m rod of 16 mm diameter in 100 Ω·m soil is "about 33 Ω".
    assert rod_resistance(100.0, 3.0, 0.016) == pytest.approx(33.5, abs=0.5)


def test_rod_resistance_against_average_potential_integral() -> None:
    # Dwight's derivation (average-potential method): the rod and its image form a
    # line source of length 2L in full space; R is the surface potential averaged
    # over the rod, divided by I. Integrated numerically with scipy as an oracle.
    rho, length, radius = 100.0, 3.048, FIVE_EIGHTHS_INCH_M / 2

    def potential_per_amp(z: float) -> float:
        return math.asinh((length - z) / radius) + math.asinh((length + z) / radius)

    integral, _ = quad(potential_per_amp, -length, length, limit=200)
    oracle = rho / (4 * math.pi * length) * integral / (2 * length)
    assert rod_resistance(rho, length, 2 * radius) == pytest.approx(oracle, rel=1e-3)


@given(
    st.floats(min_value=1.0, max_value=10_000.0),
    st.floats(min_value=0.5, max_value=30.0),
    st.floats(min_value=0.01, max_value=0.03),
)
def test_rod_resistance_scales_with_resistivity_and_falls_with_length(
    rho: float, length: float, diameter: float
) -> None:
    # Dwight (1936): R is proportional to ρ and falls as the rod gets longer.
    r = rod_resistance(rho, length, diameter)
    assert r > 0
    assert rod_resistance(2 * rho, length, diameter) == pytest.approx(2 * r)
    assert rod_resistance(rho, 1.5 * length, diameter) < r


@pytest.mark.parametrize(
    ("args", "names"),
    [
        ((0.0, 3.0, 0.016), "resistivity_ohm_m"),
        ((-100.0, 3.0, 0.016), "resistivity_ohm_m"),
        ((math.nan, 3.0, 0.016), "resistivity_ohm_m"),
        ((100.0, 0.0, 0.016), "length_m"),
        ((100.0, -3.0, 0.016), "length_m"),
        ((100.0, 3.0, 0.0), "diameter_m"),
        ((100.0, 3.0, 3.0), "diameter_m"),
        ((100.0, 3.0, 16.0), "diameter_m"),
    ],
)
def test_rod_resistance_refuses_out_of_domain(args: tuple[float, float, float], names: str) -> None:
    with pytest.raises(EarthingError, match=names):
        rod_resistance(*args)


# ---------------------------------------------------------------- Wenner


def test_wenner_simple_numeric_example() -> None:
    # IEEE Std 81, ρ = 2π·a·R (as quoted): a = 3 m, R = 10 Ω → 188.5 Ω·m.
    assert wenner_resistivity_simple(3.0, 10.0) == pytest.approx(188.5, abs=0.05)


def test_wenner_full_form_with_surface_probes_is_the_simple_form() -> None:
    # IEEE Std 81 full form (from memory) reduces to 2π·a·R at b = 0.
    assert wenner_resistivity(3.0, 10.0) == pytest.approx(wenner_resistivity_simple(3.0, 10.0))


def test_wenner_full_form_tends_to_2_pi_a_r_as_depth_shrinks() -> None:
    # IEEE Std 81 full form (from memory): limit b → 0 is 2π·a·R.
    simple = 2 * math.pi * 3.0 * 10.0
    gaps = [abs(wenner_resistivity(3.0, 10.0, b) / simple - 1) for b in (0.3, 0.1, 0.01, 1e-4)]
    assert gaps == sorted(gaps, reverse=True)
    assert gaps[-1] < 1e-8


def test_wenner_full_form_tends_to_4_pi_a_r_for_deep_probes() -> None:
    # IEEE Std 81 full form (from memory): limit b → ∞ is 4π·a·R.
    deep = 4 * math.pi * 3.0 * 10.0
    assert wenner_resistivity(3.0, 10.0, 1e5) == pytest.approx(deep, rel=1e-6)
    assert wenner_resistivity(3.0, 10.0, 30.0) < wenner_resistivity(3.0, 10.0, 300.0) < deep


def test_wenner_simple_form_is_close_when_spacing_exceeds_twenty_depths() -> None:
    # IEEE Std 81 (as quoted): the simple form holds when a > 20·b. At a = 20·b the
    # full form (from memory) is within 0.5 % of it: 189.3 against 188.5 Ω·m.
    full = wenner_resistivity(3.0, 10.0, 0.15)
    assert full == pytest.approx(189.3, abs=0.05)
    assert full / wenner_resistivity_simple(3.0, 10.0) - 1 < 0.005


@pytest.mark.parametrize(
    ("args", "name"),
    [
        ((0.0, 10.0, 0.0), "spacing_m"),
        ((-3.0, 10.0, 0.0), "spacing_m"),
        ((3.0, 0.0, 0.0), "resistance_ohm"),
        ((3.0, -1.0, 0.0), "resistance_ohm"),
        ((3.0, 10.0, -0.1), "depth_m"),
        ((3.0, 10.0, math.inf), "depth_m"),
    ],
)
def test_wenner_refuses_out_of_domain(args: tuple[float, float, float], name: str) -> None:
    with pytest.raises(EarthingError, match=name):
        wenner_resistivity(*args)
    if name != "depth_m":
        with pytest.raises(EarthingError, match=name):
            wenner_resistivity_simple(*args[:2])


# ---------------------------------------------------------------- fall-of-potential


def test_potential_probe_at_61_8_percent() -> None:
    # IEEE Std 81, the 61.8 % rule (as quoted).
    assert potential_probe_distance(50.0) == pytest.approx(30.9)
    assert potential_probe_distance(100.0) == pytest.approx(61.8)


def test_current_probe_five_times_electrode_size() -> None:
    # Common practice: C at least 5 × the electrode's largest dimension.
    assert current_probe_min_distance(3.0) == pytest.approx(15.0)
    assert current_probe_min_distance(3.0, factor=10.0) == pytest.approx(30.0)


@pytest.mark.parametrize(
    ("call", "name"),
    [
        (lambda: potential_probe_distance(0.0), "current_probe_distance_m"),
        (lambda: potential_probe_distance(-5.0), "current_probe_distance_m"),
        (lambda: current_probe_min_distance(0.0), "electrode_size_m"),
        (lambda: current_probe_min_distance(3.0, factor=0.5), "factor"),
        (lambda: current_probe_min_distance(3.0, factor=-1.0), "factor"),
    ],
)
def test_probe_placement_refuses_out_of_domain(call, name: str) -> None:  # noqa: ANN001
    with pytest.raises(EarthingError, match=name):
        call()


def test_plateau_valid_when_52_and_72_percent_agree() -> None:
    # IEEE Std 81 (61.8 %, as quoted); ±5 % agreement at 52 % and 72 % (common practice).
    points = [(20.0, 9.6), (26.0, 10.0), (30.9, 10.2), (36.0, 10.5), (42.0, 11.5)]
    result = plateau_check(points, 50.0)
    assert isinstance(result, PlateauResult)
    assert result.valid
    assert result.resistance_ohm == pytest.approx(10.2)
    assert (result.low_ohm, result.high_ohm) == (10.0, 10.5)
    assert result.spread == pytest.approx(0.3 / 10.2)
    assert "report 10.2 Ω" in result.message


def test_plateau_invalid_says_move_the_current_probe() -> None:
    # Common practice: no plateau → move C further out and repeat.
    points = [(26.0, 10.0), (30.9, 10.2), (36.0, 11.1)]
    result = plateau_check(points, 50.0)
    assert not result.valid
    assert result.spread == pytest.approx(0.9 / 10.2)
    assert "52 % and 72 %" in result.message
    assert "8.8 %" in result.message
    assert "move the current probe further out" in result.message


def test_plateau_interpolates_the_61_8_percent_value() -> None:
    # Linear interpolation between 60 % (10.0 Ω) and 64 % (10.4 Ω) at 61.8 %: 10.18 Ω.
    points = [(52.0, 9.9), (60.0, 10.0), (64.0, 10.4), (72.0, 10.3)]
    result = plateau_check(points, 100.0)
    assert result.resistance_ohm == pytest.approx(10.18)
    assert result.valid


def test_plateau_points_in_any_order() -> None:
    ordered = [(26.0, 10.0), (30.9, 10.2), (36.0, 10.5)]
    assert plateau_check(ordered[::-1], 50.0) == plateau_check(ordered, 50.0)


def test_plateau_tolerance_decides() -> None:
    points = [(26.0, 10.0), (30.9, 10.2), (36.0, 10.5)]  # spread 2.9 %
    assert plateau_check(points, 50.0, tolerance=0.05).valid
    assert not plateau_check(points, 50.0, tolerance=0.02).valid


def test_plateau_without_readings_near_52_and_72_percent_is_not_valid() -> None:
    result = plateau_check([(10.0, 5.0), (30.0, 10.0), (45.0, 14.0)], 50.0)
    assert not result.valid
    assert result.spread is None
    assert result.low_ohm is None and result.high_ohm is None
    assert "no reading near 52 %" in result.message
    assert "take one there" in result.message


@pytest.mark.parametrize(
    ("points", "c", "says"),
    [
        ([(26.0, 10.0), (30.9, 10.2)], 50.0, "at least three"),
        ([], 50.0, "at least three"),
        ([(0.0, 1.0), (30.9, 10.2), (36.0, 10.5)], 50.0, "distance"),
        ([(-5.0, 1.0), (30.9, 10.2), (36.0, 10.5)], 50.0, "distance"),
        ([(26.0, 10.0), (30.9, 10.2), (50.0, 10.5)], 50.0, "not between the electrode"),
        ([(26.0, 10.0), (30.9, 10.2), (60.0, 10.5)], 50.0, "not between the electrode"),
        ([(26.0, 0.0), (30.9, 10.2), (36.0, 10.5)], 50.0, "resistance"),
        ([(26.0, 10.0), (26.0, 10.2), (36.0, 10.5)], 50.0, "two readings at 26 m"),
        ([(10.0, 10.0), (15.0, 10.2), (20.0, 10.5)], 50.0, "either side of 61.8 %"),
        ([(26.0, 10.0), (30.9, 10.2), (36.0, 10.5)], 0.0, "current_probe_distance_m"),
    ],
)
def test_plateau_refuses_bad_traverses(
    points: list[tuple[float, float]], c: float, says: str
) -> None:
    with pytest.raises(EarthingError, match=says):
        plateau_check(points, c)


@pytest.mark.parametrize("tolerance", [0.0, -0.05, 1.0, 5.0])
def test_plateau_refuses_a_tolerance_that_is_not_a_fraction(tolerance: float) -> None:
    with pytest.raises(EarthingError, match="tolerance"):
        plateau_check([(26.0, 10.0), (30.9, 10.2), (36.0, 10.5)], 50.0, tolerance=tolerance)


# ---------------------------------------------------------------- parallel electrodes


def test_parallel_ideal_against_hand_calculation() -> None:
    # Hand calculation: 1 / (1/10 + 1/20 + 1/20) = 1 / 0.2 = 5 Ω.
    assert parallel_resistance([10.0, 20.0, 20.0]) == pytest.approx(5.0)
    # n equal electrodes far apart: R/n.
    assert parallel_resistance([40.0] * 4) == pytest.approx(10.0)
    assert parallel_resistance([7.0]) == pytest.approx(7.0)


@given(
    st.lists(st.floats(min_value=0.1, max_value=1e4), min_size=1, max_size=12),
    st.floats(min_value=1.0, max_value=3.0),
)
def test_spacing_factor_only_ever_raises_the_result(
    resistances: list[float], factor: float
) -> None:
    ideal = parallel_resistance(resistances)
    assert parallel_resistance(resistances, factor) >= ideal
    assert ideal <= min(resistances) * (1 + 1e-12)


def test_rods_in_line_lambda_table() -> None:
    # BS 7430 table for rods in line, from memory; checked against the equal-current
    # estimate λ = (2/n)·Σ(n−k)/k (two rods: exactly 1), which the table must sit at
    # or a little below, since real end rods carry more current.
    for n, table in RODS_IN_LINE_LAMBDA.items():
        equal_current = 2 / n * sum((n - k) / k for k in range(1, n))
        assert 0 <= (equal_current - table) / equal_current < 0.02


def test_two_rods_factor_against_mutual_resistance() -> None:
    # Two rods at spacing s (BS 7430 method, from memory, λ = 1): each sees the other's
    # potential ρ/(2πs), so R_total = (R + ρ/(2πs))/2, i.e. F = 1 + ρ/(2πsR).
    rho, length, d, s = 100.0, 3.0, 0.016, 6.0
    r = rod_resistance(rho, length, d)
    expected = (r + rho / (2 * math.pi * s)) / 2
    factor = rods_in_line_spacing_factor(2, s, length, d)
    assert parallel_resistance([r, r], factor) == pytest.approx(expected)


@given(
    st.integers(min_value=2, max_value=10),
    st.floats(min_value=1.0, max_value=100.0),
    st.floats(min_value=1.0, max_value=10.0),
)
def test_rods_in_line_factor_is_above_one_and_falls_with_spacing(
    n: int, spacing: float, length: float
) -> None:
    near = rods_in_line_spacing_factor(n, spacing, length)
    far = rods_in_line_spacing_factor(n, 2 * spacing, length)
    assert near > far > 1.0


def test_rods_in_line_one_rod_has_no_coupling() -> None:
    assert rods_in_line_spacing_factor(1, 3.0, 3.0) == 1.0


@pytest.mark.parametrize(
    ("call", "name"),
    [
        (lambda: parallel_resistance([]), "resistances"),
        (lambda: parallel_resistance([10.0, 0.0]), r"resistances\[1\]"),
        (lambda: parallel_resistance([10.0, -5.0]), r"resistances\[1\]"),
        (lambda: parallel_resistance([10.0], 0.9), "spacing_factor"),
        (lambda: parallel_resistance([10.0], 0.0), "spacing_factor"),
        (lambda: rods_in_line_spacing_factor(0, 3.0, 3.0), "n must"),
        (lambda: rods_in_line_spacing_factor(11, 3.0, 3.0), "n must"),
        (lambda: rods_in_line_spacing_factor(2.0, 3.0, 3.0), "n must"),  # type: ignore[arg-type]
        (lambda: rods_in_line_spacing_factor(3, 0.0, 3.0), "spacing_m"),
        (lambda: rods_in_line_spacing_factor(3, 3.0, -3.0), "length_m"),
        (lambda: rods_in_line_spacing_factor(3, 3.0, 3.0, 3.0), "diameter_m"),
    ],
)
def test_parallel_refuses_out_of_domain(call, name: str) -> None:  # noqa: ANN001
    with pytest.raises(EarthingError, match=name):
        call()


# ---------------------------------------------------------------- IEC 62305-3 Figure 2


@pytest.mark.parametrize(
    ("level", "rho", "expected"),
    [
        # IEC 62305-3 Figure 2, key points from memory (docs/sources.md, "IEC 62305-3").
        (I, 100.0, 5.0),
        (I, 500.0, 5.0),
        (I, 1000.0, 20.0),
        (I, 3000.0, 80.0),
        (II, 100.0, 5.0),
        (II, 800.0, 5.0),
        (II, 1000.0, 9.0),
        (II, 3000.0, 49.0),
        (III, 100.0, 5.0),
        (III, 3000.0, 5.0),
        (IV, 3000.0, 5.0),
        ("II", 2000.0, 29.0),
    ],
)
def test_min_electrode_length_l1(level: ProtectionLevel, rho: float, expected: float) -> None:
    assert min_electrode_length_l1(level, rho) == pytest.approx(expected)


def test_min_electrode_length_l1_is_continuous_and_rising() -> None:
    # IEC 62305-3 Figure 2 (from memory): lines join the 5 m floor with no step.
    for level in (I, II):
        lengths = [min_electrode_length_l1(level, rho) for rho in range(1, 3001, 10)]
        assert lengths == sorted(lengths)
        assert max(b - a for a, b in zip(lengths, lengths[1:], strict=False)) < 0.31


def test_min_electrode_length_vertical_is_half() -> None:
    # IEC 62305-3 clause 5.4.2.1 (as quoted): l1 horizontal, 0.5·l1 vertical.
    assert min_electrode_length(I, 3000.0, vertical=False) == pytest.approx(80.0)
    assert min_electrode_length(I, 3000.0, vertical=True) == pytest.approx(40.0)
    assert min_electrode_length(III, 200.0, vertical=True) == pytest.approx(2.5)


@pytest.mark.parametrize(
    ("level", "rho", "says"),
    [
        (I, 0.0, "resistivity_ohm_m"),
        (I, -10.0, "resistivity_ohm_m"),
        (II, 3000.1, "beyond IEC 62305-3 Figure 2"),
        (III, 5000.0, "beyond IEC 62305-3 Figure 2"),
        ("V", 100.0, "level must be"),
    ],
)
def test_min_electrode_length_refuses_out_of_domain(
    level: ProtectionLevel, rho: float, says: str
) -> None:
    with pytest.raises(EarthingError, match=says):
        min_electrode_length_l1(level, rho)


# ---------------------------------------------------------------- protection-level geometry


def test_level_tables_against_the_standard() -> None:
    # IEC 62305-3 Table 2: rolling sphere radius and mesh size (as quoted).
    assert dict(ROLLING_SPHERE_RADIUS_M) == {I: 20.0, II: 30.0, III: 45.0, IV: 60.0}
    assert dict(MESH_SIZE_M) == {I: 5.0, II: 10.0, III: 15.0, IV: 20.0}
    # IEC 62305-3 Table 4: typical distance between down conductors (as quoted).
    assert dict(DOWN_CONDUCTOR_SPACING_M) == {I: 10.0, II: 10.0, III: 15.0, IV: 20.0}
    # IEC 62305-1 Table 5: minimum peak current per level (from memory).
    assert dict(MIN_PEAK_CURRENT_KA) == {I: 3.0, II: 5.0, III: 10.0, IV: 16.0}


def test_level_tables_cannot_be_changed_by_accident() -> None:
    with pytest.raises(TypeError):
        ROLLING_SPHERE_RADIUS_M[I] = 25.0  # type: ignore[index]


@pytest.mark.parametrize("level", list(ProtectionLevel))
def test_striking_distance_close_to_table_radius(level: ProtectionLevel) -> None:
    # IEC 62305-1: r = 10·I^0.65 at the level's minimum current (IEC 62305-1 Table 5,
    # from memory) lies within ±6 % of the rounded radius of IEC 62305-3 Table 2.
    r = striking_distance_m(MIN_PEAK_CURRENT_KA[level])
    assert abs(r / ROLLING_SPHERE_RADIUS_M[level] - 1) <= 0.06


def test_striking_distance_values() -> None:
    # IEC 62305-1, r = 10·I^0.65: 20.4, 28.5, 44.7, 60.6 m for 3, 5, 10, 16 kA.
    got = [round(striking_distance_m(i), 1) for i in (3.0, 5.0, 10.0, 16.0)]
    assert got == [20.4, 28.5, 44.7, 60.6]
    with pytest.raises(EarthingError, match="peak_current_ka"):
        striking_distance_m(0.0)


# ---------------------------------------------------------------- separation distance


def test_separation_distance_worked_check() -> None:
    # IEC 62305-3:2010 clause 6.3 (as quoted): level III, ≥ 4 down conductors,
    # masonry, l = 10 m → s = 0.04 × 0.44 / 0.5 × 10 = 0.352 m.
    assert separation_distance_m(III, 4, 10.0, "solid") == pytest.approx(0.352)


@pytest.mark.parametrize(
    ("level", "n", "material", "edition", "expected"),
    [
        # s = ki·(kc/km)·l with l = 10 m; ki, km, kc per IEC 62305-3:2010 clause 6.3
        # Tables 10–12 (as quoted), kc = 0.5 for two conductors in the 2006 edition.
        (I, 1, "air", "2010", 0.08 * 1.0 / 1.0 * 10),
        (II, 1, "solid", "2010", 0.06 * 1.0 / 0.5 * 10),
        (I, 2, "air", "2010", 0.08 * 0.66 * 10),
        (I, 2, "air", "2006", 0.08 * 0.5 * 10),
        (IV, 3, "air", "2010", 0.04 * 0.44 * 10),
        (IV, 12, "air", "2006", 0.04 * 0.44 * 10),
    ],
)
def test_separation_distance_coefficients(
    level: ProtectionLevel, n: int, material: str, edition: str, expected: float
) -> None:
    assert separation_distance_m(level, n, 10.0, material, edition) == pytest.approx(expected)  # type: ignore[arg-type]


def test_separation_kc_by_edition() -> None:
    # IEC 62305-3:2010 Table 12 (as quoted); 2006 edition: 0.5 for two.
    assert [separation_kc(n) for n in (1, 2, 3, 4)] == [1.0, 0.66, 0.44, 0.44]
    assert separation_kc(2, "2006") == 0.5


@pytest.mark.parametrize(
    ("args", "says"),
    [
        ((III, 0, 10.0, "air"), "down_conductors"),
        ((III, -1, 10.0, "air"), "down_conductors"),
        ((III, 2.5, 10.0, "air"), "down_conductors"),
        ((III, 4, 0.0, "air"), "length_m"),
        ((III, 4, -1.0, "air"), "length_m"),
        ((III, 4, 10.0, "steel"), "material"),
        ((III, 4, 10.0, "air", "2018"), "edition"),
        (("V", 4, 10.0, "air"), "level must be"),
    ],
)
def test_separation_distance_refuses_out_of_domain(args: tuple, says: str) -> None:
    with pytest.raises(EarthingError, match=says):
        separation_distance_m(*args)
