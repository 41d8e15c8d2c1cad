"""A site's earthing in a few lines: design ρ, surveys, electrodes against l1, traverses."""

from __future__ import annotations

from datetime import date

from rich.text import Text
from textual.widgets import Static

from inspectkit.engine.earthing_site import SiteEarthing, site_earthing
from inspectkit.engine.history import as_of
from inspectkit.model import SiteRecords
from inspectkit.profiles import ProfileError, load_profile
from inspectkit.tui.widgets.traverse_view import traverse_curve


def earthing_for(records: SiteRecords, today: date) -> SiteEarthing | None:
    """The site's earthing as of `today`, or None when its profile cannot be read."""
    try:
        profile = load_profile(records.site.profile)
    except ProfileError:
        return None
    return site_earthing(as_of(records, today), profile, today)


def earthing_text(earthing: SiteEarthing | None) -> Text:
    """The lines the panel shows; plain words beside every state."""
    text = Text()
    if earthing is None:
        return Text("The site's profile cannot be read, so its earthing is not judged.")
    if earthing.empty:
        return Text(
            "No soil survey, electrode size or traverse recorded yet: record them with "
            "`inspectkit soil record`, `electrode size` and `readings add --traverse`."
        )
    text.append("Design ρ: ", style="bold")
    text.append(f"{earthing.rho.text if earthing.rho else 'none yet'}\n")
    for survey, analysis in earthing.surveys:
        rhos = " · ".join(f"{row.rho_ohm_m:.3g}" for row in analysis.rows)
        spacings = " · ".join(f"{row.spacing_m:g}" for row in analysis.rows)
        text.append(f"Survey {survey.date.isoformat()} {survey.direction}: ", style="bold")
        text.append(f"ρ {rhos} Ω·m at {spacings} m\n  {analysis.message}\n")
    for item in earthing.electrodes:
        parts = []
        if item.length is not None:
            word = "SHORT" if item.length.short and not item.length.waived else (
                "waived" if item.length.waived else "ok"
            )
            parts.append(
                f"{item.length.what} {item.length.measure} {item.length.actual_m:g} m, "
                f"needs {item.length.required_m:.3g} m: {word}"
            )
        if item.expected is not None:
            measured = (
                f", measured {item.expected.measured_ohm:.3g} Ω"
                if item.expected.measured_ohm is not None else ""
            )
            far = " (far from it)" if item.expected.far else ""
            parts.append(f"expected {item.expected.expected_ohm:.3g} Ω{measured}{far}")
        if item.problem:
            parts.append(item.problem)
        if parts:
            text.append(f"{item.electrode.tag} ", style="bold")
            text.append("; ".join(parts) + "\n")
    for curve in earthing.traverses:
        text.append(f"{curve.tag} traverse ", style="bold")
        if curve.traverse is not None:
            text.append_text(traverse_curve(curve.traverse))
        judged = curve.judgement
        if judged is None:
            text.append(f"  cannot be judged: {curve.problem}\n")
        else:
            word = "plateau" if judged.valid else "NO PLATEAU"
            text.append(f"  {judged.value_ohm:.3g} Ω at 61.8 %, {word}\n")
    return text


class EarthingPanel(Static):
    """The earthing tab of the site screen; `show` fills it."""

    def show(self, earthing: SiteEarthing | None) -> None:
        self.update(earthing_text(earthing))
