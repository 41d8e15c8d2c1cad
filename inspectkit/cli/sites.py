"""`inspectkit sites`: the sites in a database with their level and last visit."""

from __future__ import annotations

import typer

from inspectkit.cli.common import DbOption, JsonOption, emit_json, open_store
from inspectkit.profiles import level_shown
from inspectkit.store.queries import site_summaries


def sites(ctx: typer.Context, db: DbOption = None, json_out: JsonOption = False) -> None:
    """List the sites with protection level, client, town and last visit."""
    with open_store(ctx, db) as store:
        summaries = site_summaries(store)
    if json_out:
        emit_json(
            [
                {
                    "id": s.site.id,
                    "name": s.site.name,
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
    typer.echo(f"{'site':<{width}}  level  {'last visit':<10}  kind         client")
    for s in summaries:
        last = s.last_visit.isoformat() if s.last_visit else "never"
        typer.echo(
            f"{s.site.name:<{width}}  {level_shown(s.site.profile, s.site.protection_level):<5}  "
            f"{last:<10}  "
            f"{(s.last_kind or '-'):<11}  {s.site.client}"
        )


def register(app: typer.Typer) -> None:
    app.command("sites")(sites)
