"""`inspectkit sites`: the sites in a database, worst first, as the sites screen lists them."""

from __future__ import annotations

from datetime import date, datetime
from typing import Annotated

import typer

from inspectkit.cli.common import DbOption, JsonOption, day_of, emit_json, open_store, today_option
from inspectkit.profiles import level_shown
from inspectkit.site_states import ProfileCache, assess_site
from inspectkit.store.queries import site_summaries


def sites(
    ctx: typer.Context,
    db: DbOption = None,
    today: Annotated[datetime | None, today_option("Judge")] = None,
    json_out: JsonOption = False,
) -> None:
    """List the sites worst first, with their state, level, last visit and client."""
    day = day_of(today)
    profiles = ProfileCache()
    with open_store(ctx, db) as store:
        summaries = site_summaries(store)
        states = {s.site.id: assess_site(store, s.site.id, day, profiles) for s in summaries}
    summaries.sort(key=lambda s: states[s.site.id].order_key(s.site.name))
    if json_out:
        emit_json(
            [
                {
                    "id": s.site.id,
                    "name": s.site.name,
                    "state": states[s.site.id].word,
                    "next_due": _iso(states[s.site.id].next_due),
                    "client": s.site.client,
                    "town": s.site.town,
                    "use": s.site.use,
                    "installer": s.site.installer,
                    "protection_level": level_shown(s.site.profile, s.site.protection_level, None),
                    "profile": s.site.profile,
                    "critical": s.site.critical,
                    "explosive_risk": s.site.explosive_risk,
                    "latitude": s.site.latitude,
                    "longitude": s.site.longitude,
                    "components": s.component_count,
                    "last_visit": s.last_visit.isoformat() if s.last_visit else None,
                    "last_kind": s.last_kind,
                }
                for s in summaries
            ]
        )
        return
    if not summaries:
        typer.echo("No sites yet.")
        return
    width = max(len(s.site.name) for s in summaries)
    typer.echo(
        f"{'site':<{width}}  {'state':<10}  level  {'last visit':<10}  kind         client"
    )
    for s in summaries:
        last = s.last_visit.isoformat() if s.last_visit else "never"
        typer.echo(
            f"{s.site.name:<{width}}  {states[s.site.id].word:<10}  "
            f"{level_shown(s.site.profile, s.site.protection_level):<5}  {last:<10}  "
            f"{(s.last_kind or '-'):<11}  "
            f"{s.site.client}"
        )


def _iso(day: date | None) -> str | None:
    return day.isoformat() if day else None


def register(app: typer.Typer) -> None:
    app.command("sites")(sites)
