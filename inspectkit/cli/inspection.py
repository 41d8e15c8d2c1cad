"""`inspectkit inspection start|show|details|missing|finish|discard`: a walkdown by commands."""

from __future__ import annotations

from collections.abc import Iterator
from datetime import date, datetime
from enum import StrEnum
from typing import Annotated, Any

import typer

from inspectkit.cli import lookups
from inspectkit.cli.common import DbOption, Exit, JsonOption, emit_json, open_store
from inspectkit.cli.entries import outcome_json, outcome_line
from inspectkit.engine.walking import Stop
from inspectkit.model import Inspection, Inspector, Site
from inspectkit.store.preferences import Preferences
from inspectkit.store.record_queries import site_inspections
from inspectkit.walkdown.completion import Missing, finish_inspection, missing_for_completion
from inspectkit.walkdown.continuing import SavedEntries, saved_entries
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.visit import (
    DETAIL_LABELS,
    discard_inspection,
    set_details,
    set_inspector,
    start_inspection,
    walk_for,
)
from inspectkit.wording import counted

inspection_app = typer.Typer(
    help="Inspections: start or continue a walkdown, see it, note its details, finish it.",
    no_args_is_help=True,
)

IdArgument = Annotated[str, typer.Argument(help="Inspection id (or its start).")]


class StartKind(StrEnum):
    """The kinds a walkdown starts as; an amendment starts from a signed report instead."""

    VISUAL = "visual"
    COMPLETE = "complete"
    POST_STRIKE = "post_strike"
    INITIAL = "initial"


@inspection_app.command("start")
def start(
    ctx: typer.Context,
    site: Annotated[str, typer.Option("--site", help="Site name, start of name, or id.")],
    kind: Annotated[StartKind, typer.Option("--kind", help="Why the visit is made.")],
    inspector: Annotated[
        str | None,
        typer.Option("--inspector", help="Name or id (default: the one chosen in Settings)."),
    ] = None,
    day: Annotated[
        datetime | None,
        typer.Option(
            "--date",
            formats=["%Y-%m-%d"],
            help="Day of the visit (default: today).",
            show_default=False,
        ),
    ] = None,
    new: Annotated[
        bool,
        typer.Option(
            "--new",
            help="Start a second visit even though a finished draft of that kind and day "
            "exists (it is continued otherwise).",
        ),
    ] = False,
    db: DbOption = None,
) -> None:
    """Start a walkdown and print its id; a site's open draft is continued, never doubled.

    A finished draft of the same kind on the same day is opened again and continued,
    so one visit is one inspection and one report.
    """
    with open_store(ctx, db) as store:
        found = lookups.site(store, site)
        inspector_id = (
            lookups.inspector(store, inspector).id
            if inspector is not None
            else Preferences(store).inspector_id
        )
        known = {v.id: v for v in site_inspections(store, found.id)}
        try:
            visit = start_inspection(
                store,
                found.id,
                kind.value,
                inspector_id,
                day.date() if day is not None else date.today(),
                continue_draft=not new,
            )
        except WalkdownError as exc:
            lookups.refused(exc)
    if visit.id in known:
        other = visit.kind.value != kind.value or (day is not None and visit.date != day.date())
        state = "finished" if known[visit.id].finished else "open"
        typer.echo(
            f"Continuing the {state} {visit.kind.value} draft of {visit.date.isoformat()}"
            + ("; finish it before starting another." if other else ".")
            + (" It is open again: finish it once more when done." if state == "finished" else "")
            + ("" if visit.inspector_id else " No inspector on it: give --inspector."),
            err=True,
        )
    typer.echo(visit.id)


@inspection_app.command("show")
def show(
    ctx: typer.Context, inspection: IdArgument, db: DbOption = None, json_out: JsonOption = False
) -> None:
    """The walk in order, with what is entered and saved and each reading's verdict."""
    with open_store(ctx, db) as store:
        visit = lookups.inspection(store, inspection)
        site = store.get(Site, visit.site_id)
        try:
            stops = walk_for(store, visit.id)
            saved = saved_entries(store, visit.id)
            missing = missing_for_completion(store, visit.id)
        except WalkdownError as exc:
            lookups.refused(exc)
    name = site.name if site else visit.site_id
    if json_out:
        emit_json(
            {
                "inspection": _visit_json(visit, name),
                "stops": [_stop_json(stop, saved) for stop in stops],
                "missing": [_missing_json(m) for m in missing],
            }
        )
        return
    for line in _render(visit, name, stops, saved, missing):
        typer.echo(line)


