"""A visit's visual findings as the report lists them: what to act on by priority, the rest sound.

A client acts on the defects and the items needing attention; the components
found sound only need to be seen to have been looked at, so they are one line
each in a compact table rather than a paragraph each.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from inspectkit.engine.history import first_found
from inspectkit.model import Component, Finding, Grade, Inspection, Photo, SiteRecords
from inspectkit.report.content import FindingRow, PhotoItem, SoundRow
from inspectkit.store import Store
from inspectkit.store.photos import photo_path
from inspectkit.wording import counted

#: The heading each grade to act on is listed under, most urgent first.
PRIORITIES = {
    Grade.DEFECT: "Priority 1: defects, to put right now",
    Grade.NEEDS_ATTENTION: "Priority 2: needing attention, by the date given",
}


@dataclass(frozen=True)
class VisitFindings:
    """What the report shows of one visit's findings."""

    to_act_on: tuple[FindingRow, ...]
    sound: tuple[SoundRow, ...]
    other_photos: tuple[PhotoItem, ...]


def photo_item(store: Store, photo: Photo, components: dict[str, Component]) -> PhotoItem:
    """A photo with its caption, led by the tag of the component it shows."""
    component = components.get(photo.component_id or "")
    caption = photo.caption or photo.original_name
    if component is not None:
        caption = f"{component.tag}: {caption}"
    return PhotoItem(photo.id, photo_path(store, photo.sha256), caption)


def repeat_history(finding: Finding, records: SiteRecords, on: date) -> str:
    """For a repeat defect, since when the fault has been open and what became of the first."""
    if not finding.same_as_id:
        return ""
    dates = {i.id: i.date for i in records.inspections}
    first = first_found(finding, {f.id: f for f in records.findings}, dates)
    earlier = next((f for f in records.findings if f.id == finding.same_as_id), None)
    when = dates.get(earlier.inspection_id) if earlier else None
    days = (on - first).days
    return (
        f"The same fault as found {first.isoformat()}: open {counted(days, 'day')}. "
        + (
            f"The finding of {when.isoformat()} is closed as still present, see this one."
            if when
            else ""
        )
    ).strip()


def visit_findings(
    store: Store,
    inspection: Inspection,
    records: SiteRecords,
    components: dict[str, Component],
) -> VisitFindings:
    """The visit's findings by priority, each with its photos; the sound ones as rows."""
    mine = [f for f in records.findings if f.inspection_id == inspection.id]
    photos = [p for p in records.photos if p.inspection_id == inspection.id]

    def tag(finding: Finding) -> str:
        component = components.get(finding.component_id or "")
        return component.tag if component else "site"

    rank = {Grade.DEFECT: 0, Grade.NEEDS_ATTENTION: 1}
    acting = sorted((f for f in mine if f.grade in rank), key=lambda f: (rank[f.grade], tag(f)))
    shown: set[str] = set()
    rows = []
    for finding in acting:
        own = [
            p
            for p in photos
            if p.component_id and p.component_id == finding.component_id and p.id not in shown
        ]
        shown.update(p.id for p in own)
        rows.append(
            FindingRow(
                tag=tag(finding),
                grade=finding.grade.value.replace("_", " ").upper(),
                category=finding.category,
                text=finding.text,
                remedial_action=finding.remedial_action,
                due_by=finding.due_by.isoformat() if finding.due_by else "",
                photos=tuple(photo_item(store, p, components) for p in own),
                priority=PRIORITIES[finding.grade],
                history=repeat_history(finding, records, inspection.date),
            )
        )
    sound = tuple(
        SoundRow(
            tag(f),
            components[f.component_id].kind.label if f.component_id in components else "site",
            f.text.strip(),
        )
        for f in sorted((f for f in mine if f.grade is Grade.SOUND), key=tag)
    )
    rest = tuple(photo_item(store, p, components) for p in photos if p.id not in shown)
    return VisitFindings(tuple(rows), sound, rest)
