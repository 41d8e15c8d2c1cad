"""The report's sections, each a function from the content to flowables, in reading order.

A new section is a function `(content, kit) -> list[Flowable]` added to
`SECTIONS` where it belongs; it lays itself out with `layout.py`'s blocks.
"""

from __future__ import annotations

from collections.abc import Callable
from itertools import groupby

from reportlab.lib import colors
from reportlab.lib.units import mm
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    KeepTogether,
    NextPageTemplate,
    PageBreak,
    Paragraph,
    Spacer,
    Table,
)

from inspectkit.cautions import TITLE as CAUTIONS_TITLE
from inspectkit.report.charts import trend_drawing
from inspectkit.report.content import CHANGES_TITLE, ReportContent, not_inspected_lines
from inspectkit.report.layout import (
    Kit,
    SignatureBox,
    fields_table,
    grid,
    photo_grid,
    styled,
    text_of,
    two_up,
)
from inspectkit.report.roof_plan import roof_plan

#: Actions listed on the first page; the rest are in the summary's full list.
FIRST_PAGE_ACTIONS = 6

Section = Callable[[ReportContent, Kit], list[Flowable]]


def first_page(content: ReportContent, kit: Kit) -> list[Flowable]:
    """What someone who runs the building needs in a minute: result, what to do, the visits."""
    s = kit.styles
    out: list[Flowable] = [
        kit.para(content.title, "title"),
        Spacer(1, 3 * mm),
        Paragraph(f"<b>{text_of(content.site_name)}</b>", s["cover"]),
    ]
    place = [f.value for f in content.site[:3] if f.value]
    if place:
        out.append(kit.para(" · ".join(place), "cover"))
    inspector = next((f.value for f in content.inspection if f.label == "Inspector"), "")
    by = f", by {inspector}" if inspector and inspector != "not recorded" else ""
    org = f" ({content.signer_organisation})" if content.signer_organisation else ""
    out.append(kit.para(f"Inspected on {content.inspection_date.isoformat()}{by}{org}", "cover"))
    out += [Spacer(1, 5 * mm), _verdict_box(content, kit), Spacer(1, 5 * mm)]
    out.append(kit.para("What to do, by when", "h2"))
    if content.actions:
        shown = content.actions[:FIRST_PAGE_ACTIONS]
        out.append(
            grid(
                ["By when", "Result", "Where", "What"],
                [[a.when, a.result, a.tag, a.what] for a in shown],
                [kit.width * w for w in (0.17, 0.12, 0.1, 0.61)],
                s,
                kit.branding,
                1,
            )
        )
        more = len(content.actions) - len(shown)
        if more:
            out.append(kit.para(f"… and {more} more in the summary's full list.", "small"))
    else:
        out.append(kit.para("Nothing to do before the next routine inspection."))
    out.append(kit.para("Visits this needs", "h2"))
    out += [kit.para(f"• {line}") for line in content.visits]
    if content.amends:
        out += [Spacer(1, 4 * mm), kit.para(f"Amendment. {content.amends}")]
    out += [NextPageTemplate("body"), PageBreak()]
    return out


def _verdict_box(content: ReportContent, kit: Kit) -> Table:
    box = Table(
        [[kit.para(content.verdict_word, "verdict")], [kit.para(content.verdict, "cover")]],
        colWidths=[kit.width],
    )
    return styled(
        box,
        ("BOX", (0, 0), (-1, -1), 1.5, colors.HexColor(kit.branding.primary)),
        ("TOPPADDING", (0, 0), (-1, -1), 8),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 8),
        ("LEFTPADDING", (0, 0), (-1, -1), 10),
    )


