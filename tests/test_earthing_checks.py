"""The engine's earthing checks: a survey's ρ(a), the design ρ, electrode lengths, the rules."""

from __future__ import annotations

import math
from datetime import UTC, date, datetime

import pytest

from inspectkit.earthing_values import make_traverse, survey_text
from inspectkit.engine.check import check_site
from inspectkit.engine.electrodes import expected_resistance, length_check
from inspectkit.engine.soil import analyse_points, design_resistivity
from inspectkit.model import (
    Component,
    ComponentKind,
    Inspection,
    Reading,
    Site,
    SiteRecords,
    SoilSurvey,
)
from inspectkit.profiles import load_profile

DAY = date(2026, 5, 4)
SITE = Site(name="Quarry Lane Depot", protection_level="I")
VISIT = Inspection(site_id=SITE.id, kind="complete", date=DAY, finished=True)


def rod(tag: str = "E-01", length: float = 3.0, **more: object) -> Component:
    """A driven rod of 16 mm."""
    return Component(site_id=SITE.id, kind=ComponentKind.EARTH_ELECTRODE, tag=tag,
                     electrode_type="rod", length_m=length, diameter_m=0.016, **more)  # fmt: skip


def survey(points: list[tuple[float, float]], **more: object) -> SoilSurvey:
    return SoilSurvey(site_id=SITE.id, date=DAY, points=survey_text(points), **more)


def wenner_r(rho: float, a: float) -> float:
    """R a Wenner array of shallow probes reads in uniform soil of ρ (IEEE Std 81: ρ = 2πaR)."""
    return rho / (2 * math.pi * a)


# ---------------------------------------------------------------- surveys


def test_uniform_soil_is_called_uniform() -> None:
    # IEEE Std 81 (ρ = 2πaR); the same ρ at every spacing is uniform soil.
    result = analyse_points([(a, wenner_r(100.0, a)) for a in (1, 2, 4, 8)], None, 0.05, 1.5)
    assert not result.layered
    assert [round(r.rho_ohm_m, 6) for r in result.rows] == [100.0] * 4
    assert result.message.startswith("uniform")


def test_rho_rising_with_spacing_is_a_resistive_layer_below() -> None:
    # ρ(a) from 50 to 200 Ω·m: a factor 4, beyond the 1.5 × threshold (our default).
    result = analyse_points([(1, wenner_r(50, 1)), (4, wenner_r(120, 4)), (16, wenner_r(200, 16))],
                            None, 0.05, 1.5)  # fmt: skip
    assert result.layered and result.ratio == pytest.approx(4.0)
    assert "a more resistive layer lies below" in result.message


def test_deep_probes_flag_the_spacing_where_the_simple_form_is_off() -> None:
    # IEEE Std 81: 2πaR holds when a > 20·b; at a = 1 m, b = 0.3 m the full form is
    # 14 % above it (4π/1.757 against 2π), at a = 8 m within 0.3 %.
    result = analyse_points([(1.0, 10.0), (8.0, 1.0)], 0.3, 0.05, 1.5)
    assert [r.forms_differ for r in result.rows] == [True, False]
    assert "at 1 m the probes are deep" in result.message


def test_design_rho_is_the_chosen_spacing_else_the_nearest_to_the_length() -> None:
    points = [(1.0, wenner_r(40, 1)), (2.0, wenner_r(60, 2)), (8.0, wenner_r(150, 8))]
    assert design_resistivity([survey(points)], [], 2.4).rho_ohm_m == pytest.approx(60)
    assert design_resistivity([survey(points)], [], None).source == "highest of the survey"
    chosen = survey(points, chosen_spacing_m=8.0)
    assert design_resistivity([chosen], [], 2.4).rho_ohm_m == pytest.approx(150)


def test_design_rho_falls_back_on_a_soil_resistivity_reading() -> None:
    reading = Reading(inspection_id=VISIT.id, component_id=SITE.id, quantity="soil_resistivity",
                      value=85.0, method="wenner",
                      taken_at=datetime(2026, 5, 4, tzinfo=UTC))  # fmt: skip
    found = design_resistivity([], [reading])
    assert (found.rho_ohm_m, found.source) == (85.0, "soil resistivity reading")
    assert design_resistivity([], []) is None


# ---------------------------------------------------------------- one electrode


