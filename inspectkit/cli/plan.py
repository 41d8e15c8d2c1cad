"""`inspectkit plan`: the next round of visits, day by day, as a table, JSON, CSV or iCalendar."""

from __future__ import annotations

from datetime import date
from pathlib import Path
from typing import TYPE_CHECKING, Annotated, Any

import typer

from inspectkit.cli.common import DbOption, JsonOption, emit_json, fail, open_store

if TYPE_CHECKING:  # the planner is imported when `plan` runs, not at start-up
    from inspectkit.model import Inspection
    from inspectkit.plan.geo import Point
    from inspectkit.plan.planner import RoundPlan, Window
    from inspectkit.plan.settings import PlanSettings
    from inspectkit.store import Store


def _option(flag: str, text: str, **extra: Any) -> Any:
    """An option with no default shown: the defaults live in plan.toml."""
    return typer.Option(flag, help=text, show_default=False, **extra)


def plan(
    ctx: typer.Context,
    db: DbOption = None,
    start_day: Annotated[
        str | None, _option("--from", "First day of the round, YYYY-MM-DD (default: today).")
    ] = None,
    days: Annotated[int, typer.Option("--days", help="Length of the window in days.")] = 30,
    start: Annotated[
        str | None, _option("--start", "Start point LAT,LON (default: the saved depot).")
    ] = None,
    save_depot: Annotated[
        str | None, _option("--save-depot", "Keep LAT,LON as the depot for later rounds, and stop.")
    ] = None,
    hours_per_day: Annotated[
        float | None, _option("--hours-per-day", "Working hours per day, driving included.")
    ] = None,
    day_start: Annotated[
        str | None, _option("--day-start", "When each day leaves the depot, HH:MM.")
    ] = None,
    speed: Annotated[float | None, _option("--speed", "Average driving speed, km/h.")] = None,
    road_factor: Annotated[
        float | None, _option("--road-factor", "Road distance over great-circle distance.")
    ] = None,
    drop: Annotated[
        list[str] | None, _option("--drop", "Leave this site (name or id) out; may be repeated.")
    ] = None,
    pin: Annotated[
        list[str] | None, _option("--pin", "Put this site (name or id) first; may be repeated.")
    ] = None,
    move: Annotated[
        list[str] | None,
        _option("--move", "Move a site's visit to a day, SITE=YYYY-MM-DD; may be repeated."),
    ] = None,
    csv_file: Annotated[
        Path | None, _option("--csv", "Also write the visits to this CSV file.", dir_okay=False)
    ] = None,
    ics_file: Annotated[
        Path | None,
        _option("--ics", "Also write an iCalendar file, one event per visit.", dir_okay=False),
    ] = None,
    drafts: Annotated[
        bool, typer.Option("--create-drafts", help="Make draft inspections for the visits.")
    ] = False,
    json_out: JsonOption = False,
) -> None:
    """Plan the next round: sites due or overdue in the window, routed from the depot, by day."""
    from inspectkit.plan.drafts import create_drafts
    from inspectkit.plan.planner import Window
    from inspectkit.plan.planner import save_depot as keep_depot

    first = _first_day(start_day, days)
    settings, depot, new_depot = _settings_and_points(
        start, save_depot, hours_per_day=hours_per_day, day_start=day_start, speed_kmh=speed,
        road_factor=road_factor,
    )  # fmt: skip
    with open_store(ctx, db) as store:
        if new_depot is not None:
            keep_depot(store, new_depot)
            typer.echo(f"Depot saved: {new_depot.lat:.6f},{new_depot.lon:.6f}")
            return
        result = _round(store, Window(first, days), settings, depot, drop, pin, move)
        made = create_drafts(store, result) if drafts else []
    _write_files(result, csv_file, ics_file)
    _print_round(result, made if drafts else None, csv_file, ics_file, json_out)