def summary(content: ReportContent, kit: Kit) -> list[Flowable]:
    """The counts, every point to act on or watch, the words' legend and the next visits."""
    out: list[Flowable] = [kit.para("Summary", "h1")]
    out += [kit.para(f"• {line}") for line in content.headline]
    if content.amendment:
        out.append(kit.para("What this amendment changed", "h2"))
        out += [kit.para(f"• {line}") for line in content.amendment]
    if content.notices:
        out.append(kit.para("Points to act on or watch", "h2"))
        out.append(
            grid(
                ["Result", "Component", "What was found"],
                [[n.result, n.tag, n.message] for n in content.notices],
                [kit.width * 0.14, kit.width * 0.13, kit.width * 0.73],
                kit.styles,
                kit.branding,
                0,
            )
        )
    out.append(kit.para("What the result words mean", "h2"))
    out.append(
        grid(
            ["Word", "Meaning"],
            [[word, meaning] for word, meaning in content.legend],
            [kit.width * 0.16, kit.width * 0.84],
            kit.styles,
            kit.branding,
            0,
        )
    )
    out.append(kit.para("Next inspections", "h2"))
    out.append(fields_table(content.schedule, kit.styles, kit.width))
    if content.changes_since_last:
        out += [kit.para(CHANGES_TITLE, "h2"), kit.para(content.changes_since_last)]
    out.append(kit.para("Not inspected", "h2"))
    out += [kit.para(line) for line in not_inspected_lines(content)]
    return out


def safety(content: ReportContent, kit: Kit) -> list[Flowable]:
    """The cautions, on every report, and who decides."""
    out: list[Flowable] = [kit.para(CAUTIONS_TITLE, "h2")]
    out += [kit.para(f"• {caution}", "small") for caution in content.cautions]
    out += [Spacer(1, 2 * mm), kit.para(content.deferral, "small")]
    return out


def site_details(content: ReportContent, kit: Kit) -> list[Flowable]:
    """The visit, the site, its protection system and the instruments used."""
    out: list[Flowable] = [
        CondPageBreak(90 * mm),
        kit.para("The inspection", "h1"),
        fields_table(content.inspection, kit.styles, kit.width),
        kit.para("The site and its protection system", "h1"),
        fields_table(content.site, kit.styles, kit.width),
        Spacer(1, 4 * mm),
        fields_table(content.structure, kit.styles, kit.width),
        kit.para("Instruments", "h2"),
    ]
    if content.instruments:
        out.append(
            grid(
                ["Instrument", "Serial", "Calibration due", "On the day", "Readings taken"],
                [list(row) for row in content.instruments],
                [kit.width * w for w in (0.28, 0.14, 0.14, 0.16, 0.28)],
                kit.styles,
                kit.branding,
            )
        )
    else:
        out.append(kit.para("No instrument was recorded."))
    return out


def readings(content: ReportContent, kit: Kit) -> list[Flowable]:
    """Every reading with its limit and its result in words."""
    out: list[Flowable] = [CondPageBreak(60 * mm), kit.para("Readings", "h1")]
    if not content.readings:
        return [*out, kit.para("No readings were taken at this visit.")]
    out.append(
        kit.para(
            "Each reading with the limit it was judged against and the result in words; "
            "the limits are those of the rule set named in the site details.",
            "small",
        )
    )
    out.append(Spacer(1, 2 * mm))
    out.append(
        grid(
            ["Tag", "Component", "Quantity, method", "Instrument", "Value", "Limit", "Result"],
            [
                [
                    r.tag,
                    r.component,
                    f"{r.quantity}, {r.method}" + (f"; soil {r.soil}" if r.soil else ""),
                    r.instrument or "—",
                    r.value,
                    r.limit,
                    r.result + (f" ({r.note})" if r.note else ""),
                ]
                for r in content.readings
            ],
            [w * kit.width for w in (0.1, 0.14, 0.23, 0.13, 0.1, 0.1, 0.2)],
            kit.styles,
            kit.branding,
            6,
        )
    )
    return out


