"""`inspectkit backup` and `inspectkit doctor`: keeping the database safe and sound."""

from __future__ import annotations

from datetime import datetime
from pathlib import Path
from typing import Annotated

import typer

from inspectkit.cli.common import (
    MAX_LINES,
    DbOption,
    Exit,
    JsonOption,
    emit_json,
    fail,
    open_store,
    output_option,
)
from inspectkit.store import StoreError
from inspectkit.store.opening import photos_dir_of
from inspectkit.store.photos import copy_photos_for_backup, restore_photos
from inspectkit.wording import counted


def default_backup_path(db_path: Path, now: datetime) -> Path:
    """`inspect.sqlite` → `inspect.sqlite.20261201-165300.bak`, beside the database."""
    return db_path.with_name(f"{db_path.name}.{now:%Y%m%d-%H%M%S}.bak")


def backup(
    ctx: typer.Context,
    out: Annotated[
        Path | None, output_option("Backup file (default: timestamped, beside the db).")
    ] = None,
    photos: Annotated[
        bool, typer.Option("--photos/--no-photos", help="Copy the photo files it names too.")
    ] = True,
    db: DbOption = None,
) -> None:
    """Copy the database with SQLite's online backup (safe while the TUI or a command
    writes), and the photos its records name into a folder beside it.

    Exit 1 when the copy failed its check or photo files were missing.
    """
    with open_store(ctx, db) as store:
        target = out or default_backup_path(store.path, datetime.now())
        if target.exists():
            fail(f"{target} exists already; give another -o FILE")
        if target.resolve() == store.path.resolve():
            fail("-o names the database itself; give another file")
        try:
            store.backup(target)
        except StoreError as exc:
            fail(str(exc), Exit.ACT)
        copied, missing = copy_photos_for_backup(store, target) if photos else (0, [])
    typer.echo(f"Backed up to {target} (checked: ok).")
    if photos:
        typer.echo(f"{counted(copied, 'photo file')} copied to {photos_dir_of(target)}.")
    else:
        typer.echo(f"Photos are not in the backup: copy the folder {store.photos_dir} as well.")
    if missing:
        fail(
            f"photo files the records name are missing here ({len(missing)}, first "
            f"{missing[0]}) and are not in the backup; run `inspectkit doctor`",
            Exit.ACT,
        )


def restore(
    ctx: typer.Context,
    backup: Annotated[
        Path, typer.Argument(help="The backup file (NAME.bak) to put in place.", dir_okay=False)
    ],
    db: DbOption = None,
) -> None:
    """Put a backup in place of the database and bring back its photos.

    What it replaces is backed up first, beside the database
    (NAME.before-restore-TIME.bak), so a restore can be undone. Exit 1 when photo
    files the backup names are in neither folder.
    """
    with open_store(ctx, db) as store:
        if backup.resolve() == store.path.resolve():
            fail("the backup named is the database itself; give a NAME.bak file")
        kept = store.path.with_name(
            f"{store.path.name}.before-restore-{datetime.now():%Y%m%d-%H%M%S}.bak"
        )
        try:
            store.backup(kept)
        except StoreError:
            # Damaged, which is why one restores: kept all the same, as it was.
            typer.echo(f"The database replaced fails its check; it is kept as it was in {kept}.")
        try:
            store.restore(backup)
        except StoreError as exc:
            kept.unlink()  # nothing was replaced
            fail(str(exc))
        copied, missing = restore_photos(store, backup)
    typer.echo(f"Restored {backup} into {store.path} (checked: ok).")
    photos = counted(copied, "photo file")
    typer.echo(f"{photos} brought back; what was replaced is kept in {kept}.")
    if missing:
        fail(
            f"photo files the backup names are in neither photo folder ({len(missing)}, first "
            f"{missing[0]}); run `inspectkit doctor`",
            Exit.ACT,
        )


def doctor(
    ctx: typer.Context,
    quick: Annotated[
        bool, typer.Option("--quick", help="Do not read photo files to check their hashes.")
    ] = False,
    db: DbOption = None,
    json_out: JsonOption = False,
) -> None:
    """Check the database file, the audit log and the photo folder; say how to fix each problem.

    Exit 1 when a problem was found.
    """
    from inspectkit.store.health import check_health

    with open_store(ctx, db) as store:
        problems = check_health(store, hash_photos=not quick)
    if json_out:
        emit_json([p.__dict__ for p in problems])
    elif not problems:
        typer.echo("No problems found: database intact, audit log matches, photos all present.")
    else:
        for p in problems[:MAX_LINES]:
            typer.echo(f"{p.check}: {p.subject}: {p.message}\n  fix: {p.fix}")
        if len(problems) > MAX_LINES:
            typer.echo(f"… and {len(problems) - MAX_LINES} more (all of them: --json)")
        typer.echo(f"{counted(len(problems), 'problem')} found.")
    if problems:
        raise typer.Exit(int(Exit.ACT))


def register(app: typer.Typer) -> None:
    app.command("backup")(backup)
    app.command("restore")(restore)
    app.command("doctor")(doctor)
