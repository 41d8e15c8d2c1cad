"""A site's earthing as a whole: its surveys, its design ρ, each electrode's checks, traverses.

`site_earthing` gathers it once for the report and the site screen; the rules at
the end turn it into `check` results. The traverse rule also judges a reading the
moment it is typed (it is one of the series rules).
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from datetime import date
from typing import TYPE_CHECKING

from inspectkit.earthing_values import SeriesError, Traverse, read_traverse
from inspectkit.engine.electrodes import (
    ExpectedResistance,
    LengthCheck,
    TraverseJudgement,
    expected_resistance,
    judge_traverse,
    length_check,
)
from inspectkit.engine.formula_inputs import EarthingError
from inspectkit.engine.history import in_service
from inspectkit.engine.soil import (
    DesignResistivity,
    SurveyAnalysis,
    analyse_survey,
    design_resistivity,
)
from inspectkit.model import (
    Component,
    ComponentKind,
    EarthingArrangement,
    Quantity,
    Reading,
    Severity,
    SiteRecords,
    SoilSurvey,
)
from inspectkit.profiles import EarthingFigures, Profile

if TYPE_CHECKING:
    from inspectkit.engine.results import Result
    from inspectkit.engine.site_facts import SiteFacts

#: Least number of type A electrodes (IEC 62305-3 clause 5.4.2.1, as quoted).
MIN_TYPE_A_ELECTRODES = 2


@dataclass(frozen=True)
class ElectrodeEarthing:
    """One electrode's earthing checks.

    Attributes:
        electrode: The electrode.
        rho: The design ρ it is judged with, or None when the site has none.
        length: Its length (or ring radius) against l1, or None.
        expected: Dwight's estimate against the measurement, or None.
        measured: Its latest isolated reading, or None.
        problem: Why a check could not be made (ρ beyond Figure 2), or "".
    """

    electrode: Component
    rho: DesignResistivity | None
    length: LengthCheck | None
    expected: ExpectedResistance | None
    measured: Reading | None
    problem: str = ""


@dataclass(frozen=True)
class TraverseCurve:
    """A reading taken by traverse, and what its traverse proves.

    Attributes:
        reading: The reading.
        tag: Its component's tag.
        traverse: The stored traverse, or None when it cannot be read.
        judgement: The plateau check, or None with `problem` saying why.
        problem: Why the traverse cannot be judged, or "".
    """

    reading: Reading
    tag: str
    traverse: Traverse | None
    judgement: TraverseJudgement | None
    problem: str = ""


@dataclass(frozen=True)
class SiteEarthing:
    """Everything the earthing checks say about one site."""

    surveys: tuple[tuple[SoilSurvey, SurveyAnalysis], ...]
    rho: DesignResistivity | None
    electrodes: tuple[ElectrodeEarthing, ...]
    traverses: tuple[TraverseCurve, ...]

    @property
    def empty(self) -> bool:
        """Nothing to show: no survey, no electrode size recorded, no traverse."""
        return not self.surveys and not self.traverses and not any(
            e.length or e.expected for e in self.electrodes
        )


def site_earthing(
    records: SiteRecords, profile: Profile, today: date, latest: dict | None = None
) -> SiteEarthing:
    """Gather a site's earthing checks as of `today` (records already cut to that day).

    Args:
        latest: The latest reading by (component id, quantity), if the caller has it.
    """
    figures = profile.earthing
    if latest is None:
        latest = {}
        for reading in sorted(records.readings, key=lambda r: r.taken_at):
            latest[(reading.component_id, reading.quantity)] = reading
    surveys = tuple(
        (s, analyse_survey(s, figures.wenner_form_tolerance, figures.layered_ratio))
        for s in sorted(records.surveys, key=lambda s: (s.date, s.created_at))
    )
    # Read once: a site's readings are thousands, its electrodes a dozen.
    soil = [r for r in records.readings if r.quantity is Quantity.SOIL_RESISTIVITY]
    electrodes = tuple(
        _electrode(records, soil, c, latest.get((c.id, Quantity.EARTH_ISOLATED)), figures)
        for c in records.components
        if c.kind is ComponentKind.EARTH_ELECTRODE and in_service(c, today)
    )
    tags = {c.id: c for c in records.components}
    curves = tuple(
        traverse_curve(r, tags.get(r.component_id), figures)
        for r in latest.values()
        if r.traverse is not None
    )
    rho = design_resistivity(records.surveys, soil)
    return SiteEarthing(surveys, rho, electrodes, tuple(sorted(curves, key=lambda c: c.tag)))


def _electrode(
    records: SiteRecords,
    soil: list[Reading],
    electrode: Component,
    measured: Reading | None,
    figures: EarthingFigures,
) -> ElectrodeEarthing:
    rho = design_resistivity(records.surveys, soil, electrode.length_m)
    if rho is None:
        return ElectrodeEarthing(electrode, None, None, None, measured)
    value = None if measured is None or measured.over_range else measured.value
    expected = expected_resistance(electrode, rho.rho_ohm_m, value, figures.expected_factor)
    if not figures.min_length_check:
        return ElectrodeEarthing(electrode, rho, None, expected, measured)
    try:
        length = length_check(
            electrode, records.site.protection_level, rho.rho_ohm_m, value,
            figures.length_waiver_ohm,
        )  # fmt: skip
    except EarthingError as exc:
        return ElectrodeEarthing(electrode, rho, None, expected, measured, str(exc))
    return ElectrodeEarthing(electrode, rho, length, expected, measured)


def traverse_curve(
    reading: Reading, component: Component | None, figures: EarthingFigures
) -> TraverseCurve:
    """A reading's traverse, read back and judged; a damaged one is named, never fatal."""
    tag = component.tag if component else "?"
    try:
        traverse = read_traverse(reading.traverse or "")
    except SeriesError as exc:
        return TraverseCurve(reading, tag, None, None, str(exc))
    size = component.length_m if component else None
    try:
        judgement = judge_traverse(
            traverse, figures.plateau_tolerance, size, figures.current_probe_factor
        )
    except EarthingError as exc:
        return TraverseCurve(reading, tag, traverse, None, str(exc))
    return TraverseCurve(reading, tag, traverse, judgement)


