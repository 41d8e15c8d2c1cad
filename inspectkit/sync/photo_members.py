"""A bundle's photo members, moved on worker threads while the records are handled.

Copying and hashing photo files waits on the disk and on hashlib and zlib, which
all let other threads run; reading, validating and writing records holds the
interpreter. Side by side on two cores, an export or an import takes about as
long as the longer of the two, instead of both one after the other.
"""

from __future__ import annotations

import hashlib
import os
import stat
import threading
import zipfile
import zlib
from collections.abc import Sequence
from concurrent.futures import Future, ThreadPoolExecutor
from pathlib import Path

from inspectkit.store.photos import in_folder
from inspectkit.sync.guard import (
    BLOCK,
    PHOTO_PREFIX,
    BundleError,
    Limits,
    limit_for,
    read_capped,
    same_hash,
)

#: Threads that check photos at import; more than the cores only adds switching.
WORKERS = max(1, min(4, os.cpu_count() or 1))
#: One worker's photos: hash → staged file, and the first refusal it met (with its number).
_Share = tuple[dict[str, Path | None], tuple[int, Exception] | None]
#: What reading a member of a damaged zip may raise, besides our own refusals.
_DAMAGE = (BundleError, zipfile.BadZipFile, zlib.error, EOFError, OSError)


def add_photos(archive: zipfile.ZipFile, files: Sequence[tuple[Path, str]]) -> None:
    """Store each (file, member name) uncompressed: photos are compressed already."""
    for source, name in files:
        info = zipfile.ZipInfo(name, date_time=(1980, 1, 1, 0, 0, 0))
        info.compress_type = zipfile.ZIP_STORED
        info.external_attr = (stat.S_IFREG | 0o644) << 16
        info.file_size = source.stat().st_size
        with source.open("rb") as src, archive.open(info, "w") as dest:
            while block := src.read(BLOCK):
                dest.write(block)


class PhotoChecks:
    """Every photo member hashed against its name, and staged, on worker threads.

    Use as a context manager around the work done meanwhile; `result()` waits.
    Leaving the block early (the records were refused) stops the workers before
    they start another photo, and waits for them, so nothing writes to the
    staging folder once the caller has moved on.

    Args:
        path: The bundle file; each worker reads it through its own handle.
        infos: The photo members, in the bundle's order.
        members: The manifest's member → sha256 map.
        limits: Size limits against zip bombs.
        staging: Folder to copy checked photos to, in the photo folder's layout;
            None to check only (a dry run).
        held: Hashes of photos the importing database has already: checked, not staged.
    """

    def __init__(
        self,
        path: Path,
        infos: Sequence[zipfile.ZipInfo],
        members: dict[str, str],
        limits: Limits,
        staging: Path | None,
        held: set[str],
    ) -> None:
        self._path, self._members, self._limits = path, members, limits
        self._staging, self._held = staging, held
        self._order = [info.filename.removeprefix(PHOTO_PREFIX) for info in infos]
        self._stop = threading.Event()
        numbered = list(enumerate(infos))
        shares = [numbered[n::WORKERS] for n in range(WORKERS) if numbered[n::WORKERS]]
        self._pool = ThreadPoolExecutor(max(1, len(shares)), thread_name_prefix="photo-check")
        self._futures: list[Future[_Share]] = [
            self._pool.submit(self._check_share, share) for share in shares
        ]

    def __enter__(self) -> PhotoChecks:
        return self

    def __exit__(self, *exc: object) -> None:
        self._stop.set()
        self._pool.shutdown(wait=True, cancel_futures=True)

    def result(self) -> dict[str, Path | None]:
        """Photo hash → staged file (None when not staged), in the bundle's order.

        Raises:
            BundleError, or what reading a damaged zip raises: the refusal a
                reading in bundle order meets first, whichever thread met it.
        """
        done: dict[str, Path | None] = {}
        refusals = []
        for future in self._futures:
            staged, refusal = future.result()
            done.update(staged)
            if refusal is not None:
                refusals.append(refusal)
        if refusals:
            raise min(refusals, key=lambda refusal: refusal[0])[1]
        return {sha: done[sha] for sha in self._order}

    def _check_share(self, share: list[tuple[int, zipfile.ZipInfo]]) -> _Share:
        staged: dict[str, Path | None] = {}
        with zipfile.ZipFile(self._path) as archive:
            for number, info in share:
                if self._stop.is_set():
                    break
                sha = info.filename.removeprefix(PHOTO_PREFIX)
                try:
                    staged[sha] = self._check(archive, info, sha)
                except _DAMAGE as exc:
                    return staged, (number, exc)
        return staged, None

    def _check(self, archive: zipfile.ZipFile, info: zipfile.ZipInfo, sha: str) -> Path | None:
        """Hash a photo member while copying it to staging; refuse it if the hash is wrong."""
        name = info.filename
        target = None
        if self._staging is not None and sha not in self._held:
            # Staged in the photo folder's own layout, so that whole folders move into place.
            target = in_folder(self._staging, sha)
            target.parent.mkdir(parents=True, exist_ok=True)
        digest = hashlib.sha256()
        with archive.open(info) as source, open(target or os.devnull, "wb") as out:
            for block in read_capped(source, name, limit_for(name, self._limits)):
                digest.update(block)
                out.write(block)
            if target is not None:
                # On the disk before the records naming it are committed.
                out.flush()
                os.fsync(out.fileno())
        if digest.hexdigest() != sha:
            raise BundleError(
                f"photo {sha} does not match its hash (content hashes to {digest.hexdigest()}); "
                "the bundle was damaged or altered, export it again"
            )
        same_hash(name, sha, self._members)
        return target
