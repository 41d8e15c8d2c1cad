"""Photos attached to a visit: one file to a component, or a camera's folder matched by time.

A photo from a folder goes to the component whose reading was taken nearest the time the
camera noted, so a card read at the end of the walk needs no sorting by hand.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime, timedelta
from pathlib import Path

from inspectkit.model import Photo, Reading
from inspectkit.store import FrozenRecordError, Store, StoreError
from inspectkit.store.photos import attach_photo, file_sha256, read_exif
from inspectkit.store.record_queries import inspection_records
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.visit import open_inspection, site_component

#: A photo belongs to the reading taken closest to it, if that is this close (our default).
PHOTO_MATCH_WINDOW = timedelta(minutes=10)

_PHOTO_SUFFIXES = frozenset({".jpg", ".jpeg", ".png", ".tif", ".tiff", ".heic", ".webp"})


@dataclass(frozen=True)
class PhotoMatch:
    """A photo attached from a folder, with the component its time matched.

    Attributes:
        photo: The photo as saved.
        component_id: The component of the nearest reading in time, or None when no
            reading was taken within the match window (the photo is then kept on the
            inspection alone).
    """

    photo: Photo
    component_id: str | None


def attach_photo_file(
    store: Store,
    inspection_id: str,
    path: Path | str,
    component_id: str | None = None,
    caption: str = "",
) -> Photo:
    """Attach one photo file to the inspection (and to a component).

    Raises:
        WalkdownError: no such file, not an image, or the inspection is signed.
    """
    inspection = open_inspection(store, inspection_id)
    if component_id is not None:
        site_component(store, inspection, component_id)
    try:
        return attach_photo(
            store,
            Path(path).expanduser(),
            inspection_id=inspection_id,
            component_id=component_id,
            caption=caption,
        )
    except FrozenRecordError as exc:
        raise WalkdownError("inspection", str(exc)) from None
    except StoreError as exc:
        raise WalkdownError("photo", str(exc)) from None


def attach_photos(
    store: Store,
    inspection_id: str,
    path: Path | str,
    component_id: str | None = None,
    caption: str = "",
) -> list[PhotoMatch]:
    """Attach a photo file to a component, or a folder's new photos matched by time.

    Raises:
        WalkdownError: the path is neither a photo nor a folder, or the inspection is signed.
    """
    target = Path(path).expanduser()
    if target.is_dir():
        return attach_photo_folder(store, inspection_id, target)
    photo = attach_photo_file(store, inspection_id, target, component_id, caption)
    return [PhotoMatch(photo, component_id)]


def attach_photo_folder(
    store: Store,
    inspection_id: str,
    folder: Path | str,
    *,
    window: timedelta = PHOTO_MATCH_WINDOW,
    clock_offset: timedelta = timedelta(0),
) -> list[PhotoMatch]:
    """Attach the photos in a folder not yet on this inspection, each to a component by time.

    A photo goes to the component whose reading was taken nearest its EXIF time,
    when that is within `window`. Photos already attached (same content) are skipped,
    so a camera card can be read again after more photos were taken.

    Args:
        clock_offset: Added to the camera's times first, for a camera clock that is
            off (or set to local time) against the laptop's.

    Raises:
        WalkdownError: the folder does not exist, or the inspection is signed.
    """
    inspection = open_inspection(store, inspection_id)
    folder = Path(folder).expanduser()
    if not folder.is_dir():
        raise WalkdownError("folder", f"{folder}: no such folder; give the folder of new photos")
    known = {p.sha256 for p in inspection_records(store, Photo, inspection_id)}
    readings = inspection_records(store, Reading, inspection_id)
    matches = []
    for path in sorted(folder.iterdir()):
        if path.suffix.lower() not in _PHOTO_SUFFIXES or not path.is_file():
            continue
        if file_sha256(path) in known:
            continue
        try:
            taken = read_exif(path)[1]
        except StoreError:
            continue
        component_id = _nearest(readings, taken + clock_offset, window) if taken else None
        photo = attach_photo_file(store, inspection.id, path, component_id)
        known.add(photo.sha256)
        matches.append(PhotoMatch(photo, component_id))
    return matches


def _nearest(readings: Sequence[Reading], when: datetime, window: timedelta) -> str | None:
    best = min(readings, key=lambda r: abs(r.taken_at - when), default=None)
    if best is None or abs(best.taken_at - when) > window:
        return None
    return best.component_id
