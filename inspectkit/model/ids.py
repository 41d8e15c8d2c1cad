"""Record keys and record times, made the one way every record is made."""

from __future__ import annotations

import os
import uuid
from datetime import UTC, datetime


def new_id() -> str:
    """A fresh record key; random, so two offline laptops never collide."""
    return str(uuid.uuid4())


def new_ids(count: int) -> list[str]:
    """`count` fresh keys as `new_id` makes them (random UUID version 4), in one go.

    An import writes an audit row per record: one read of the system's random
    source and one hex conversion for all of them costs a fifth of `count` calls
    to `new_id`.
    """
    raw = bytearray(os.urandom(16 * count))
    raw[6::16] = bytes(0x40 | (byte & 0x0F) for byte in raw[6::16])  # version 4
    raw[8::16] = bytes(0x80 | (byte & 0x3F) for byte in raw[8::16])  # RFC 4122 variant
    text = raw.hex()
    return [
        f"{text[n : n + 8]}-{text[n + 8 : n + 12]}-{text[n + 12 : n + 16]}-"
        f"{text[n + 16 : n + 20]}-{text[n + 20 : n + 32]}"
        for n in range(0, 32 * count, 32)
    ]


def utcnow() -> datetime:
    """The current time, timezone-aware in UTC, to the second."""
    return datetime.now(UTC).replace(microsecond=0)
