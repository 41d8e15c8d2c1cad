"""`inspectkit check`: every rule, the schedule and the trends over the database."""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager
from datetime import date, datetime
from typing import Annotated

import typer

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
from inspectkit.engine.check import SiteCheck, check_all
from inspectkit.engine.results import SEVERITY_WORDS
from inspectkit.engine.standing import worst_first
from inspectkit.model import Severity, SiteRecords
from inspectkit.profiles import Profile, ProfileError, load_all_profiles
from inspectkit.store import Store
from inspectkit.store.queries import find_site, iter_site_records, load_site_records
from inspectkit.wording import counted

#: Severity words in capitals, so the table reads without colour.
_WORD = {s: w.shout for s, w in SEVERITY_WORDS.items()}


def gather(
    store: Store, today: date, site: str | None = None, profiles: dict[str, Profile] | None = None
) -> list[SiteCheck]:
    """Check one site (by name or id) or every site, worst first.

    Raises:
        LookupError: no site matches `site`.
        ProfileError: a profile file is bad, or a site names one that does not exist.
    """
    profiles = load_all_profiles() if profiles is None else profiles
    sites: Iterator[SiteRecords]
    if site is None:
        sites = iter_site_records(store)
    else:
        found = find_site(store, site)
        if found is None:
            raise LookupError(site)
        sites = iter([load_site_records(store, found.id)])
    with _collector_paused():
        return worst_first(check_all(sites, profiles, today))


@contextmanager
def _collector_paused() -> Iterator[None]:
    """Pause the cycle collector for a run over the whole database.

    A run makes half a million records and their results, none holding a reference
    cycle, and lets each site's go before the next: the collector would find nothing
    in them, yet would sweep them again and again (a tenth of the run, measured).
    """
    was_on = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_on:
            gc.enable()


def need(count: int) -> str:
    """ "1 needs", "2 need"."""
    return "needs" if count == 1 else "need"


def render(checks: list[SiteCheck]) -> Iterator[str]:
    """The human table: a heading line per site with its summary, then its results."""
    for check in checks:
        yield f"{check.site_name}  [{_WORD[check.worst]}]  {check.summary}"
        for r in check.results:
            yield f"  {_WORD[r.severity]:<10} {r.component_tag or '-':<8} {r.message}"
    acting = sum(1 for c in checks if c.needs_action)
    watching = sum(1 for c in checks if not c.needs_action and c.worst is not Severity.OK)
    clear = len(checks) - acting - watching
    yield (
        f"{counted(len(checks), 'site')} checked: {acting} {need(acting)} action (fail or "
        f"overdue), {watching} to watch, complete or retake, {clear} all clear."
    )


def check(
    ctx: typer.Context,
    db: DbOption = None,
    site: Annotated[
        str | None,
        typer.Option("--site", help="Check only this site (name, start of name, or id)."),
    ] = None,
    today: Annotated[datetime | None, today_option("Judge")] = None,
    json_out: JsonOption = False,
) -> None:
    """Check readings, schedules and trends; exit 1 when anything fails or is overdue."""
    day = day_of(today)
    with open_store(ctx, db) as store:
        try:
            checks = gather(store, day, site)
        except LookupError:
            fail(f"--site: no single site matches {site!r}; run `inspectkit sites` for the names")
        except ProfileError as exc:
            fail(f"{exc}")
    if json_out:
        emit_json([r.to_json() for c in checks for r in c.results])
    elif not checks:
        typer.echo("No sites yet.")
    else:
        for line in render(checks):
            typer.echo(line)
    raise typer.Exit(int(Exit.ACT if any(c.needs_action for c in checks) else Exit.OK))


def register(app: typer.Typer) -> None:
    app.command("check")(check)
