"""Photos in a content-addressed folder beside the database.

A file is named by its sha256, so the same photo attached twice is stored once,
and a bundle or a doctor run can tell a damaged file from a good one.
"""

from __future__ import annotations

import hashlib
import os
import shutil
import sqlite3
import tempfile
from datetime import UTC, datetime
from pathlib import Path

from PIL import Image, UnidentifiedImageError

from inspectkit.model import Photo
from inspectkit.store.database import Store
from inspectkit.store.errors import StoreError
from inspectkit.store.opening import photos_dir_of

_EXIF_ORIENTATION = 0x0112
_EXIF_IFD = 0x8769
_EXIF_DATETIME_ORIGINAL = 0x9003
_EXIF_DATETIME = 0x0132


def file_sha256(path: Path) -> str:
    digest = hashlib.sha256()
    with path.open("rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def photo_path(store: Store, sha256: str) -> Path:
    """Where the file of that hash lives."""
    return in_folder(store.photos_dir, sha256)


def in_folder(folder: Path, sha256: str) -> Path:
    """Where the file of that hash lives in a photo folder's layout (staging ones too).

    A two-letter fan-out keeps folders small.
    """
    return folder / sha256[:2] / sha256


def read_exif(path: Path) -> tuple[int, datetime | None, int, int]:
    """Orientation, taken-at time, width and height of an image file.

    EXIF times carry no zone; they are taken as UTC, which keeps their order.

    Raises:
        StoreError: the file is not an image Pillow can read.
    """
    try:
        with Image.open(path) as image:
            exif = image.getexif()
            width, height = image.size
    except (UnidentifiedImageError, OSError) as exc:
        raise StoreError(f"{path}: not a photo that can be read ({exc})") from exc
    orientation = exif.get(_EXIF_ORIENTATION, 1)
    if not isinstance(orientation, int) or not 1 <= orientation <= 8:
        orientation = 1
    stamp = exif.get_ifd(_EXIF_IFD).get(_EXIF_DATETIME_ORIGINAL) or exif.get(_EXIF_DATETIME)
    taken_at = None
    if isinstance(stamp, str):
        try:
            taken_at = datetime.strptime(stamp.strip(), "%Y:%m:%d %H:%M:%S").replace(
                tzinfo=UTC
            )
        except ValueError:
            taken_at = None
    return orientation, taken_at, width, height


def put_file(store: Store, source: Path) -> str:
    """Copy a file into the photo folder under its hash; return the hash."""
    sha = file_sha256(source)
    _place(source, photo_path(store, sha))
    return sha


def _place(source: Path, target: Path) -> bool:
    """Copy `source` to `target` unless it is there; never a half-copied file under the name.

    The copy is on the disk, not only in the system's cache, before its record is
    committed: a laptop whose battery dies on the roof keeps the photo it showed saved.
    """
    if target.exists():
        return False
    target.parent.mkdir(parents=True, exist_ok=True)
    handle, temp = tempfile.mkstemp(dir=target.parent, prefix=".incoming-")
    os.close(handle)
    try:
        shutil.copyfile(source, temp)
        sync_file(Path(temp))
        os.replace(temp, target)
    except BaseException:
        Path(temp).unlink(missing_ok=True)
        raise
    sync_folder(target.parent)
    return True


def sync_file(path: Path) -> None:
    """Wait until a file's content is on the disk."""
    with path.open("rb+") as handle:
        os.fsync(handle.fileno())


def sync_folder(folder: Path) -> None:
    """Wait until the names in a folder (a file renamed into it) are on the disk.

    POSIX only: elsewhere a folder cannot be opened to sync, and a rename is
    written through by the file system itself.
    """
    if os.name != "posix":
        return
    handle = os.open(folder, os.O_RDONLY)
    try:
        os.fsync(handle)
    finally:
        os.close(handle)


def copy_photos_for_backup(store: Store, backup: Path) -> tuple[int, list[str]]:
    """Copy the photo files a backup's records name into the backup's own photo folder.

    The folder is the one the backup opens with (`x.bak` → `x-photos/`), so a
    restored backup has its photos. Files named by their hash never change, so a
    file already there is not copied again, and a second backup to the same place
    costs only the new photos.

    Returns:
        How many files were copied, and the hashes of files missing from this
        database's photo folder (`inspectkit doctor` says how to restore them).
    """
    return _copy_named(backup, store.photos_dir, photos_dir_of(backup))


def restore_photos(store: Store, backup: Path) -> tuple[int, list[str]]:
    """Copy the photo files the restored records name back from the backup's folder.

    Returns:
        How many files were copied, and the hashes found in neither folder.
    """
    if store.path is None:
        raise StoreError("an in-memory database has no photos to restore")
    copied, missing = _copy_named(store.path, photos_dir_of(backup), store.photos_dir)
    return copied, [sha for sha in missing if not photo_path(store, sha).is_file()]


def _copy_named(db_file: Path, source: Path, target: Path) -> tuple[int, list[str]]:
    """Copy the photo files `db_file`'s records name from one photo folder to another."""
    conn = sqlite3.connect(f"file:{db_file}?mode=ro", uri=True)
    try:
        shas = [sha for (sha,) in conn.execute("SELECT DISTINCT sha256 FROM photo ORDER BY 1")]
    finally:
        conn.close()
    copied, missing = 0, []
    for sha in shas:
        found = in_folder(source, sha)
        if not found.is_file():
            missing.append(sha)
        elif _place(found, in_folder(target, sha)):
            copied += 1
    return copied, missing


def attach_photo(
    store: Store,
    source: Path,
    *,
    inspection_id: str | None = None,
    component_id: str | None = None,
    caption: str = "",
) -> Photo:
    """Store a photo file and record it; the file is in place before the record says so."""
    source = Path(source)
    if not source.is_file():
        raise StoreError(f"{source}: no such file; give the path of a photo")
    orientation, taken_at, width, height = read_exif(source)
    sha = put_file(store, source)
    photo = Photo(
        sha256=sha,
        original_name=source.name,
        caption=caption,
        taken_at=taken_at,
        inspection_id=inspection_id,
        component_id=component_id,
        orientation=orientation,
        width=width,
        height=height,
    )
    return store.save(photo)


def remove_unreferenced(store: Store, shas: list[str]) -> list[str]:
    """Delete those of these photo files that no photo record names; return their hashes."""
    named: set[str] = set()
    for start in range(0, len(shas), 500):
        chunk = shas[start : start + 500]
        marks = ",".join("?" * len(chunk))
        named.update(
            sha for (sha,) in store.db.execute(
                f"SELECT sha256 FROM photo WHERE sha256 IN ({marks})", chunk
            )
        )
    dropped = [sha for sha in shas if sha not in named]
    for sha in dropped:
        path = photo_path(store, sha)
        path.unlink(missing_ok=True)
        # No empty folder left behind: its prefix folder, then the photo folder itself.
        for folder in (path.parent, path.parent.parent):
            try:
                folder.rmdir()
            except OSError:
                break  # not empty (or not there): neither is anything above it
    return dropped


def adopt_staged(store: Store, photos: dict[str, Path | None]) -> list[str]:
    """Move checked photo files staged in the folder's layout into the photo folder.

    `photos` maps a hash to its staged file, or None for one not staged (it is
    there already). Returns the hashes that were new.

    Creating files and folders is the slow part of an import, so a staged folder
    the photo folder lacks is moved in whole (the whole staging tree when there is
    no photo folder yet) rather than made again and filled file by file.
    """
    staged = {sha: path for sha, path in photos.items() if path is not None}
    if not staged:
        return []
    roots = {path.parent.parent for path in staged.values()}
    if len(roots) == 1 and _move_folder(roots.pop(), store.photos_dir):
        return list(staged)
    by_folder: dict[Path, list[str]] = {}
    for sha, path in staged.items():
        by_folder.setdefault(path.parent, []).append(sha)
    added = []
    for folder, shas in by_folder.items():
        into = photo_path(store, shas[0]).parent
        if _move_folder(folder, into):
            added += shas
            continue
        moved = [sha for sha in shas if not photo_path(store, sha).exists()]
        into.mkdir(parents=True, exist_ok=True)
        for sha in moved:
            shutil.move(staged[sha], photo_path(store, sha))
        if moved:
            sync_folder(into)
        added += moved
    return added


def _move_folder(source: Path, target: Path) -> bool:
    """Rename a staged folder to `target` if nothing is there yet; False if something is."""
    if target.exists():
        return False
    target.parent.mkdir(parents=True, exist_ok=True)
    try:
        os.rename(source, target)
    except OSError:  # made meanwhile by another process, or not on the same disk
        return False
    sync_folder(target.parent)
    return True
