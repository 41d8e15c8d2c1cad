"""`inspectkit reading add`, `grade`, `not-inspected`, `photo add`: one walkdown entry each, saved
at once."""

from __future__ import annotations

import json
from datetime import UTC, datetime
from pathlib import Path
from typing import Annotated, Any

import typer

from inspectkit.cli import lookups
from inspectkit.cli.common import DbOption, Exit, JsonOption, emit_json, fail, open_store
from inspectkit.cli.readings import readings_app
from inspectkit.earthing_input import parse_traverse
from inspectkit.earthing_values import Traverse
from inspectkit.intake import ReadingRefused, reading_window, set_reading_window
from inspectkit.model import (
    DEFAULT_METHOD,
    JOINT_FOR,
    METHODS_FOR,
    Grade,
    Method,
    NotInspectedReason,
    Quantity,
    Severity,
    SoilCondition,
)
from inspectkit.repeats import RepeatError, mark_repeat
from inspectkit.store.record_queries import site_components
from inspectkit.units import UnitError, format_value
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.grades import clear_not_inspected, grade_component, mark_not_inspected
from inspectkit.walkdown.instruments import chosen_instruments, instrument_for
from inspectkit.walkdown.judging import ReadingOutcome
from inspectkit.walkdown.photos import attach_photos
from inspectkit.walkdown.readings import record_reading, withdraw_reading
from inspectkit.wording import counted

photo_app = typer.Typer(
    help="Photos: attach one, or a folder matched by time.", no_args_is_help=True
)

InspectionOption = Annotated[
    str, typer.Option("--inspection", help="Id of the draft inspection (or its start).")
]
TagOption = Annotated[str, typer.Option("--tag", help="Tag painted on the component, e.g. TJ-03.")]


def failed(outcome: ReadingOutcome) -> bool:
    """A reading that fails its limit, or is as bad (a lapsed instrument, an overdue test)."""
    return outcome.severity.rank >= Severity.FAIL.rank


def outcome_line(tag: str, outcome: ReadingOutcome) -> str:
    """`TJ-03 earth resistance, combined system: PASS 3.9 Ω ≤ 10 Ω · +12 % on 2026-03-03`.

    The method follows where the quantity can be measured more than one way.
    """
    reading = outcome.reading
    label = reading.quantity.label
    parts = [f"{tag} {label}: {outcome.verdict}" if tag else f"{label}: {outcome.verdict}"]
    if outcome.comparison:
        parts.append(outcome.comparison)
    if len(METHODS_FOR[reading.quantity]) > 1:
        parts.append(f"by {reading.method.value}")
    return " · ".join(parts)


def outcome_json(outcome: ReadingOutcome) -> dict[str, Any]:
    """What a script needs about one judged reading."""
    reading = outcome.reading
    return {
        "reading_id": reading.id,
        "quantity": reading.quantity.value,
        "value": reading.value,
        "over_range": reading.over_range,
        "shown": format_value(reading.value, reading.quantity, reading.over_range),
        "method": reading.method.value,
        "unreliable": reading.unreliable,
        "severity": outcome.severity.value,
        "passed": outcome.passed,
        "verdict": outcome.verdict,
        "limit": outcome.limit,
        "comparison": outcome.comparison,
        "messages": list(outcome.messages),
        "traverse": json.loads(reading.traverse) if reading.traverse else None,
    }


