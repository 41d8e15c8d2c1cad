"""The report's earthing section as plain data: surveys, electrode lengths against l1, traverses.

Worked out from the engine's `site_earthing`, in words and formatted figures, so
the renderer only lays it out and the preview prints the same lines.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from inspectkit.engine.earthing_site import SiteEarthing, TraverseCurve, site_earthing
from inspectkit.engine.history import as_of
from inspectkit.engine.soil import SurveyAnalysis
from inspectkit.model import SiteRecords, SoilSurvey
from inspectkit.profiles import Profile


@dataclass(frozen=True)
class SurveyBlock:
    """One Wenner survey: (a m, R Ω, ρ Ω·m, flag) rows and what it says."""

    title: str
    rows: tuple[tuple[float, float, float, str], ...]
    message: str


@dataclass(frozen=True)
class TraverseBlock:
    """One traverse: (P as % of E–C, Ω) points, the value at 61.8 % and the plateau's verdict."""

    tag: str
    current_probe_m: float
    points: tuple[tuple[float, float], ...]
    value_ohm: float | None
    tolerance: float
    verdict: str


@dataclass(frozen=True)
class EarthingReport:
    """What the earthing section shows.

    Attributes:
        design: The design ρ in words, with where it came from.
        surveys: The site's soil surveys, oldest first.
        electrodes: Rows (tag, form, length, required, result, expected, measured).
        traverses: The traverses taken at this visit.
        notes: Sentences for electrodes that could not be checked (ρ beyond Figure 2).
    """

    design: str
    surveys: tuple[SurveyBlock, ...]
    electrodes: tuple[tuple[str, str, str, str, str, str, str], ...]
    traverses: tuple[TraverseBlock, ...]
    notes: tuple[str, ...] = ()

    def lines(self) -> tuple[str, ...]:
        """The section as plain text lines, for the preview."""
        out = [f"Design soil resistivity: {self.design}"]
        for survey in self.surveys:
            rhos = ", ".join(f"{a:g} m: {rho:.3g} Ω·m" for a, _, rho, _ in survey.rows)
            out.append(f"{survey.title}: {rhos}. {survey.message}")
        out += [f"{r[0]} {r[1]}: {r[2]} against {r[3]}: {r[4]}" for r in self.electrodes]
        out += [f"{t.tag} traverse: {t.verdict}" for t in self.traverses]
        return (*out, *self.notes)


def earthing_report(
    records: SiteRecords, profile: Profile, day: date, inspection_id: str
) -> EarthingReport | None:
    """The earthing section of a report on one visit; None when the site has nothing to show.

    Args:
        records: The site's records as the report sees them (up to the visit).
        inspection_id: The visit; only its traverses are drawn.
    """
    earthing = site_earthing(as_of(records, day), profile, day)
    if earthing.empty:
        return None
    return EarthingReport(
        design=earthing.rho.text if earthing.rho else "none recorded",
        surveys=tuple(_survey(s, a) for s, a in earthing.surveys),
        electrodes=_electrode_rows(earthing),
        traverses=tuple(
            _traverse(curve, profile.earthing.plateau_tolerance)
            for curve in earthing.traverses
            if curve.reading.inspection_id == inspection_id and curve.traverse is not None
        ),
        notes=tuple(f"{e.electrode.tag}: {e.problem}" for e in earthing.electrodes if e.problem),
    )


def _survey(survey: SoilSurvey, analysis: SurveyAnalysis) -> SurveyBlock:
    depth = f", probes {survey.probe_depth_m:g} m deep" if survey.probe_depth_m else ""
    title = f"Survey of {survey.date.isoformat()}" + (
        f", {survey.direction}" if survey.direction else ""
    ) + depth
    rows = tuple(
        (row.spacing_m, row.resistance_ohm, row.rho_ohm_m,
         "simple form off" if row.forms_differ else "")
        for row in analysis.rows
    )  # fmt: skip
    return SurveyBlock(title, rows, analysis.message)


def _electrode_rows(earthing: SiteEarthing) -> tuple[tuple[str, str, str, str, str, str, str], ...]:
    rows = []
    for item in earthing.electrodes:
        if item.length is None and item.expected is None:
            continue
        length = item.length
        if length is None:
            form, actual, required, result = "", "not recorded", "", "not checked"
        else:
            form = length.what
            actual = f"{length.measure} {length.actual_m:g} m"
            required = f"{length.required_m:.3g} m (l1 {length.l1_m:.3g} m)"
            result = "short" if length.short and not length.waived else (
                "short, waived below the resistance limit" if length.waived else "long enough"
            )
        expected = f"{item.expected.expected_ohm:.3g} Ω" if item.expected else "—"
        measured = (
            f"{item.expected.measured_ohm:.3g} Ω"
            if item.expected and item.expected.measured_ohm is not None else "—"
        )
        if item.expected is not None and item.expected.far:
            measured += " (far from expected: look at the connection)"
        rows.append((item.electrode.tag, form, actual, required, result, expected, measured))
    return tuple(rows)


def _traverse(curve: TraverseCurve, tolerance: float) -> TraverseBlock:
    traverse = curve.traverse
    assert traverse is not None  # the caller keeps only traverses that could be read
    judged = curve.judgement
    return TraverseBlock(
        tag=curve.tag,
        current_probe_m=traverse.current_probe_m,
        points=tuple((100 * f, r) for f, r in traverse.fractions),
        value_ohm=judged.value_ohm if judged else None,
        tolerance=tolerance,
        verdict=judged.message if judged else f"cannot be judged: {curve.problem}",
    )