def _text_option(flag: str, help_text: str) -> Any:
    return typer.Option(flag, help=f"{help_text} An empty text clears it.", show_default=False)


@inspection_app.command("details")
def details(
    ctx: typer.Context,
    inspection: IdArgument,
    weather: Annotated[
        str | None, _text_option("--weather", "The weather during the visit.")
    ] = None,
    not_inspected: Annotated[
        str | None, _text_option("--not-inspected", "What could not be inspected, and why.")
    ] = None,
    accompanied_by: Annotated[
        str | None, _text_option("--accompanied-by", "Who went round with the inspector.")
    ] = None,
    changes: Annotated[
        str | None,
        _text_option("--changes", "Changes to the structure since the last visit."),
    ] = None,
    notes: Annotated[str | None, _text_option("--notes", "Anything else about the visit.")] = None,
    inspector: Annotated[
        str | None,
        typer.Option(
            "--inspector", help="Who inspected: name or id; set or changed until it is signed."
        ),
    ] = None,
    db: DbOption = None,
) -> None:
    """Record the visit's details the report prints, then show all of them as recorded.

    Options not given keep what is recorded; with none, the details are only shown.
    """
    with open_store(ctx, db) as store:
        visit = lookups.inspection(store, inspection)
        try:
            with store.transaction():  # all the options given, or none
                if inspector is not None:
                    set_inspector(store, visit.id, lookups.inspector(store, inspector).id)
                visit = set_details(
                    store,
                    visit.id,
                    weather=weather,
                    not_inspected=not_inspected,
                    accompanied_by=accompanied_by,
                    changes_since_last=changes,
                    notes=notes,
                )
        except WalkdownError as exc:
            lookups.refused(exc)
        who = store.get(Inspector, visit.inspector_id) if visit.inspector_id else None
    typer.echo(f"  {'Inspector:':<{_DETAIL_WIDTH}} {who.name if who else '(none)'}")
    for line in _detail_lines(visit, blanks=True):
        typer.echo(line)


@inspection_app.command("discard")
def discard(
    ctx: typer.Context,
    inspection: IdArgument,
    yes: Annotated[
        bool, typer.Option("--yes", help="Discard without asking (for scripts).")
    ] = False,
    db: DbOption = None,
) -> None:
    """Discard a draft visit with its readings, findings and photos; a signed one never.

    The audit log keeps everything discarded, and a bundle carries the discard to the
    other laptops as it carries a withdrawn reading.
    """
    with open_store(ctx, db) as store:
        visit = lookups.inspection(store, inspection)
        site = store.get(Site, visit.site_id)
        where = site.name if site else visit.site_id
        what = f"the {visit.kind.value} draft of {visit.date.isoformat()} at {where}"
        if not yes and not typer.confirm(f"Discard {what} and everything recorded in it?"):
            typer.echo("Nothing discarded.")
            raise typer.Exit(int(Exit.ACT))
        try:
            discard_inspection(store, visit.id)
        except WalkdownError as exc:
            lookups.refused(exc)
    typer.echo(f"Discarded {what}; the audit log keeps it.")


@inspection_app.command("missing")
def missing(
    ctx: typer.Context, inspection: IdArgument, db: DbOption = None, json_out: JsonOption = False
) -> None:
    """What the visit still lacks before it is complete; exit 1 while anything is missing."""
    with open_store(ctx, db) as store:
        visit = lookups.inspection(store, inspection)
        try:
            items = missing_for_completion(store, visit.id)
        except WalkdownError as exc:
            lookups.refused(exc)
    if json_out:
        emit_json([_missing_json(m) for m in items])
    else:
        for line in _missing_lines(items):
            typer.echo(line)
    raise typer.Exit(int(Exit.ACT if items else Exit.OK))


@inspection_app.command("finish")
def finish(
    ctx: typer.Context,
    inspection: IdArgument,
    anyway: Annotated[
        bool, typer.Option("--anyway", help="Mark it complete even though something is missing.")
    ] = False,
    reconnected: Annotated[
        bool,
        typer.Option(
            "--reconnected",
            help="Confirm every test joint opened for an isolated reading was reconnected "
            "and re-tested.",
        ),
    ] = False,
    not_reconnected: Annotated[
        str,
        typer.Option(
            "--not-reconnected", help="Why the opened test joints were not all reconnected."
        ),
    ] = "",
    db: DbOption = None,
) -> None:
    """List what is missing, then mark the visit complete; exit 1 (unchanged) if something is.

    A visit that opened test joints is marked complete only with --reconnected, or
    with --not-reconnected and the reason; the report prints which.
    """
    with open_store(ctx, db) as store:
        visit = lookups.inspection(store, inspection)
        try:
            items = missing_for_completion(store, visit.id)
            for line in _missing_lines(items):
                typer.echo(line)
            if items and not anyway:
                typer.echo("Not marked complete: enter what is missing, or give --anyway.")
                raise typer.Exit(int(Exit.ACT))
            finish_inspection(
                store, visit.id, reconnected=reconnected, not_reconnected=not_reconnected
            )
        except WalkdownError as exc:
            lookups.refused(exc)
    typer.echo(f"Inspection {visit.id} marked complete.")


