"""The content of one inspection report as plain data, ready to render or to preview.

Everything a page shows is worked out here, in words: results are "pass",
"fail", "watch" and so on, never a colour alone, and values are already
formatted with their units. The renderer and the TUI preview only lay it out.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path
from typing import TYPE_CHECKING

from inspectkit.cautions import CAUTIONS
from inspectkit.engine.conformity_verdicts import Conformity
from inspectkit.geometry_model import GeometryItem
from inspectkit.wording import counted

if TYPE_CHECKING:
    from inspectkit.report.earthing_content import EarthingReport

#: Said on every report beside the cautions (whose last one says who decides).
DEFERRAL = (
    "This report records what was inspected and measured, judged against the acceptance "
    "limits of the rule set named in the site details; where local codes or the authority "
    "having jurisdiction set other limits, theirs apply."
)


#: Heading of the paragraph on changes to the structure since the last visit.
CHANGES_TITLE = "Changes since the last visit"


@dataclass(frozen=True)
class Field:
    """One labelled line of a details table."""

    label: str
    value: str


@dataclass(frozen=True)
class ReadingRow:
    """One reading as the report's table shows it; `result` is a word.

    `soil` is the ground's state recorded with it, given only where the visit's earth
    readings differ (otherwise the inspection's "Soil" line says it once).
    """

    reading_id: str
    tag: str
    component: str
    quantity: str
    method: str
    value: str
    limit: str
    result: str
    note: str = ""
    #: Serial of the instrument it was taken with ("" when none is recorded).
    instrument: str = ""
    soil: str = ""


@dataclass(frozen=True)
class PhotoItem:
    """A photo to embed, with the caption printed under it."""

    photo_id: str
    path: Path
    caption: str


@dataclass(frozen=True)
class FindingRow:
    """A visual finding to act on, with what to do about it and the photos that show it.

    Attributes:
        priority: the heading it is listed under, e.g. "Priority 1: defects".
        history: how long the fault has been open, for a repeat of an earlier finding.
    """

    tag: str
    grade: str
    category: str
    text: str
    remedial_action: str
    due_by: str
    photos: tuple[PhotoItem, ...] = ()
    priority: str = ""
    history: str = ""


@dataclass(frozen=True)
class SoundRow:
    """A component graded sound: one line of the compact table, not a paragraph."""

    tag: str
    component: str
    remark: str = ""


@dataclass(frozen=True)
class Action:
    """One thing the client must have done, for the first page's list.

    Attributes:
        when: by when, in words ("now", "by 2027-01-31", "at a return visit").
        result: the severity word in capitals.
        tag: the component, or "site".
        what: the engine's sentence.
    """

    when: str
    result: str
    tag: str
    what: str


@dataclass(frozen=True)
class Notice:
    """An engine result that is not one reading's pass or fail (calibration, missing tests…)."""

    result: str
    tag: str
    message: str


@dataclass(frozen=True)
class TrendChart:
    """One electrode's earth resistance over time, its fitted line and forecast.

    Attributes:
        tag: The electrode's (or test joint's) tag.
        points: (date, ohms) of every reading used.
        fit: Two (date, ohms) points of the fitted line, or empty with fewer than three readings.
        limit: The acceptance limit in ohms, if any.
        crossing: The date the fitted line reaches the limit, if it does.
        summary: The trend in words, e.g. "rising 1.2 Ω a year; reaches 10 Ω about 2029-04".
    """

    tag: str
    points: tuple[tuple[date, float], ...]
    fit: tuple[tuple[date, float], ...]
    limit: float | None
    crossing: date | None
    summary: str


@dataclass(frozen=True)
class RoofPlan:
    """What the report's plan page needs: the site's geometry and its verdicts."""

    geometry: tuple[GeometryItem, ...]
    judged: Conformity


@dataclass(frozen=True)
class ReportContent:
    """Everything one inspection report says, section by section.

    Attributes:
        title: e.g. "Complete inspection report".
        site_name, inspection_id, revision_label: for the footer of every page.
        verdict: the summary verdict, one sentence.
        verdict_word: "PASS", "ACTION NEEDED", … shown large on the summary page.
        headline: short lines under the verdict (counts of fails, watches, findings).
        site, structure, inspection, inspector: labelled detail lines.
        instruments: rows of (description, serial, calibration due, state in words,
            which readings it took).
        readings: every reading with its limit and result.
        findings: the visual findings to act on (defects, then items needing attention).
        sound: the components graded sound, as a compact table.
        actions: what to have done, by when, most urgent first (first page).
        visits: what the actions and the schedule cost in visits, in sentences.
        legend: (word, meaning) of each severity the report uses.
        notices: engine results not tied to one reading's limit.
        trends: electrode trend charts.
        schedule: next inspections in words.
        not_inspected: what could not be inspected and why, in the inspector's words.
        not_inspected_parts: each component marked not inspected, `TAG: why`.
        changes_since_last: changes to the structure since the last visit that need
            more protection; empty when none were seen.
        amendment: lines saying what this amendment changed against the original.
        amends: words naming the original inspection, for an amendment.
        signer_name, signer_qualification: for the visible signature block.
        general_photos: photos not attached to any finding.
        roof_plan: the recorded geometry and its protection verdicts, if any.
    """

    title: str
    site_name: str
    inspection_id: str
    revision_label: str
    inspection_date: date
    verdict: str
    verdict_word: str
    headline: tuple[str, ...]
    site: tuple[Field, ...]
    structure: tuple[Field, ...]
    inspection: tuple[Field, ...]
    instruments: tuple[tuple[str, str, str, str, str], ...]
    readings: tuple[ReadingRow, ...]
    findings: tuple[FindingRow, ...]
    notices: tuple[Notice, ...]
    trends: tuple[TrendChart, ...]
    schedule: tuple[Field, ...]
    not_inspected: str
    signer_name: str
    signer_qualification: str
    signer_organisation: str = ""
    changes_since_last: str = ""
    amends: str = ""
    amendment: tuple[str, ...] = ()
    general_photos: tuple[PhotoItem, ...] = ()
    not_inspected_parts: tuple[str, ...] = ()
    sound: tuple[SoundRow, ...] = ()
    actions: tuple[Action, ...] = ()
    visits: tuple[str, ...] = ()
    legend: tuple[tuple[str, str], ...] = ()
    cautions: tuple[str, ...] = CAUTIONS
    deferral: str = DEFERRAL
    #: The site's roof plan and its verdicts; None when no geometry is recorded.
    roof_plan: RoofPlan | None = None
    earthing: EarthingReport | None = None

    def photos(self) -> list[PhotoItem]:
        """Every photo the report embeds, findings' first."""
        return [p for f in self.findings for p in f.photos] + list(self.general_photos)

    def without_photos(self, keep: set[str]) -> ReportContent:
        """The same report with only the photos whose ids are in `keep` (the TUI's choice)."""
        return replace(
            self,
            findings=tuple(
                replace(f, photos=tuple(p for p in f.photos if p.photo_id in keep))
                for f in self.findings
            ),
            general_photos=tuple(p for p in self.general_photos if p.photo_id in keep),
        )


def not_inspected_lines(content: ReportContent) -> tuple[str, ...]:
    """The inspector's words on what was not inspected, then each component marked so."""
    lines = tuple(filter(None, (content.not_inspected, *content.not_inspected_parts)))
    return lines or ("Every part listed was inspected.",)


@dataclass(frozen=True)
class Section:
    """A titled block of plain-text lines: the report as a screen or a terminal shows it."""

    title: str
    lines: tuple[str, ...]


def text_sections(content: ReportContent) -> list[Section]:
    """The report's content as plain text, section by section, in the PDF's order."""

    def fields(items: tuple[Field, ...]) -> tuple[str, ...]:
        return tuple(f"{f.label}: {f.value}" for f in items if f.value)

    opening = (
        content.site_name,
        f"{content.verdict_word}: {content.verdict}",
        *content.headline,
        *content.visits,
    )
    sections = [Section(content.title, opening + ((content.amends,) if content.amends else ()))]
    sections.append(
        Section(
            "What to do, by when",
            tuple(f"{a.when:<16} {a.result:<10} {a.tag:<8} {a.what}" for a in content.actions)
            or ("Nothing to do before the next routine inspection.",),
        )
    )
    if content.amendment:
        sections.append(Section("What this amendment changed", content.amendment))
    sections += [
        Section(
            "Points to act on or watch",
            tuple(f"{n.result:<10} {n.tag:<8} {n.message}" for n in content.notices)
            or ("Nothing to act on or watch.",),
        ),
        Section("Inspection", fields(content.inspection)),
        Section("Site", fields(content.site) + fields(content.structure)),
        Section(
            "Instruments",
            tuple(" · ".join(row) for row in content.instruments) or ("No instrument recorded.",),
        ),
        Section(
            "Readings",
            tuple(
                f"{r.tag:<8} {r.quantity}: {r.value} (limit {r.limit}) → {r.result}"
                + (f" [{r.instrument}]" if r.instrument else "")
                for r in content.readings
            )
            or ("No readings.",),
        ),
        Section(
            "Findings to act on",
            tuple(
                f"{f.tag:<8} {f.grade}: {f.text}"
                + (f" — {f.remedial_action}" if f.remedial_action else "")
                + (f" (by {f.due_by})" if f.due_by else "")
                + (f" [{counted(len(f.photos), 'photo')}]" if f.photos else "")
                + (f" ({f.history})" if f.history else "")
                for f in content.findings
            )
            or ("Nothing to act on was found.",),
        ),
        Section(
            "Components found sound",
            (", ".join(r.tag for r in content.sound),) if content.sound else ("None.",),
        ),
        Section(
            "Electrode trends",
            tuple(t.summary for t in content.trends)
            or ("No electrode has enough readings for a trend.",),
        ),
        *([Section("Earthing", content.earthing.lines())] if content.earthing else []),
        Section("Next inspections", fields(content.schedule)),
        *(
            [Section(CHANGES_TITLE, (content.changes_since_last,))]
            if content.changes_since_last
            else []
        ),
        Section("Not inspected", not_inspected_lines(content)),
        Section("Safety", (*content.cautions, content.deferral)),
        Section("What the result words mean", tuple(f"{w}: {m}" for w, m in content.legend)),
    ]
    return sections
