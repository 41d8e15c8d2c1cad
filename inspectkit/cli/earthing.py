"""`inspectkit soil record|list|withdraw` and `inspectkit electrode size`: earthing records."""

from __future__ import annotations

from datetime import date, datetime
from typing import Annotated

import typer

from inspectkit.cli import lookups
from inspectkit.cli.calc import OrientationOption
from inspectkit.cli.common import DbOption, JsonOption, emit_json, fail, open_store
from inspectkit.earthing_jobs import (
    EarthingInputError,
    record_survey,
    size_electrode,
    withdraw_survey,
)
from inspectkit.earthing_values import read_survey
from inspectkit.engine.soil import analyse_survey, design_resistivity
from inspectkit.model import SoilSurvey
from inspectkit.profiles import EarthingFigures, ProfileError, load_profile
from inspectkit.store.record_queries import components_tagged, site_soil_readings, site_surveys

soil_app = typer.Typer(help="Wenner soil resistivity surveys of a site.", no_args_is_help=True)
electrode_app = typer.Typer(help="Earth electrodes' form and size.", no_args_is_help=True)

SiteOption = Annotated[str, typer.Option("--site", help="Site name, start of name, or id.")]
#: Inputs as the jobs name them → the options that give them.
_OPTIONS = {"probe_depth_m": "--depth", "chosen_spacing_m": "--choose", "date": "--date",
            "length_m": "--length", "diameter_m": "--diameter", "ring_radius_m": "--ring-radius"}


def _refused(exc: EarthingInputError) -> None:
    if exc.field == "record":  # a rule on the whole record: its message names the fields
        fail(str(exc).replace("chosen_spacing_m", "--choose"))
    option = _OPTIONS.get(exc.field, f"--{exc.field.replace('_', '-')}")
    fail(f"{option}: {exc}")


def _figures(site_profile: str) -> EarthingFigures:
    try:
        return load_profile(site_profile).earthing
    except ProfileError as exc:
        fail(str(exc))