def _first_day(start_day: str | None, days: int) -> date:
    """The window's first day, once --from and --days are known to be usable."""
    try:
        first = date.fromisoformat(start_day) if start_day else date.today()
    except ValueError:
        fail(f"--from: {start_day!r} is not a date; write it as YYYY-MM-DD, e.g. 2026-03-02")
    if not 1 <= days <= 366:
        fail(f"--days: {days} is out of range; give a window of 1 to 366 days")
    return first


def _settings_and_points(
    start: str | None, save_depot: str | None, **overrides: Any
) -> tuple[PlanSettings, Point | None, Point | None]:
    """plan.toml with the options laid over it, the start point and the depot to keep.

    One refusal message for all of them, each naming its option as typed.
    """
    from inspectkit.plan.geo import PointError, parse_point
    from inspectkit.plan.settings import PlanSettingsError, load_plan_settings, with_overrides

    try:
        settings = with_overrides(load_plan_settings(), **overrides)
        depot = parse_point(start) if start else None
        new_depot = parse_point(save_depot, "--save-depot") if save_depot else None
    except (PlanSettingsError, PointError) as exc:
        fail(str(exc).replace("--speed-kmh", "--speed"))
    return settings, depot, new_depot


def _round(
    store: Store,
    window: Window,
    settings: PlanSettings,
    depot: Point | None,
    drop: list[str] | None,
    pin: list[str] | None,
    move: list[str] | None,
) -> RoundPlan:
    """The round planned with the sites --drop, --pin and --move name, or exit 2 naming one."""
    from inspectkit.plan.geo import PointError
    from inspectkit.plan.planner import make_plan
    from inspectkit.store.queries import find_site

    ids: dict[str, list[str]] = {}
    moves = dict(_move(text) for text in move or [])
    for option, names in (("--drop", drop or []), ("--pin", pin or []), ("--move", moves)):
        for name in names:
            site = find_site(store, name)
            if site is None:
                fail(f"{option}: no site called {name!r}; see `inspectkit sites`")
            ids.setdefault(option, []).append(site.id)
    moved = dict(zip(ids.get("--move", []), moves.values(), strict=True))
    try:
        return make_plan(
            store,
            window,
            settings,
            depot,
            dropped=ids.get("--drop", []),
            pinned=ids.get("--pin", []),
            moved=moved,
        )
    except PointError as exc:
        fail(str(exc))


def _write_files(result: RoundPlan, csv_file: Path | None, ics_file: Path | None) -> None:
    """The visits as CSV and as iCalendar, where asked for; a folder missing exits 2."""
    from inspectkit.model import utcnow
    from inspectkit.plan.export import write_csv, write_ics

    try:
        if csv_file is not None:
            write_csv(result, csv_file)
        if ics_file is not None:
            write_ics(result, ics_file, utcnow())
    except OSError as exc:
        fail(f"cannot write {exc.filename}: {exc.strerror}; check the folder exists")


def _print_round(
    result: RoundPlan,
    made: list[Inspection] | None,
    csv_file: Path | None,
    ics_file: Path | None,
    json_out: bool,
) -> None:
    """The day table (or JSON), the drafts made (None: none asked for), the files written."""
    from inspectkit.plan.export import plan_data, render_table

    if json_out:
        emit_json({**plan_data(result), "drafts_created": len(made or [])})
        return
    typer.echo(render_table(result))
    if made is not None:
        typer.echo(f"\n{len(made)} draft inspections created.")
    for label, path in (("CSV", csv_file), ("iCalendar", ics_file)):
        if path is not None:
            typer.echo(f"{label} written to {path}")


def _move(text: str) -> tuple[str, date]:
    """A "SITE=YYYY-MM-DD" move, or exit 2 saying how to write one."""
    name, sep, day = text.rpartition("=")
    try:
        if not sep or not name.strip():
            raise ValueError
        return name.strip(), date.fromisoformat(day.strip())
    except ValueError:
        fail(f"--move: {text!r} is not SITE=YYYY-MM-DD; e.g. --move 'Hall 2=2027-01-12'")


def register(app: typer.Typer) -> None:
    app.command("plan")(plan)