def add_reading(
    ctx: typer.Context,
    inspection: InspectionOption,
    tag: TagOption,
    quantity: Annotated[Quantity, typer.Option("--quantity", help="What was measured.")],
    value: Annotated[
        str,
        typer.Argument(
            help="What the instrument showed: 3.9, 180 mΩ, OL (leave out with --traverse)."
        ),
    ] = "",
    traverse: Annotated[
        str | None,
        typer.Option(
            "--traverse",
            help="Fall-of-potential traverse, P position=reading: '52%=10.1; 61.8%=10.3; "
            "72%=10.6' (or positions in m); its value at 61.8 % is the reading.",
        ),
    ] = None,
    current_probe: Annotated[
        str | None,
        typer.Option("--current-probe", help="E–C distance for --traverse, e.g. 50 m."),
    ] = None,
    method: Annotated[
        Method | None,
        typer.Option("--method", help="How it was measured (default: the usual one for it)."),
    ] = None,
    instrument: Annotated[
        str | None,
        typer.Option(
            "--instrument",
            help="Serial or id (default: the one chosen for the kind that measures it).",
        ),
    ] = None,
    soil: Annotated[
        SoilCondition | None,
        typer.Option("--soil", help="Ground state for an earth reading (default: the visit's)."),
    ] = None,
    doubtful: Annotated[
        bool, typer.Option("--doubtful", help="Mark the reading doubtful: kept, not a pass.")
    ] = False,
    note: Annotated[str, typer.Option("--note", help="A note kept with the reading.")] = "",
    taken_at: Annotated[
        datetime | None,
        typer.Option(
            "--taken-at",
            formats=["%Y-%m-%dT%H:%M", "%Y-%m-%dT%H:%M:%S", "%Y-%m-%d %H:%M"],
            help="When it was read, UTC, e.g. 2026-06-01T10:30 (default: now), for a paper sheet.",
            show_default=False,
        ),
    ] = None,
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """Save one reading and print its verdict; typing it again corrects it; exit 1 on FAIL."""
    series = typed_traverse(traverse, current_probe)
    with open_store(ctx, db) as store:
        visit, component = lookups.visit_part(store, inspection, tag)
        if instrument is not None:
            instrument_id: str | None = lookups.instrument(store, instrument).id
        else:
            usual = method or DEFAULT_METHOD[quantity]
            found = instrument_for(chosen_instruments(store), quantity, usual)
            instrument_id = found.id if found else None
        if soil is None and quantity in JOINT_FOR:
            soil = visit.soil
        try:
            outcome = record_reading(
                store,
                visit.id,
                component.id,
                quantity,
                value,
                method=method,
                instrument_id=instrument_id,
                soil=soil,
                note=note,
                unreliable=doubtful,
                taken_at=taken_at.replace(tzinfo=UTC) if taken_at is not None else None,
                traverse=series,
            )
        except WalkdownError as exc:
            lookups.refused(exc)
    if json_out:
        emit_json({"tag": component.tag, **outcome_json(outcome)})
    else:
        typer.echo(outcome_line(component.tag, outcome))
        if outcome.severity is not Severity.OK:
            for message in outcome.messages:
                typer.echo(f"  {message}")
    raise typer.Exit(int(Exit.ACT if failed(outcome) else Exit.OK))


def typed_traverse(points: str | None, current_probe: str | None) -> Traverse | None:
    """The traverse given by `--traverse` and `--current-probe`, or a refusal naming the option."""
    if points is None and current_probe is None:
        return None
    if points is None or current_probe is None:
        fail("--traverse and --current-probe go together; give both, or neither")
    try:
        return parse_traverse(points, current_probe)
    except UnitError as exc:
        fail(f"--traverse: {exc}")


def withdraw_command(
    ctx: typer.Context,
    inspection: InspectionOption,
    tag: TagOption,
    quantity: Annotated[Quantity, typer.Option("--quantity", help="What was measured.")],
    db: DbOption = None,
) -> None:
    """Take back a reading saved by mistake; the audit log keeps it, bundles carry it."""
    with open_store(ctx, db) as store:
        visit, component = lookups.visit_part(store, inspection, tag)
        try:
            reading = withdraw_reading(store, visit.id, component.id, quantity)
        except WalkdownError as exc:
            lookups.refused(exc)
    shown = format_value(reading.value, quantity, reading.over_range)
    typer.echo(f"{component.tag}: {shown} ({quantity.label}) withdrawn.")


def grade_command(
    ctx: typer.Context,
    inspection: InspectionOption,
    tag: TagOption,
    grade: Annotated[Grade, typer.Option("--grade", help="How the component was found.")],
    text: Annotated[
        str, typer.Option("--text", help="What was found; needed unless it is sound.")
    ] = "",
    remedy: Annotated[str, typer.Option("--remedy", help="The remedial action.")] = "",
    due: Annotated[
        str, typer.Option("--due", help="Remedy due by, YYYY-MM-DD.", show_default=False)
    ] = "",
    category: Annotated[str, typer.Option("--category", help="e.g. corrosion, fixings.")] = "",
    same_as: Annotated[
        str,
        typer.Option(
            "--same-as",
            help="The same fault as an earlier open finding, still present: its id, or "
            "'open' for the component's one open finding. That one is closed.",
        ),
    ] = "",
    db: DbOption = None,
) -> None:
    """Grade a component for this visit; grading it again corrects the grade."""
    with open_store(ctx, db) as store:
        visit, component = lookups.visit_part(store, inspection, tag)
        try:
            with store.transaction():  # a repeat that cannot be linked leaves no grade
                finding = grade_component(
                    store, visit.id, component.id, grade, text, remedy, due or None, category
                )
                if same_as:
                    earlier = lookups.earlier_open(store, visit, component, same_as)
                    finding = mark_repeat(store, finding.id, earlier)
        except WalkdownError as exc:
            lookups.refused(exc)
        except RepeatError as exc:
            fail(f"--same-as: {exc}")
    line = f"{component.tag}: {finding.grade.value.replace('_', ' ')}"
    if finding.text:
        line += f", {finding.text}"
    if finding.remedial_action:
        line += f"; remedy: {finding.remedial_action}"
    if finding.due_by:
        line += f", due by {finding.due_by.isoformat()}"
    if finding.same_as_id:
        line += (
            f"; the same fault as finding {finding.same_as_id}, which is closed as still present"
        )
    typer.echo(line)


def not_inspected_command(
    ctx: typer.Context,
    inspection: InspectionOption,
    tag: TagOption,
    reason: Annotated[
        NotInspectedReason | None,
        typer.Option("--reason", help="Why it could not be inspected.", show_default=False),
    ] = None,
    text: Annotated[
        str, typer.Option("--text", help="What stopped it, in words; needed with 'other'.")
    ] = "",
    clear: Annotated[
        bool, typer.Option("--clear", help="Take back the mark: the component is to grade.")
    ] = False,
    db: DbOption = None,
) -> None:
    """Mark a component not inspected on this visit, and why; it stands instead of a grade."""
    with open_store(ctx, db) as store:
        visit, component = lookups.visit_part(store, inspection, tag)
        try:
            if clear:
                clear_not_inspected(store, visit.id, component.id)
            elif reason is None:
                fail("--reason: say why it was not inspected: " + _REASONS)
            else:
                mark = mark_not_inspected(store, visit.id, component.id, reason, text)
        except WalkdownError as exc:
            lookups.refused(exc)
    if clear:
        typer.echo(f"{component.tag}: not-inspected mark taken back; grade it.")
    else:
        typer.echo(f"{component.tag}: not inspected ({mark.why}).")


_REASONS = ", ".join(r.value for r in NotInspectedReason)


def window_command(
    ctx: typer.Context,
    hours: Annotated[
        float | None,
        typer.Argument(help="Hours either side of the visit's day (0 to 48); none: show it."),
    ] = None,
    db: DbOption = None,
) -> None:
    """How far outside its visit's day a reading's time may lie, on every way in."""
    with open_store(ctx, db) as store:
        if hours is not None:
            try:
                set_reading_window(store, hours)
            except ReadingRefused as exc:
                fail(f"HOURS: {exc}")
        window = reading_window(store)
    typer.echo(
        f"Readings are accepted from {window.total_seconds() / 3600:g} h before a visit's day "
        "to as long after it."
    )


@photo_app.command("add")
def add_photo(
    ctx: typer.Context,
    path: Annotated[
        Path, typer.Argument(help="A photo file, or a folder whose new photos are matched by time.")
    ],
    inspection: InspectionOption,
    tag: Annotated[
        str | None, typer.Option("--tag", help="Component the photo shows (a single file).")
    ] = None,
    caption: Annotated[str, typer.Option("--caption", help="Caption for a single file.")] = "",
    db: DbOption = None,
) -> None:
    """Attach a photo to the visit, or a folder's new photos to the readings nearest in time."""
    with open_store(ctx, db) as store:
        visit = lookups.inspection(store, inspection)
        component = lookups.component_by_tag(store, visit.id, tag) if tag else None
        try:
            matches = attach_photos(
                store, visit.id, path, component.id if component else None, caption
            )
        except WalkdownError as exc:
            lookups.refused(exc)
        tags = {c.id: c.tag for c in site_components(store, visit.site_id)}
    for match in matches:
        where = tags.get(match.component_id or "", "the inspection only")
        typer.echo(f"{match.photo.original_name} → {where}")
    typer.echo(f"{counted(len(matches), 'photo')} attached.")


def register(app: typer.Typer) -> None:
    # `readings add` beside `readings import`; `reading add` is taken too, as people type it.
    readings_app.command("add")(add_reading)
    readings_app.command("withdraw")(withdraw_command)
    readings_app.command("window")(window_command)
    app.add_typer(readings_app, name="reading", hidden=True)
    app.command("grade")(grade_command)
    app.command("not-inspected")(not_inspected_command)
    app.add_typer(photo_app, name="photo")
