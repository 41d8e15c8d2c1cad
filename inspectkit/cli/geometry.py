"""`inspectkit geometry`: a site's roof plan in local metres, imported from a file and judged.

`geometry import FILE --site S` puts a TOML file's geometry in place of the site's
(all or nothing); `geometry show --site S` prints each rooftop item's verdict and the
mesh and down-conductor checks, the same ones `check` and the report use.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from inspectkit.cli.common import DbOption, Exit, JsonOption, emit_json, fail, open_store
from inspectkit.engine.conformity import assess
from inspectkit.model import Severity, Site
from inspectkit.store import Store
from inspectkit.store.geometry import site_geometry
from inspectkit.store.queries import find_site
from inspectkit.sync.geometry_file import GeometryFileError, import_geometry

geometry_app = typer.Typer(
    help="A site's roofs, conductors and rooftop items in local metres, and their checks.",
    no_args_is_help=True,
)

SiteOption = Annotated[
    str, typer.Option("--site", help="The site (name, start of name, or id).", show_default=False)
]


def _site(store: Store, name: str) -> Site:
    found = find_site(store, name)
    if found is None:
        fail(f"--site: no single site matches {name!r}; run `inspectkit sites` for the names")
    return found


@geometry_app.command("import")
def import_file(
    ctx: typer.Context,
    file: Annotated[Path, typer.Argument(help="Geometry file (TOML; see the README).")],
    site: SiteOption,
    db: DbOption = None,
) -> None:
    """Put a file's geometry in place of the site's; a file with a mistake changes nothing."""
    with open_store(ctx, db) as store:
        found = _site(store, site)
        try:
            items = import_geometry(store, found, file)
        except GeometryFileError as exc:
            fail(f"{file}: {exc}")
    kinds: dict[str, int] = {}
    for item in items:
        kinds[item.kind.label] = kinds.get(item.kind.label, 0) + 1
    said = ", ".join(f"{n} {kind}" for kind, n in kinds.items()) or "nothing"
    typer.echo(f"{found.name}: geometry imported ({said}).")


@geometry_app.command("show")
def show(
    ctx: typer.Context, site: SiteOption, db: DbOption = None, json_out: JsonOption = False
) -> None:
    """Each rooftop item's protection and separation, the mesh and the down conductors."""
    with open_store(ctx, db) as store:
        found = _site(store, site)
        geometry = site_geometry(store, found.id)
    judged = assess(found, geometry)
    verdicts = [*judged.items, *judged.system]
    if json_out:
        emit_json(
            [
                {
                    "tag": v.tag,
                    "severity": v.severity.value,
                    "message": v.message,
                    "value": v.value,
                    "limit": v.limit,
                    "unit": v.unit,
                }
                for v in verdicts
            ]
        )
    elif not judged.recorded:
        typer.echo(f"{found.name}: no geometry recorded; nothing to check.")
    else:
        typer.echo(f"{found.name}: level {judged.level.value}; {judged.resolution}.")
        for v in verdicts:
            typer.echo(f"  {v.severity.value.upper():<7} {v.tag:<8} {v.message}")
    acting = any(v.severity.rank >= Severity.FAIL.rank for v in verdicts)
    raise typer.Exit(int(Exit.ACT if acting else Exit.OK))


def register(app: typer.Typer) -> None:
    app.add_typer(geometry_app, name="geometry")