def findings(content: ReportContent, kit: Kit) -> list[Flowable]:
    """What to act on, by priority, each with its photos."""
    out: list[Flowable] = [CondPageBreak(60 * mm), kit.para("Findings to act on", "h1")]
    if not content.findings:
        out.append(kit.para("No defect and nothing needing attention was found."))
    for priority, group in groupby(content.findings, key=lambda f: f.priority):
        out.append(kit.para(priority, "h2"))
        for finding in group:
            head = f"<b>{text_of(finding.tag)}</b> — {text_of(finding.grade)}" + (
                f" · {text_of(finding.category)}" if finding.category else ""
            )
            block: list[Flowable] = [
                Paragraph(head, kit.styles["body"]),
                kit.para(finding.text),
            ]
            if finding.history:
                block.append(kit.para(finding.history, "small"))
            if finding.remedial_action:
                due = f" (by {finding.due_by})" if finding.due_by else ""
                block.append(
                    Paragraph(
                        f"<b>Remedial action{due}:</b> {text_of(finding.remedial_action)}",
                        kit.styles["body"],
                    )
                )
            block.extend(photo_grid(finding.photos, kit.styles, kit.width))
            block.append(Spacer(1, 3 * mm))
            out.append(KeepTogether(block))
    return out


def sound_components(content: ReportContent, kit: Kit) -> list[Flowable]:
    """The components found sound, two to a row: seen to have been looked at, no more."""
    if not content.sound:
        return []
    rows = [
        [r.tag, r.component, "sound" + (f": {r.remark}" if r.remark else "")] for r in content.sound
    ]
    half = (len(rows) + 1) // 2
    left, right = rows[:half], rows[half:] + [["", "", ""]] * (half - len(rows[half:]))
    paired = [a + b for a, b in zip(left, right, strict=True)]
    w = kit.width / 2
    return [
        CondPageBreak(40 * mm),
        kit.para("Components found sound", "h2"),
        grid(
            ["Tag", "Component", "Result"] * 2,
            paired,
            [w * 0.18, w * 0.6, w * 0.22] * 2,
            kit.styles,
            kit.branding,
        ),
    ]


def trends(content: ReportContent, kit: Kit) -> list[Flowable]:
    """Each electrode's readings over the years with its fitted line."""
    if not content.trends:
        return []
    charts = [
        [
            trend_drawing(chart, kit.width / 2 - 4, 58 * mm, kit.branding.primary),
            kit.para(chart.summary, "small"),
        ]
        for chart in content.trends
    ]
    table = two_up(
        charts,
        kit.width,
        ("LEFTPADDING", (0, 0), (-1, -1), 0),
        ("BOTTOMPADDING", (0, 0), (-1, -1), 8),
    )
    return [
        CondPageBreak(80 * mm),
        kit.para("Electrode trends", "h1"),
        kit.para(
            "Earth resistance of each electrode over the years, with a robust fitted line "
            "(Theil–Sen) carried forward to show when it would reach its limit.",
            "small",
        ),
        table,
    ]


def other_photos(content: ReportContent, kit: Kit) -> list[Flowable]:
    """Photos not shown with a finding."""
    if not content.general_photos:
        return []
    return [
        CondPageBreak(80 * mm),
        kit.para("Photos", "h1"),
        *photo_grid(content.general_photos, kit.styles, kit.width),
    ]


def sign_off(content: ReportContent, kit: Kit) -> list[Flowable]:
    """Who signs, and the box the signature's stamp goes in."""
    lines = [f"Inspector: {content.signer_name or 'not named'}"]
    if content.signer_qualification:
        lines.append(f"Qualification: {content.signer_qualification}")
    if content.signer_organisation:
        lines.append(f"Organisation: {content.signer_organisation}")
    lines.append(f"Inspection date: {content.inspection_date.isoformat()}")
    return [
        CondPageBreak(75 * mm),
        kit.para("Sign-off", "h1"),
        *(kit.para(line) for line in lines),
        Spacer(1, 3 * mm),
        Paragraph(
            "Digital signature (check it with <i>inspectkit verify</i> or any PDF "
            "reader that validates signatures):",
            kit.styles["small"],
        ),
        Spacer(1, 2 * mm),
        SignatureBox(95 * mm, 26 * mm, kit.slot),
    ]


#: The sections in the order the report prints them.
SECTIONS: tuple[Section, ...] = (
    first_page,
    summary,
    safety,
    site_details,
    readings,
    findings,
    sound_components,
    trends,
    other_photos,
    roof_plan,
    sign_off,
)
