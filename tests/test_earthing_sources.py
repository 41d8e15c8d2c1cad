"""The earthing checks against curves and values computed from outside the project.

Each synthetic curve is computed here, in the test, from the physics the
standard's rule rests on, never from the code under test.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

from inspectkit import calculators
from inspectkit.earthing_values import make_traverse
from inspectkit.engine.electrode_resistance import rod_resistance
from inspectkit.engine.electrodes import judge_traverse
from inspectkit.engine.fall_of_potential import plateau_check
from inspectkit.engine.wenner import wenner_resistivity

#: Where the potential probe goes in the synthetic traverses, as fractions of E–C.
POSITIONS = (0.1, 0.2, 0.3, 0.4, 0.5, 0.52, 0.6, 0.618, 0.65, 0.72, 0.8, 0.9)


def hemisphere_traverse(rho: float, radius: float, c: float) -> list[tuple[float, float]]:
    """The fall-of-potential curve over a hemisphere electrode in uniform soil.

    IEEE Std 81's derivation of the 61.8 % rule: current I enters the ground at
    the hemisphere E (radius r) and leaves at a point probe C a distance D away.
    The potential at x from E is ρI/(2π)·(1/x − 1/(D − x)); E sits at
    ρI/(2π)·(1/r − 1/(D − r)). The instrument reads (V_E − V_P)/I. Only
    positions clear of both electrodes are taken (a probe touching the hemisphere
    reads nothing, which no instrument reports as a reading).
    """
    k = rho / (2 * math.pi)
    e = k * (1 / radius - 1 / (c - radius))
    return [
        (f * c, e - k * (1 / (f * c) - 1 / (c - f * c)))
        for f in POSITIONS
        if 1.05 * radius < f * c < c - 1.05 * radius
    ]


def test_61_8_percent_value_is_the_hemisphere_resistance() -> None:
    # IEEE Std 81 (61.8 % rule, as quoted): at x = 0.618·D the terms 1/x, 1/(D − x)
    # and 1/D cancel, so the reading is the true ρ/(2πr) of the hemisphere.
    rho, radius, c = 100.0, 1.0, 60.0
    result = plateau_check(hemisphere_traverse(rho, radius, c), c)
    true = rho / (2 * math.pi * radius)
    assert result.resistance_ohm == pytest.approx(true, rel=1e-3)
    assert result.valid
    # The spread of the 52 % and 72 % readings, from the same formula: 1.18·r/D.
    assert result.spread == pytest.approx(1.183 * radius / c, rel=0.02)


def test_probes_too_close_give_no_plateau_and_a_distance_that_works() -> None:
    # Same curve with C only 10 radii out: the 72 % reading is 12 % off (IEEE Std 81's
    # derivation), and the distance we advise, D·spread/tolerance, gives a plateau.
    rho, radius, c = 100.0, 1.0, 10.0
    curve = make_traverse(c, hemisphere_traverse(rho, radius, c))
    judged = judge_traverse(curve, 0.05)
    assert not judged.valid
    assert judged.move_to_m is not None and judged.move_to_m > c
    assert f"at least {judged.move_to_m:g} m" in judged.message
    further = make_traverse(judged.move_to_m, hemisphere_traverse(rho, radius, judged.move_to_m))
    assert judge_traverse(further, 0.05).valid


@settings(max_examples=60, deadline=None)
@given(
    rho=st.floats(min_value=5.0, max_value=5000.0),
    radius=st.floats(min_value=0.05, max_value=5.0),
    ratio=st.floats(min_value=30.0, max_value=400.0),
)
def test_any_uniform_soil_curve_with_c_far_out_has_a_plateau(
    rho: float, radius: float, ratio: float
) -> None:
    # IEEE Std 81's hemisphere curve; spread 1.18·r/D ≤ 4 % once D ≥ 30·r, inside the
    # ±5 % tolerance (common practice), and the 61.8 % value is the true resistance.
    c = ratio * radius
    result = plateau_check(hemisphere_traverse(rho, radius, c), c, 0.05)
    assert result.valid
    assert result.resistance_ohm == pytest.approx(rho / (2 * math.pi * radius), rel=5e-3)


@settings(max_examples=60, deadline=None)
@given(
    rho=st.floats(min_value=5.0, max_value=5000.0),
    radius=st.floats(min_value=0.05, max_value=5.0),
    ratio=st.floats(min_value=4.0, max_value=20.0),
)
@example(rho=5.0, radius=1.9861501832295771, ratio=5.0)  # a probe once fell on the electrode
def test_no_plateau_when_the_current_probe_is_too_close(
    rho: float, radius: float, ratio: float
) -> None:
    # Same curve with D ≤ 20·r: spread ≥ 5.9 %, beyond ±5 % (common practice).
    c = ratio * radius
    judged = judge_traverse(make_traverse(c, hemisphere_traverse(rho, radius, c)), 0.05)
    assert not judged.valid
    assert "no plateau" in judged.message and "move the current probe" in judged.message


def wenner_by_images(rho: float, a: float, b: float) -> float:
    """R of a Wenner array of point probes at depth b, from the image method.

    IEEE Std 81's derivation: a point source I at depth b in a half-space of
    resistivity ρ gives, at another point at that depth a horizontal distance d
    away, V = ρI/(4π)·(1/d + 1/√(d² + 4b²)) (the source and its image in the
    surface). C1, P1, P2, C2 stand a apart in a line; R = (V_P1 − V_P2)/I.
    """

    def v(d: float) -> float:
        return rho / (4 * math.pi) * (1 / d + 1 / math.hypot(d, 2 * b))

    v_p1 = v(a) - v(2 * a)
    v_p2 = v(2 * a) - v(a)
    return v_p1 - v_p2


@pytest.mark.parametrize(("a", "b"), [(3.0, 0.0001), (3.0, 0.15), (2.0, 0.5), (1.0, 1.0)])
def test_wenner_full_form_recovers_rho_from_the_image_method(a: float, b: float) -> None:
    # IEEE Std 81 (full Wenner form): ρ from R computed by the images in the test.
    rho = 137.0
    r = wenner_by_images(rho, a, b)
    assert wenner_resistivity(a, r, b) == pytest.approx(rho, rel=1e-9)


def test_wenner_calculator_against_ieee_81_simple_form() -> None:
    # IEEE Std 81, ρ = 2π·a·R (as quoted): a = 3 m, R = 10 Ω → 188.5 Ω·m.
    answer = calculators.wenner("3 m", "10 Ω")
    assert answer.results["resistivity_ohm_m"] == pytest.approx(2 * math.pi * 30, rel=1e-12)
    assert answer.lines[0] == "ρ = 188.5 Ω·m at a = 3 m"


def test_rod_calculator_ten_foot_five_eighths_rod_in_100_ohm_metre() -> None:
    # The 10 ft × 5/8 in rod in 100 Ω·m soil: about 33 Ω, as commonly quoted
    # (Dwight's formula, IEEE Std 142); typed in feet and inches.
    answer = calculators.rod("100", "10 ft", "5/8 in")
    assert answer.results["resistance_ohm"] == pytest.approx(33.1, abs=0.1)
    assert answer.inputs["length_m"] == pytest.approx(3.048)
    assert answer.inputs["diameter_m"] == pytest.approx(0.015875)
    assert "Dwight" in answer.source


def test_rod_calculator_matches_the_engine() -> None:
    # The calculator is the engine's Dwight formula, checked against numeric
    # integration in test_earthing.py; here only that it is that formula.
    answer = calculators.rod("250 Ω·m", "2.4 m", "14.2 mm")
    assert answer.results["resistance_ohm"] == pytest.approx(rod_resistance(250.0, 2.4, 0.0142))


@pytest.mark.parametrize(
    ("level", "rho", "l1"),
    [
        # IEC 62305-3 Figure 2, key points (from memory): level I 5 m to 500 Ω·m, 80 m at
        # 3000 Ω·m; level II 5 m to 800 Ω·m, 49 m at 3000 Ω·m; III and IV 5 m throughout.
        ("I", "500", 5.0),
        ("I", "3000 Ω·m", 80.0),
        ("II", "800", 5.0),
        ("II", "3000", 49.0),
        ("III", "3000", 5.0),
        ("4", "2500", 5.0),
    ],
)
def test_l1_calculator_against_figure_2_key_points(level: str, rho: str, l1: float) -> None:
    answer = calculators.l1(level, rho)
    assert answer.results["l1_m"] == pytest.approx(l1)
    # IEC 62305-3 clause 5.4.2.1 (as quoted): vertical electrodes at least 0.5·l1.
    assert answer.results["vertical_min_m"] == pytest.approx(l1 / 2)


def test_separation_calculator_worked_check() -> None:
    # IEC 62305-3:2010 clause 6.3 (as quoted): level III, four down conductors,
    # masonry, l = 10 m → s = 0.352 m.
    answer = calculators.separation("III", "4", "10 m", "solid")
    assert answer.results["separation_m"] == pytest.approx(0.352)


def test_parallel_calculator_hand_calculation() -> None:
    # Hand calculation: 1 / (1/10 + 1/20 + 1/20) = 5 Ω.
    assert calculators.parallel("10; 20; 20").results["ideal_ohm"] == pytest.approx(5.0)


@pytest.mark.parametrize(
    ("call", "field", "says"),
    [
        (lambda: calculators.rod("100", "3 m", "16"), "diameter", "smaller than length"),
        (lambda: calculators.rod("0", "3 m", "16 mm"), "resistivity", "above zero"),
        (lambda: calculators.rod("100", "-3 m", "16 mm"), "length", "negative"),
        (lambda: calculators.rod("100", "3 kg", "16 mm"), "length", "not a length"),
        (lambda: calculators.l1("II", "5000"), "resistivity", "ends at 3000 Ω·m"),
        (lambda: calculators.l1("V", "100"), "level", "I, II, III or IV"),
        (lambda: calculators.wenner("3 m", "10", "-1"), "depth", "negative"),
        (lambda: calculators.traverse("50 m", "52%=10; 61.8%=10.2"), "points", "3 to"),
        (lambda: calculators.traverse("50 m", "10%=1; 20%=2; 30%=3"), "points", "61.8 %"),
        (lambda: calculators.traverse("0 m"), "current_probe", "above zero"),
        (lambda: calculators.separation("III", "0", "10 m"), "down_conductors", "1 or more"),
        (lambda: calculators.separation("III", "4", "10 m", "steel"), "material", "solid"),
        (lambda: calculators.parallel("10; 0"), "resistances", "above zero"),
        (
            lambda: calculators.parallel("; ".join(["10"] * 11), "6 m", "3 m"),
            "resistances",
            "1 to 10",
        ),
    ],
)
def test_calculators_refuse_out_of_domain_naming_the_input(call, field: str, says: str) -> None:  # noqa: ANN001
    with pytest.raises(calculators.CalcInputError, match=says) as caught:
        call()
    assert caught.value.field == field
