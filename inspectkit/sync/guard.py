"""Checks that keep a hostile or broken bundle from touching anything.

A bundle comes from another laptop, by mail or a memory stick: it is read as
untrusted input. Every member is checked by its zip header before a byte of it is
read (name, type, size, compression ratio), and read with a cap afterwards, since
headers can lie.
"""

from __future__ import annotations

import re
import stat
import zipfile
from collections.abc import Iterator
from dataclasses import dataclass
from datetime import date, datetime
from typing import IO, Any

from inspectkit.model import CLOCK_SKEW, Record

MANIFEST = "manifest.json"
RECORDS = "records.json"
PHOTO_PREFIX = "photos/"
_PHOTO_NAME = re.compile(r"^photos/[0-9a-f]{64}$")
#: Bytes read or written at a time when a member is copied.
BLOCK = 1 << 20
#: Days that are meant to lie ahead: when a defect must be put right, when calibration is due.
_FUTURE_DAYS = frozenset({"due_by", "calibration_due"})


class BundleError(Exception):
    """The bundle is refused; the message says what is wrong with it and what to do."""


@dataclass(frozen=True)
class Limits:
    """How big a bundle may be; beyond these it is taken for a zip bomb (our defaults).

    Attributes:
        member_bytes: Most a photo may hold uncompressed (phone photos are 2–15 MB).
        records_bytes: Most `records.json` may hold uncompressed.
        manifest_bytes: Most `manifest.json` may hold: counts and one hash per photo.
        write_bytes: Most photo bytes one import may write to the disk.
        total_bytes: Most the whole bundle may unpack to.
        ratio: Highest uncompressed/compressed ratio for a member over `ratio_floor`
            bytes; record JSON packs about 5–15 to 1, photos about 1 to 1.
        ratio_floor: Members smaller than this are not checked for ratio.
    """

    member_bytes: int = 64 << 20
    records_bytes: int = 128 << 20
    manifest_bytes: int = 16 << 20
    write_bytes: int = 8 << 30
    total_bytes: int = 16 << 30
    ratio: float = 200.0
    ratio_floor: int = 1 << 20


DEFAULT_LIMITS = Limits()


def check_members(archive: zipfile.ZipFile, limits: Limits) -> list[zipfile.ZipInfo]:
    """Refuse the bundle unless every member is one it may hold, of a size it may have.

    Raises:
        BundleError: a path escapes the bundle, is absolute, is a link or folder, a
            name repeats, a member is encrypted, too large or packed too tightly.
    """
    infos = archive.infolist()
    seen: set[str] = set()
    total = 0
    for info in infos:
        name = info.filename
        _check_name(name)
        if name in seen:
            raise BundleError(f"member {name!r} appears twice; the bundle is damaged")
        seen.add(name)
        # Unix mode bits, as Info-ZIP stores them (PKWARE APPNOTE.TXT 4.4.15).
        mode = info.external_attr >> 16
        if stat.S_ISLNK(mode):
            raise BundleError(f"member {name!r} is a link; a bundle holds plain files only")
        if info.is_dir() or stat.S_IFMT(mode) not in (0, stat.S_IFREG):
            raise BundleError(f"member {name!r} is not a plain file; a bundle holds files only")
        if info.flag_bits & 0x1:
            raise BundleError(f"member {name!r} is encrypted; export the bundle again unencrypted")
        if info.compress_type not in (zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED):
            raise BundleError(f"member {name!r} uses an unsupported compression")
        cap = limit_for(name, limits)
        if info.file_size > cap:
            raise BundleError(
                f"member {name!r} unpacks to {info.file_size:,} bytes, more than the "
                f"{cap:,} allowed; the bundle is refused as a possible zip bomb"
            )
        if info.file_size > limits.ratio_floor and info.file_size > limits.ratio * max(
            info.compress_size, 1
        ):
            raise BundleError(
                f"member {name!r} is packed {info.file_size / max(info.compress_size, 1):,.0f} "
                f"to 1 (at most {limits.ratio:g} allowed); refused as a possible zip bomb"
            )
        total += info.file_size
        if total > limits.total_bytes:
            raise BundleError(
                f"the bundle unpacks to more than {limits.total_bytes:,} bytes; refused as a "
                "possible zip bomb, export fewer records (--since) instead"
            )
    for required in (MANIFEST, RECORDS):
        if required not in seen:
            raise BundleError(f"no {required} in the bundle; it is not an inspectkit bundle")
    return infos