@pytest.mark.parametrize(
    ("electrode", "rho", "ohm", "required", "short", "waived"),
    [
        # IEC 62305-3 clause 5.4.2.1 (as quoted), l1 from Figure 2 (from memory):
        # level I at 1000 Ω·m, l1 = 20 m; vertical needs 10 m.
        (rod(length=6.0), 1000.0, 25.0, 10.0, True, False),
        # Same, but the earth resistance is below 10 Ω: the minimum is waived.
        (rod(length=6.0), 1000.0, 8.0, 10.0, True, True),
        # Horizontal strip: needs all of l1.
        (rod(length=15.0, electrode_orientation="horizontal"), 1000.0, None, 20.0, True, False),
        # Level I up to 500 Ω·m: l1 = 5 m, so a 3 m rod is long enough vertically (2.5 m).
        (rod(length=3.0), 400.0, None, 2.5, False, False),
    ],
)
def test_length_against_l1(
    electrode: Component, rho: float, ohm: float | None, required: float, short: bool, waived: bool
) -> None:
    found = length_check(electrode, SITE.protection_level, rho, ohm)
    assert found.required_m == pytest.approx(required)
    assert (found.short, found.waived) == (short, waived)


def test_a_ring_is_judged_by_its_mean_radius() -> None:
    # IEC 62305-3 clause 5.4.2.2 (as quoted): r_e at least l1; level I, 1000 Ω·m → 20 m.
    ring = Component(site_id=SITE.id, kind=ComponentKind.EARTH_ELECTRODE, tag="R-1",
                     electrode_type="ring", ring_radius_m=12.0)  # fmt: skip
    found = length_check(ring, SITE.protection_level, 1000.0)
    assert (found.what, found.required_m, found.short) == ("type B ring", 20.0, True)
    assert "add radial or driven electrodes" in found.message


def test_expected_resistance_is_advice_both_ways() -> None:
    # Dwight (IEEE Std 142): 3 m × 16 mm in 100 Ω·m ≈ 33.5 Ω; 3 × above or below is noted.
    high = expected_resistance(rod(), 100.0, 120.0, 3.0)
    assert high.expected_ohm == pytest.approx(33.5, abs=0.1) and high.far
    assert "broken or corroded connection" in high.message
    low = expected_resistance(rod(), 100.0, 9.0, 3.0)
    assert low.far and "test joint was open" in low.message
    assert not expected_resistance(rod(), 100.0, 30.0, 3.0).far


# ---------------------------------------------------------------- the rules


def _records(
    components: list[Component], readings: list[Reading], surveys: list[SoilSurvey]
) -> SiteRecords:
    return SiteRecords(site=SITE, components=components, inspections=[VISIT],
                       readings=readings, surveys=surveys)  # fmt: skip


def _isolated(component: Component, value: float, traverse: str | None = None) -> Reading:
    return Reading(inspection_id=VISIT.id, component_id=component.id, quantity="earth_isolated",
                   value=value, method="fall_of_potential_3p", joint_state="open",
                   taken_at=datetime(2026, 5, 4, 10, tzinfo=UTC), traverse=traverse)  # fmt: skip


def test_check_reports_a_short_electrode_a_lone_one_and_a_traverse_without_plateau() -> None:
    e01 = rod("E-01", length=2.0)
    no_plateau = make_traverse(20.0, [(10.4, 3.0), (12.36, 3.9), (14.4, 5.2)]).to_text()
    soil = survey([(2.0, wenner_r(80, 2))])
    records = _records([e01], [_isolated(e01, 12.0, no_plateau)], [soil])
    check = check_site(records, load_profile("iec-62305-3"), DAY)
    rules = {r.rule: r for r in check.results}
    assert rules["electrode-length"].severity.value == "watch"
    assert rules["electrode-count"].message.startswith("only 1 type A electrode")
    assert rules["traverse"].severity.value == "incomplete"
    assert "at least 134 m" in rules["traverse"].message


def test_profiles_outside_iec_do_not_judge_l1() -> None:
    e01 = rod("E-01", length=1.0)
    records = _records([e01], [_isolated(e01, 12.0)], [survey([(1.0, wenner_r(80, 1))])])
    check = check_site(records, load_profile("nfpa-780"), DAY)
    assert not [r for r in check.results if r.rule in ("electrode-length", "electrode-count")]