# ------------------------------------------------------------------ output


def _missing_lines(items: list[Missing]) -> Iterator[str]:
    if not items:
        yield "Nothing missing: every component is graded and every test taken."
        return
    yield f"Still missing ({len(items)}):"
    for item in items:
        yield f"  • {item.what}"


def _missing_json(item: Missing) -> dict[str, Any]:
    return {"tag": item.component.tag if item.component else None, "what": item.what}


def _visit_json(visit: Inspection, site_name: str) -> dict[str, Any]:
    return {
        "id": visit.id,
        "site_id": visit.site_id,
        "site": site_name,
        "kind": visit.kind.value,
        "date": visit.date.isoformat(),
        "state": visit.state.value,
        "finished": visit.finished,
        "soil": visit.soil.value if visit.soil else None,
        "inspector_id": visit.inspector_id,
        **{name: getattr(visit, name) for name in DETAIL_LABELS},
    }


def _stop_json(stop: Stop, saved: SavedEntries) -> dict[str, Any]:
    component = stop.component
    finding = saved.findings.get(component.id)
    return {
        "tag": component.tag,
        "component_id": component.id,
        "kind": component.kind.value,
        "depth": stop.depth,
        "readings": [
            {"quantity": q.value, **outcome_json(outcome)}
            if (outcome := saved.readings.get((component.id, q)))
            else {"quantity": q.value, "reading_id": None}
            for q in stop.quantities
        ],
        "finding": None
        if finding is None
        else {
            "id": finding.id,
            "grade": finding.grade.value,
            "text": finding.text,
            "remedial_action": finding.remedial_action,
            "due_by": finding.due_by.isoformat() if finding.due_by else None,
        },
        "photos": saved.photos.get(component.id, 0),
        "not_inspected": None
        if (mark := saved.not_inspected.get(component.id)) is None
        else {"reason": mark.reason.value, "text": mark.text},
    }


def _render(
    visit: Inspection,
    site_name: str,
    stops: list[Stop],
    saved: SavedEntries,
    missing: list[Missing],
) -> Iterator[str]:
    state = "finished" if visit.finished else visit.state.value
    yield (
        f"{site_name} · {visit.kind.value.replace('_', '-')} inspection {visit.date.isoformat()}"
        f" · {state} · {visit.id}"
    )
    yield from _detail_lines(visit, blanks=False)
    for stop in stops:
        component = stop.component
        indent = "  " * stop.depth
        finding = saved.findings.get(component.id)
        graded = finding.grade.value.replace("_", " ") if finding else "not graded"
        if finding and finding.text:
            graded += f": {finding.text}"
        if (mark := saved.not_inspected.get(component.id)) is not None:
            graded = f"not inspected ({mark.why})"
        photos = saved.photos.get(component.id, 0)
        extra = f" · {counted(photos, 'photo')}" if photos else ""
        tag = component.tag.ljust(12 - 2 * stop.depth)
        yield f"{indent}{tag} {component.kind.label:<26} {graded}{extra}"
        for quantity in stop.quantities:
            outcome = saved.readings.get((component.id, quantity))
            if outcome is None:
                yield f"{indent}  · {quantity.label}: not entered"
            else:
                yield f"{indent}  · {outcome_line('', outcome)}"
    yield f"{counted(len(missing), 'thing')} missing." if missing else "Nothing missing."


#: Width of the labels in the details listing.
_DETAIL_WIDTH = max(len(label) for label in DETAIL_LABELS.values()) + 1


def _detail_lines(visit: Inspection, *, blanks: bool) -> Iterator[str]:
    """`  Weather: dry, overcast`, one line per detail; `blanks` shows unrecorded ones too."""
    for name, label in DETAIL_LABELS.items():
        value = getattr(visit, name)
        if value or blanks:
            yield f"  {label + ':':<{_DETAIL_WIDTH}} {value or '(none)'}"


def register(app: typer.Typer) -> None:
    app.add_typer(inspection_app, name="inspection")
