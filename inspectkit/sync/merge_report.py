"""What a bundle import did, or in a dry run would do, for the person who ran it.

Counts and sentences only: `merge` fills an `ImportReport` in as it writes, and the
command prints its `lines` (or its fields as JSON).
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from typing import Literal

from inspectkit.wording import counted, was_were

Side = Literal["ours", "theirs"]


@dataclass(frozen=True)
class Conflict:
    """A record edited on both sides since the two databases last exchanged it."""

    table: str
    record_id: str
    label: str
    kept: Side
    ours_updated_at: str
    theirs_updated_at: str


@dataclass
class ImportReport:
    """What an import did (or, in a dry run, would do)."""

    site_name: str
    dry_run: bool = False
    added: Counter[str] = field(default_factory=Counter)
    updated: Counter[str] = field(default_factory=Counter)
    unchanged: int = 0
    #: Records whose copy here is later than the bundle's.
    kept_newer: int = 0
    kept_signed: list[str] = field(default_factory=list)
    conflicts: list[Conflict] = field(default_factory=list)
    photos_added: int = 0
    #: Records deleted here because they were deleted there, by table.
    removed: Counter[str] = field(default_factory=Counter)
    #: Records deleted here that the bundle still holds, as deleted: left deleted.
    kept_deleted: int = 0
    #: Records withdrawn on one side, edited or signed on the other: they are kept.
    kept_edited: list[str] = field(default_factory=list)
    #: Inspectors who came with a certificate not trusted here, and records no
    #: signature covers, as sentences.
    notices: list[str] = field(default_factory=list)

    @property
    def changed(self) -> bool:
        return bool(
            self.added or self.updated or self.conflicts or self.photos_added or self.removed
        )

    def lines(self) -> list[str]:
        """The report as sentences, one per line."""

        def done(count: int, noun: str) -> str:
            """ "1 record was", "3 records would be"."""
            verb = "would be" if self.dry_run else was_were(count)
            return f"{counted(count, noun)} {verb}"

        lines = [f"Bundle for site {self.site_name}:"]
        for what, counts in (("added", self.added), ("updated", self.updated)):
            if counts:
                parts = ", ".join(f"{table} {n}" for table, n in sorted(counts.items()))
                lines.append(f"  {done(sum(counts.values()), 'record')} {what} ({parts})")
        lines.append(f"  {counted(self.unchanged, 'record')} already the same")
        if self.kept_newer:
            lines.append(
                f"  {counted(self.kept_newer, 'record')} kept ours: ours is the later version"
            )
        if self.removed:
            parts = ", ".join(f"{table} {n}" for table, n in sorted(self.removed.items()))
            lines.append(
                f"  {done(sum(self.removed.values()), 'record')} removed, as withdrawn on the "
                f"other side ({parts}); they are in the audit log"
            )
        if self.kept_deleted:
            stay = "stays" if self.kept_deleted == 1 else "stay"
            lines.append(f"  {counted(self.kept_deleted, 'record')} {stay} withdrawn here")
        lines.extend(
            f"  kept: {label} was withdrawn on one side, edited or signed on the other"
            for label in self.kept_edited
        )
        if self.photos_added:
            lines.append(f"  {done(self.photos_added, 'photo file')} added")
        lines.extend(f"  kept ours: signed — {message}" for message in self.kept_signed)
        lines.extend(f"  {message}" for message in self.notices)
        for c in self.conflicts:
            lines.append(
                f"  conflict: {c.table} {c.label} was edited on both sides "
                f"(ours {c.ours_updated_at}, theirs {c.theirs_updated_at}); kept {c.kept}, "
                "the other version is in the audit log"
            )
        return lines