# ---------------------------------------------------------------- rules


def traverse_plateaus(facts: SiteFacts) -> Iterator[Result]:
    """A latest reading whose traverse has no plateau proves nothing yet: incomplete."""
    for reading in facts.latest.values():
        if reading.traverse is None:
            continue
        component = facts.components.get(reading.component_id)
        curve = traverse_curve(reading, component, facts.profile.earthing)
        if curve.judgement is not None and curve.judgement.valid:
            continue
        why = curve.problem or (curve.judgement.message if curve.judgement else "")
        yield facts.result(
            Severity.INCOMPLETE,
            "traverse",
            f"{curve.tag} {reading.quantity.label} by traverse: {why}.",
            **facts.about(reading),
        )


def electrode_checks(facts: SiteFacts) -> Iterator[Result]:
    """Electrodes shorter than IEC 62305-3 asks, fewer than two type A, far from Dwight.

    All advice (`watch`): the standard's minimum can be waived, and a measurement
    far from the estimate is a reason to look, not a failure.
    """
    earthing = site_earthing(facts.records, facts.profile, facts.today, facts.latest)
    for item in earthing.electrodes:
        about = {"component_id": item.electrode.id, "component_tag": item.electrode.tag}
        if item.problem:
            yield facts.result(Severity.WATCH, "electrode-length", f"{item.problem}.", **about)
        if item.length is not None and item.length.short and not item.length.waived:
            yield facts.result(
                Severity.WATCH, "electrode-length", f"{item.length.message}.",
                value=item.length.actual_m, limit=item.length.required_m, unit="m", **about,
            )  # fmt: skip
        if item.expected is not None and item.expected.far:
            yield facts.result(
                Severity.WATCH, "electrode-expected", f"{item.expected.message}.",
                value=item.expected.measured_ohm, unit="Ω", **about,
            )  # fmt: skip
    type_a = [
        e for e in earthing.electrodes
        if e.electrode.electrode_type is not None
        and e.electrode.electrode_type.arrangement is EarthingArrangement.A
    ]  # fmt: skip
    if facts.profile.earthing.min_length_check and 0 < len(type_a) < MIN_TYPE_A_ELECTRODES:
        yield facts.result(
            Severity.WATCH,
            "electrode-count",
            f"only {len(type_a)} type A electrode in service; IEC 62305-3 clause 5.4.2.1 asks "
            f"for at least {MIN_TYPE_A_ELECTRODES}.",
        )