@soil_app.command("record")
def record(
    ctx: typer.Context,
    site: SiteOption,
    points: Annotated[
        str,
        typer.Option("--points", help="Spacing a=reading R: '1 m=25.1; 2 m=11.9; 4 m=5.6'."),
    ],
    day: Annotated[
        datetime | None,
        typer.Option("--date", formats=["%Y-%m-%d"], help="Day of the survey (default: today)."),
    ] = None,
    direction: Annotated[
        str, typer.Option("--direction", help="Which way the line ran, e.g. 'N–S, east lawn'.")
    ] = "",
    depth: Annotated[str, typer.Option("--depth", help="Probe depth b, e.g. 0.2 m.")] = "",
    choose: Annotated[
        str, typer.Option("--choose", help="Spacing whose ρ is the site's design value.")
    ] = "",
    instrument: Annotated[
        str | None, typer.Option("--instrument", help="Serial or id of the earth tester.")
    ] = None,
    note: Annotated[str, typer.Option("--note", help="A note kept with the survey.")] = "",
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """Record a Wenner survey; print ρ at each spacing and what it says of the ground."""
    with open_store(ctx, db) as store:
        found = lookups.site(store, site)
        instrument_id = lookups.instrument(store, instrument).id if instrument else None
        try:
            survey = record_survey(
                store, found.id, day.date() if day else date.today(), points,
                direction=direction, depth=depth, chosen_spacing=choose,
                instrument_id=instrument_id, note=note,
            )  # fmt: skip
        except EarthingInputError as exc:
            _refused(exc)
        figures = _figures(found.profile)
    if json_out:
        emit_json(_survey_json(survey, figures))
        return
    for line in _survey_lines(survey, figures):
        typer.echo(line)


@soil_app.command("list")
def list_surveys(
    ctx: typer.Context, site: SiteOption, db: DbOption = None, json_out: JsonOption = False
) -> None:
    """A site's surveys with ρ at each spacing, and the design ρ the checks use."""
    with open_store(ctx, db) as store:
        found = lookups.site(store, site)
        surveys = site_surveys(store, found.id)
        design = design_resistivity(surveys, site_soil_readings(store, found.id))
        figures = _figures(found.profile)
    if json_out:
        emit_json(
            {
                "site": found.name,
                "surveys": [_survey_json(s, figures) for s in surveys],
                "design_resistivity_ohm_m": design.rho_ohm_m if design else None,
                "design_source": design.source if design else None,
            }
        )
        return
    if not surveys:
        typer.echo(f"{found.name}: no soil survey yet; record one with `inspectkit soil record`.")
    for survey in surveys:
        for line in _survey_lines(survey, figures):
            typer.echo(line)
        typer.echo("")
    typer.echo(f"design ρ: {design.text}" if design else "design ρ: none (no survey or reading)")


@soil_app.command("withdraw")
def withdraw(
    ctx: typer.Context,
    survey: Annotated[str, typer.Argument(help="The survey's id (or its start).")],
    db: DbOption = None,
) -> None:
    """Take back a survey recorded by mistake; the audit log keeps it."""
    with open_store(ctx, db) as store:
        found = lookups.by_id(store, SoilSurvey, survey, "SURVEY")
        withdraw_survey(store, found.id)
    typer.echo(f"survey of {found.date.isoformat()} withdrawn.")


def _survey_lines(survey: SoilSurvey, figures: EarthingFigures) -> list[str]:
    analysis = analyse_survey(survey, figures.wenner_form_tolerance, figures.layered_ratio)
    depth = f", probes {survey.probe_depth_m:g} m deep" if survey.probe_depth_m else ""
    lines = [f"{survey.date.isoformat()}  {survey.direction or '—'}{depth}  (id {survey.id[:8]})"]
    for row in analysis.rows:
        flag = "  (simple form off)" if row.forms_differ else ""
        chosen = "  ← chosen" if row.spacing_m == survey.chosen_spacing_m else ""
        lines.append(
            f"  a = {row.spacing_m:>5g} m   R = {row.resistance_ohm:>8.4g} Ω   "
            f"ρ = {row.rho_ohm_m:>7.4g} Ω·m{flag}{chosen}"
        )
    lines.append(f"  {analysis.message}")
    return lines


def _survey_json(survey: SoilSurvey, figures: EarthingFigures) -> dict[str, object]:
    analysis = analyse_survey(survey, figures.wenner_form_tolerance, figures.layered_ratio)
    return {
        "id": survey.id,
        "date": survey.date.isoformat(),
        "direction": survey.direction,
        "probe_depth_m": survey.probe_depth_m,
        "chosen_spacing_m": survey.chosen_spacing_m,
        "points": [list(p) for p in read_survey(survey.points)],
        "rho_ohm_m": [row.rho_ohm_m for row in analysis.rows],
        "layered": analysis.layered,
        "message": analysis.message,
    }


@electrode_app.command("size")
def size(
    ctx: typer.Context,
    site: SiteOption,
    tag: Annotated[str, typer.Option("--tag", help="The electrode's tag, e.g. E-03.")],
    orientation: OrientationOption = "",
    length: Annotated[str, typer.Option("--length", help="Length, e.g. 2.4 m or 8 ft.")] = "",
    diameter: Annotated[str, typer.Option("--diameter", help="Diameter, e.g. 16 mm.")] = "",
    ring_radius: Annotated[
        str, typer.Option("--ring-radius", help="A ring's mean radius, e.g. 9 m.")
    ] = "",
    db: DbOption = None,
) -> None:
    """Record an electrode's lie and size, for the l1 and expected-resistance checks."""
    with open_store(ctx, db) as store:
        found = lookups.site(store, site)
        matches = components_tagged(store, found.id, tag)
        if not matches:
            fail(f"--tag: no component tagged {tag!r} at {found.name}")
        try:
            electrode = size_electrode(
                store, matches[0], orientation=orientation, length=length, diameter=diameter,
                ring_radius=ring_radius,
            )  # fmt: skip
        except EarthingInputError as exc:
            _refused(exc)
    parts = [
        electrode.electrode_orientation.value if electrode.electrode_orientation else "",
        f"{electrode.length_m:g} m long" if electrode.length_m else "",
        f"{electrode.diameter_m * 1000:g} mm" if electrode.diameter_m else "",
        f"ring radius {electrode.ring_radius_m:g} m" if electrode.ring_radius_m else "",
    ]
    typer.echo(f"{electrode.tag}: {', '.join(p for p in parts if p) or 'no size recorded'}")


def register(app: typer.Typer) -> None:
    app.add_typer(soil_app, name="soil")
    app.add_typer(electrode_app, name="electrode")
