"""`inspectkit findings`: open defects with their age and due date; resolve one by a visit."""

from __future__ import annotations

from datetime import date, datetime
from typing import Annotated, Any

import typer

from inspectkit.cli import lookups
from inspectkit.cli.common import (
    DbOption,
    Exit,
    JsonOption,
    day_of,
    emit_json,
    fail,
    open_store,
    today_option,
)
from inspectkit.model import Finding
from inspectkit.store import StoreError
from inspectkit.store.queries import OpenFinding, later_inspections, open_findings
from inspectkit.wording import counted

findings_app = typer.Typer(
    help="Open findings (not graded sound, not yet put right), soonest due first; "
    "exit 1 when one is past its due date.",
    invoke_without_command=True,
)

#: How much of a finding's id the table shows; `resolve` takes any unique start.
SHORT_ID = 8


@findings_app.callback()
def findings(
    ctx: typer.Context,
    site: Annotated[
        str | None, typer.Option("--site", help="Only this site (name, start of name, or id).")
    ] = None,
    today: Annotated[datetime | None, today_option("Count ages")] = None,
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """List open findings; `findings resolve` records the visit that put one right."""
    if ctx.invoked_subcommand is not None:
        return
    day = day_of(today)
    with open_store(ctx, db) as store:
        items = open_findings(store)
        if site is not None:
            site_id = lookups.site(store, site).id
            items = [i for i in items if i.site_id == site_id]
    if json_out:
        emit_json([_item_json(item, day) for item in items])
    elif not items:
        typer.echo("No open findings.")
    else:
        for item in items:
            typer.echo(_item_line(item, day))
        typer.echo(f"{counted(len(items), 'open finding')}.")
    late = any(i.finding.due_by is not None and i.finding.due_by < day for i in items)
    raise typer.Exit(int(Exit.ACT if late else Exit.OK))


def _due(item: OpenFinding, day: date) -> str:
    due = item.finding.due_by
    if due is None:
        return "—"
    return f"{due.isoformat()}{' LATE' if due < day else ''}"


def _item_line(item: OpenFinding, day: date) -> str:
    finding = item.finding
    grade = finding.grade.value.replace("_", " ")
    line = (
        f"{finding.id[:SHORT_ID]}  due {_due(item, day):<15} {(day - item.found_on).days:>5} d  "
        f"{item.site_name} {item.tag or '-'}  {grade}: {finding.text}"
    )
    if finding.remedial_action:
        line += f" · remedy: {finding.remedial_action}"
    return line


def _item_json(item: OpenFinding, day: date) -> dict[str, Any]:
    finding = item.finding
    due = finding.due_by
    return {
        "id": finding.id,
        "site_id": item.site_id,
        "site": item.site_name,
        "tag": item.tag or None,
        "inspection_id": finding.inspection_id,
        "found_on": item.found_on.isoformat(),
        "age_days": (day - item.found_on).days,
        "grade": finding.grade.value,
        "text": finding.text,
        "remedial_action": finding.remedial_action,
        "due_by": due.isoformat() if due else None,
        "late": due is not None and due < day,
    }


@findings_app.command("resolve")
def resolve(
    ctx: typer.Context,
    finding_id: Annotated[str, typer.Argument(help="Finding id (or its start, as listed).")],
    by: Annotated[
        str, typer.Option("--by", help="Id of the later visit to that site that put it right.")
    ],
    db: DbOption = None,
) -> None:
    """Mark an open finding put right by a later visit to its site."""
    with open_store(ctx, db) as store:
        finding = lookups.by_id(store, Finding, finding_id, "FINDING_ID")
        item = next((o for o in open_findings(store) if o.finding.id == finding.id), None)
        if item is None:
            fail(
                "FINDING_ID: that finding is not open (graded sound or resolved already); "
                "run `inspectkit findings` for the open ones"
            )
        visit = lookups.inspection(store, by, "--by")
        visits = later_inspections(store, item)
        if visit.id not in {v.id for v in visits}:
            known = ", ".join(f"{v.date.isoformat()} {v.id[:SHORT_ID]}" for v in visits) or "none"
            fail(
                f"--by: give a visit to {item.site_name} since {item.found_on.isoformat()}; "
                f"those are: {known}"
            )
        try:
            store.save(item.finding.model_copy(update={"resolved_by": visit.id}))
        except StoreError as exc:
            fail(str(exc))
    typer.echo(
        f"Finding at {item.site_name} {item.tag} marked resolved by the visit of "
        f"{visit.date.isoformat()}."
    )


def register(app: typer.Typer) -> None:
    app.add_typer(findings_app, name="findings")
