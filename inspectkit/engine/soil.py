"""What a Wenner soil survey says: ρ at each spacing, uniform or layered, the design value.

Pure: takes the survey's numbers (or `SoilSurvey` records) and the profile's
tolerances, returns plain results with a sentence. The formulas are in
`engine.wenner` (IEEE Std 81); the thresholds come from the profile.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date

from inspectkit.earthing_values import read_survey
from inspectkit.engine.wenner import wenner_resistivity, wenner_resistivity_simple
from inspectkit.model import Quantity, Reading, SoilSurvey
from inspectkit.units import format_value


@dataclass(frozen=True)
class SpacingRow:
    """One spacing of a survey.

    Attributes:
        spacing_m: Probe spacing a in m.
        resistance_ohm: The reading R in Ω.
        rho_full_ohm_m: ρ by the full form, with the probes' depth (IEEE Std 81).
        rho_simple_ohm_m: ρ = 2π·a·R (IEEE Std 81).
        forms_differ: The two differ by more than the profile's tolerance: the
            probes are deep against the spacing, so use the full form.
    """

    spacing_m: float
    resistance_ohm: float
    rho_full_ohm_m: float
    rho_simple_ohm_m: float
    forms_differ: bool

    @property
    def rho_ohm_m(self) -> float:
        """The ρ to use: the full form, which is the simple one for shallow probes."""
        return self.rho_full_ohm_m


@dataclass(frozen=True)
class SurveyAnalysis:
    """A survey's ρ(a) and what it says about the ground.

    Attributes:
        rows: One per spacing, smallest first.
        layered: ρ varies across the spacings by more than the profile's factor.
        ratio: Highest ρ over lowest.
        message: A sentence for the inspector.
    """

    rows: tuple[SpacingRow, ...]
    layered: bool
    ratio: float
    message: str


def analyse_points(
    points: Sequence[tuple[float, float]],
    depth_m: float | None,
    form_tolerance: float,
    layered_ratio: float,
) -> SurveyAnalysis:
    """ρ at each spacing by both forms, and whether the soil looks uniform or layered.

    Apparent resistivity that changes with the spacing means the current met
    ground of another resistivity deeper down: larger spacings sample deeper
    (IEEE Std 81, as quoted). The threshold between "uniform" and "layered" is
    the profile's `layered_ratio` (our default 1.5).

    Raises:
        EarthingError: a spacing, reading or depth outside the formulas' domain.
    """
    depth = depth_m or 0.0
    rows = []
    for spacing, resistance in sorted(points):
        full = wenner_resistivity(spacing, resistance, depth)
        simple = wenner_resistivity_simple(spacing, resistance)
        rows.append(
            SpacingRow(spacing, resistance, full, simple, abs(full / simple - 1) > form_tolerance)
        )
    rhos = [row.rho_ohm_m for row in rows]
    ratio = max(rhos) / min(rhos)
    first, last = rows[0], rows[-1]
    span = f"{_rho(first.rho_ohm_m)} at {first.spacing_m:g} m to {_rho(last.rho_ohm_m)} at "
    span += f"{last.spacing_m:g} m"
    if len(rows) == 1:
        message = f"one spacing only: {_rho(first.rho_ohm_m)}; survey more spacings to see layers"
    elif ratio > layered_ratio:
        below = "more" if last.rho_ohm_m > first.rho_ohm_m else "less"
        message = (
            f"layered: ρ goes from {span} ({ratio:.1f} × across the survey, more than "
            f"{layered_ratio:g} ×): a {below} resistive layer lies below"
        )
    else:
        message = f"uniform: ρ from {span} (within {layered_ratio:g} ×)"
    flagged = [row.spacing_m for row in rows if row.forms_differ]
    if flagged:
        where = ", ".join(f"{a:g}" for a in flagged)
        message += (
            f"; at {where} m the probes are deep against the spacing and the simple "
            "form 2π·a·R is off by more than "
            f"{100 * form_tolerance:g} %: the full form is used"
        )
    return SurveyAnalysis(tuple(rows), len(rows) > 1 and ratio > layered_ratio, ratio, message)


def analyse_survey(
    survey: SoilSurvey, form_tolerance: float, layered_ratio: float
) -> SurveyAnalysis:
    """`analyse_points` for a stored survey."""
    points = read_survey(survey.points)
    return analyse_points(points, survey.probe_depth_m, form_tolerance, layered_ratio)


@dataclass(frozen=True)
class DesignResistivity:
    """The soil resistivity a site's electrodes are judged with, and where it came from.

    Attributes:
        rho_ohm_m: ρ in Ω·m.
        on: The day it was measured.
        source: `survey at 3 m`, `chosen spacing 4 m`, `highest of the survey`,
            or `soil resistivity reading`.
    """

    rho_ohm_m: float
    on: date
    source: str

    @property
    def text(self) -> str:
        return f"{_rho(self.rho_ohm_m)} ({self.source}, {self.on.isoformat()})"


def design_resistivity(
    surveys: Sequence[SoilSurvey],
    readings: Sequence[Reading] = (),
    length_m: float | None = None,
) -> DesignResistivity | None:
    """The site's design ρ: from its latest survey, else its latest soil resistivity reading.

    From the survey: the spacing the inspector chose; otherwise the spacing nearest
    the electrode's length (a Wenner reading at spacing a samples the ground to a
    depth of about a, common practice); with no length, the survey's highest ρ,
    which gives the longest l1 (our default: the safe side).

    Args:
        surveys: The site's surveys, in any order.
        readings: The site's readings; soil resistivity ones are the fallback.
        length_m: The electrode's length, when judging one electrode.
    """
    if surveys:
        latest = max(surveys, key=lambda s: (s.date, s.created_at))
        depth = latest.probe_depth_m or 0.0
        rhos = {a: wenner_resistivity(a, r, depth) for a, r in read_survey(latest.points)}
        chosen = latest.chosen_spacing_m
        if chosen is not None and chosen in rhos:
            return DesignResistivity(rhos[chosen], latest.date, f"chosen spacing {chosen:g} m")
        if length_m is not None:
            spacing = min(rhos, key=lambda a: (abs(a - length_m), -a))
            return DesignResistivity(rhos[spacing], latest.date, f"survey at {spacing:g} m")
        spacing = max(rhos, key=rhos.__getitem__)
        return DesignResistivity(rhos[spacing], latest.date, "highest of the survey")
    soil = [r for r in readings if r.quantity is Quantity.SOIL_RESISTIVITY and r.value]
    if not soil:
        return None
    last = max(soil, key=lambda r: r.taken_at)
    assert last.value is not None
    return DesignResistivity(last.value, last.taken_at.date(), "soil resistivity reading")


def _rho(value: float) -> str:
    return format_value(value, Quantity.SOIL_RESISTIVITY, digits=3)