def _check_name(name: str) -> None:
    if name.startswith(("/", "\\")) or re.match(r"^[A-Za-z]:", name):
        raise BundleError(f"member {name!r} has an absolute path; refused")
    parts = re.split(r"[\\/]", name)
    if ".." in parts:
        raise BundleError(f"member {name!r} leads out of the bundle's folder ('..'); refused")
    if name not in (MANIFEST, RECORDS) and not _PHOTO_NAME.match(name):
        raise BundleError(
            f"member {name!r} is not one a bundle holds (manifest.json, records.json, "
            "photos/<sha256>); refused"
        )


def limit_for(name: str, limits: Limits) -> int:
    """The most bytes a member of that name may unpack to."""
    if name == MANIFEST:
        return limits.manifest_bytes
    return limits.member_bytes if name.startswith(PHOTO_PREFIX) else limits.records_bytes


def site_label(manifest: dict[str, object]) -> str:
    """The site's name as the manifest gives it (checked to be a name's length when read)."""
    name = manifest.get("site_name")
    return name if isinstance(name, str) else "?"


def read_capped(handle: IO[bytes], name: str, cap: int) -> Iterator[bytes]:
    """The member's bytes in blocks, stopping with an error past `cap` whatever the header said."""
    seen = 0
    while block := handle.read(BLOCK):
        seen += len(block)
        if seen > cap:
            raise BundleError(
                f"member {name!r} unpacks to more than the {cap:,} bytes allowed; refused"
            )
        yield block


def same_hash(name: str, sha: str, members: dict[str, str]) -> None:
    """Refuse a member whose content does not hash to what the manifest lists for it."""
    if members.get(name) != sha:
        raise BundleError(
            f"member {name!r} does not match the hash in the manifest; "
            "the bundle was damaged or altered, export it again"
        )


def bounded_photos(
    content: Any, pictures: list[zipfile.ZipInfo], held: set[str], limits: Limits
) -> None:
    """Refuse photo files no record of the bundle names, and more than one import may write.

    Checked before a byte is staged: a bundle otherwise makes the disk hold what
    it likes (files packed just under the ratio limit, all of them unwanted).
    """
    tables = content.get("tables") if isinstance(content, dict) else None
    photo_rows = tables.get("photo", []) if isinstance(tables, dict) else []
    if not isinstance(photo_rows, list):
        photo_rows = []
    named = {
        row["sha256"]
        for row in photo_rows
        if isinstance(row, dict) and isinstance(row.get("sha256"), str)  # a list is no name
    }
    for info in pictures:
        if info.filename.removeprefix(PHOTO_PREFIX) not in named:
            raise BundleError(
                f"member {info.filename!r} is a photo file no record of the bundle names; "
                "a bundle carries only the photos of its records, so it is refused"
            )
    writing = sum(
        info.file_size for info in pictures if info.filename.removeprefix(PHOTO_PREFIX) not in held
    )
    if writing > limits.write_bytes:
        raise BundleError(
            f"the bundle would write {writing:,} bytes of photos, more than the "
            f"{limits.write_bytes:,} bytes one import may write; export fewer records "
            "(--since) and import them in turns"
        )


def not_ahead(record: Record, where: str, now: datetime) -> None:
    """Refuse a time or day later than this computer's clock allows, naming the field."""
    latest = now + CLOCK_SKEW
    for name, value in record:
        if name in _FUTURE_DAYS:
            continue
        if isinstance(value, datetime):
            ahead = value > latest
        elif isinstance(value, date):
            ahead = value > latest.date()
        else:
            continue
        if ahead:
            raise BundleError(
                f"{where}: {name} {value.isoformat()} is in the future (this "
                f"computer's clock says {now.isoformat(timespec='minutes')}, and allows "
                f"{CLOCK_SKEW.total_seconds() / 3600:g} h ahead); set the other laptop's clock "
                "right, correct the record there and export again"
            )
