"""Building a report's content for one inspection from the store and the engine's verdicts.

Pass, fail and watch come from the engine's results (`check_site` as of the
visit's day), never from a second copy of the rules here. The history the
engine sees is the site's as it stood that day, with an amended inspection
replaced by its amendment, so a correction is judged and trended once.
"""

from __future__ import annotations

from collections import Counter
from datetime import date, datetime, timedelta

from inspectkit.engine.check import SiteCheck, check_site
from inspectkit.engine.history import as_of, calibration_lapsed, electrode_count, series, usable
from inspectkit.engine.results import Result
from inspectkit.engine.trend import YEAR_DAYS, ElectrodeTrend
from inspectkit.model import (
    WALKING_ORDER,
    Component,
    EarthingArrangement,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    InspectionState,
    Inspector,
    Method,
    Photo,
    Reading,
    Severity,
    Site,
    SiteRecords,
)
from inspectkit.profiles import Profile, load_profile
from inspectkit.report.amend import chain_of, describe_changes
from inspectkit.report.content import (
    Field,
    FindingRow,
    Notice,
    PhotoItem,
    ReadingRow,
    ReportContent,
    TrendChart,
)
from inspectkit.report.earthing_content import earthing_report
from inspectkit.store import Store, StoreError
from inspectkit.store.photos import photo_path
from inspectkit.store.queries import load_site_records
from inspectkit.units import format_value


class ReportError(StoreError):
    """A report cannot be built as asked; the message says why."""


#: Words for the engine's severities, as a reading's result or the verdict.
RESULT_WORDS = {
    Severity.OK: "PASS",
    Severity.WATCH: "WATCH",
    Severity.INCOMPLETE: "INCOMPLETE",
    Severity.FAIL: "FAIL",
    Severity.OVERDUE: "OVERDUE",
}
#: Why a reading got its result, by the engine rule that gave it.
_RULE_REASONS = {
    "limit": "above the limit",
    "rise": "rise on earlier readings",
    "calibration": "instrument out of calibration",
    "unreliable": "marked doubtful",
}
_VERDICTS = {
    Severity.OK: ("SATISFACTORY", "Every reading is within its limit and nothing needs action."),
    Severity.WATCH: (
        "SATISFACTORY, POINTS TO WATCH",
        "No reading fails its limit; some points should be watched or followed up.",
    ),
    Severity.INCOMPLETE: (
        "INCOMPLETE",
        "Some tests the inspection should include were not taken; see the summary.",
    ),
    Severity.FAIL: (
        "ACTION NEEDED",
        "Some readings or conditions fail; remedial work is needed, see the summary.",
    ),
    Severity.OVERDUE: (
        "ACTION NEEDED",
        "An inspection or a remedy is overdue; see the summary.",
    ),
}
_KIND_TITLES = {
    InspectionKind.INITIAL: "Initial inspection report",
    InspectionKind.VISUAL: "Visual inspection report",
    InspectionKind.COMPLETE: "Complete inspection report",
    InspectionKind.POST_STRIKE: "Inspection report after a lightning strike",
    InspectionKind.AMENDMENT: "Amended inspection report",
}


#: Trend charts look this far past the last reading at least (our default).
CHART_YEARS_AHEAD = 3

#: How each method is written in a report.
METHOD_WORDS = {
    Method.FALL_OF_POTENTIAL_3P: "fall of potential (3-pole)",
    Method.FOUR_POLE: "4-pole",
    Method.CLAMP_ON: "clamp-on",
    Method.LOW_OHM_2W: "low-ohm, 2-wire",
    Method.LOW_OHM_4W: "low-ohm, 4-wire",
    Method.WENNER: "Wenner",
    Method.COUNTER_READ: "counter read",
}


def _words(value: str) -> str:
    return value.replace("_", " ")


def history_for(records: SiteRecords, inspection: Inspection) -> SiteRecords:
    """The site's records as the engine should judge this inspection.

    Later visits are left out (as of the visit's day, as the engine judges it);
    inspections replaced by an amendment are dropped with their readings,
    findings and photos; and this inspection counts as finished.
    """
    amenders: dict[str, list[str]] = {}
    for other in records.inspections:
        if other.amends_id:
            amenders.setdefault(other.amends_id, []).append(other.id)
    # Corrections made after this inspection (amendments of it, and of those) do not
    # belong in its report; what the remaining amendments correct is replaced by them.
    later: set[str] = set()
    waiting = [inspection.id]
    while waiting:
        for child in amenders.get(waiting.pop(), []):
            if child not in later:
                later.add(child)
                waiting.append(child)
    replaced = later | {
        i.amends_id for i in records.inspections if i.amends_id and i.id not in later
    }
    replaced.discard(inspection.id)
    keep = [
        i.model_copy(update={"finished": True}) if i.id == inspection.id else i
        for i in records.inspections
        if i.id not in replaced
    ]
    kept = {i.id for i in keep}
    trimmed = records.model_copy(
        update={
            "inspections": keep,
            "readings": [r for r in records.readings if r.inspection_id in kept],
            "findings": [f for f in records.findings if f.inspection_id in kept],
            "photos": [p for p in records.photos if p.inspection_id in kept],
        }
    )
    return as_of(trimmed, inspection.date)


def _reading_result(
    reading: Reading, results: list[Result], judged: bool, limit: float | None
) -> str:
    """The result word for a reading, from what the engine said about it."""
    if results:
        worst = max(results, key=lambda r: r.severity.rank)
        reasons = ", ".join(dict.fromkeys(_RULE_REASONS.get(r.rule, r.rule) for r in results))
        return f"{RESULT_WORDS[worst.severity]}: {reasons}"
    if not judged:
        return "SUPERSEDED: re-tested, see the later reading"
    if limit is None:
        return "RECORDED: no limit applies"
    return RESULT_WORDS[Severity.OK]


def _readings(
    inspection: Inspection,
    records: SiteRecords,
    check: SiteCheck,
    profile: Profile,
    components: dict[str, Component],
) -> tuple[ReadingRow, ...]:
    by_reading: dict[str, list[Result]] = {}
    for result in check.results:
        if result.reading_id:
            by_reading.setdefault(result.reading_id, []).append(result)
    latest = {group[-1].id for group in series(records.readings).values()}
    count = electrode_count(records, inspection.date)
    rows = []
    mine = [r for r in records.readings if r.inspection_id == inspection.id]
    order = {kind: n for n, kind in enumerate(WALKING_ORDER)}
    for reading in sorted(
        mine,
        key=lambda r: (
            order.get(components[r.component_id].kind, 99) if r.component_id in components else 99,
            components[r.component_id].tag if r.component_id in components else "",
            r.taken_at,
        ),
    ):
        component = components.get(reading.component_id)
        limit = profile.limit_for(reading.quantity, count)
        rows.append(
            ReadingRow(
                reading_id=reading.id,
                tag=component.tag if component else "?",
                component=component.kind.label if component else "unknown component",
                quantity=reading.quantity.label,
                method=METHOD_WORDS[reading.method],
                value=format_value(reading.value, reading.quantity, reading.over_range),
                limit=f"≤ {format_value(limit, reading.quantity)}" if limit is not None else "—",
                result=_reading_result(
                    reading, by_reading.get(reading.id, []), reading.id in latest, limit
                ),
                note=reading.note,
            )
        )
    return tuple(rows)


def _photo_item(store: Store, photo: Photo, components: dict[str, Component]) -> PhotoItem:
    component = components.get(photo.component_id or "")
    caption = photo.caption or photo.original_name
    if component is not None:
        caption = f"{component.tag}: {caption}"
    return PhotoItem(photo.id, photo_path(store, photo.sha256), caption)


def _findings(
    store: Store, inspection: Inspection, records: SiteRecords, components: dict[str, Component]
) -> tuple[tuple[FindingRow, ...], tuple[PhotoItem, ...]]:
    mine = [f for f in records.findings if f.inspection_id == inspection.id]
    photos = [p for p in records.photos if p.inspection_id == inspection.id]
    rank = {Grade.DEFECT: 0, Grade.NEEDS_ATTENTION: 1, Grade.SOUND: 2}
    mine.sort(
        key=lambda f: (
            rank[f.grade],
            components[f.component_id].tag if f.component_id in components else "",
        )
    )
    shown: set[str] = set()
    rows = []
    for finding in mine:
        own = [
            p
            for p in photos
            if p.component_id and p.component_id == finding.component_id and p.id not in shown
        ]
        shown.update(p.id for p in own)
        rows.append(_finding_row(store, finding, own, components))
    rest = tuple(_photo_item(store, p, components) for p in photos if p.id not in shown)
    return tuple(rows), rest


def _finding_row(
    store: Store, finding: Finding, photos: list[Photo], components: dict[str, Component]
) -> FindingRow:
    component = components.get(finding.component_id or "")
    return FindingRow(
        tag=component.tag if component else "site",
        grade=_words(finding.grade.value).upper(),
        category=finding.category,
        text=finding.text,
        remedial_action=finding.remedial_action,
        due_by=finding.due_by.isoformat() if finding.due_by else "",
        photos=tuple(_photo_item(store, p, components) for p in photos),
    )


def _trend_chart(trend: ElectrodeTrend, records: SiteRecords) -> TrendChart | None:
    """A chart of the readings the engine fitted, with its line carried to the forecast."""
    points = tuple(
        (r.taken_at.date(), float(r.value))
        for r in sorted(records.readings, key=lambda r: r.taken_at)
        if r.component_id == trend.component_id
        and r.quantity.value == "earth_isolated"
        and usable(records, r)
        and r.value is not None
    )
    if len(points) < 2:
        return None
    fit: tuple[tuple[date, float], ...] = ()
    if trend.forecast and trend.last_day and trend.first_day and trend.fitted_last is not None:
        slope = trend.slope_ohm_per_year or 0.0
        # Carry the line to the next complete inspection (at least a few years on),
        # and to the crossing when it falls within that; a crossing decades away
        # would squash the readings into a corner, and the summary gives its date.
        horizon = max(
            trend.next_complete or trend.last_day,
            trend.last_day + timedelta(days=round(CHART_YEARS_AHEAD * YEAR_DAYS)),
        )
        end = (
            trend.crossing
            if trend.crossing and trend.last_day < trend.crossing <= horizon
            else horizon
        )

        def at(day: date) -> float:
            return max(0.0, trend.fitted_last + slope * (day - trend.last_day).days / YEAR_DAYS)

        fit = ((trend.first_day, at(trend.first_day)), (end, at(end)))
    return TrendChart(
        tag=trend.component_tag,
        points=points,
        fit=fit,
        limit=trend.limit,
        crossing=trend.crossing,
        summary=f"{trend.component_tag}: {trend.note}.",
    )


#: Each earthing arrangement in the words of IEC 62305-3, 5.4.2.
ARRANGEMENT_WORDS = {
    EarthingArrangement.A: "type A: a rod or plate electrode at each down conductor",
    EarthingArrangement.B: "type B: a ring conductor or foundation electrode",
}


def _general(site: Site) -> tuple[Field, ...]:
    """Owner, address and the structure itself: the general part of the report."""
    return (
        Field("Client", site.client),
        Field("Address", site.address),
        Field("Town", site.town),
        Field(
            "Coordinates",
            f"{site.latitude:.5f}, {site.longitude:.5f}"
            if site.latitude is not None and site.longitude is not None
            else "",
        ),
        Field("Use", site.use),
        Field("Construction", site.construction),
        Field("Roofing", site.roofing),
        Field("Year built", str(site.built_year) if site.built_year else ""),
        Field("LPS installed by", site.installer),
        Field("LPS installed in", str(site.installed_year) if site.installed_year else ""),
        Field("Notes", site.notes),
    )


def _structure(records: SiteRecords, profile: Profile, on: date) -> tuple[Field, ...]:
    site = records.site
    counts = Counter(
        c.kind for c in records.components if c.retired_on is None or c.retired_on > on
    )
    fields = [
        Field("Protection level", f"LPL {site.protection_level.value}"),
        Field(
            "Rule set",
            f"{profile.title or profile.name}"
            + (f" ({profile.standard})" if profile.standard else ""),
        ),
        Field("Designed to", site.design_standard),
        Field("Critical structure", "yes" if site.critical else "no"),
        Field("Explosion risk", "yes" if site.explosive_risk else "no"),
    ]
    if site.height_m:
        fields.append(Field("Height", f"{site.height_m:g} m"))
    fields.append(Field("Air termination", site.air_termination))
    for kind in WALKING_ORDER:
        if counts[kind]:
            fields.append(Field(kind.label.capitalize() + "s", str(counts[kind])))
    types = Counter(c.electrode_type.value for c in records.components if c.electrode_type)
    if types:
        fields.append(
            Field("Electrode types", ", ".join(f"{n} {t}" for t, n in sorted(types.items())))
        )
    arrangement = site.earthing_arrangement
    fields.append(
        Field("Earthing arrangement", ARRANGEMENT_WORDS[arrangement] if arrangement else "")
    )
    return tuple(fields)


def _instruments(
    inspection: Inspection, records: SiteRecords
) -> tuple[tuple[str, str, str, str], ...]:
    used: dict[str, bool] = {}
    for reading in records.readings:
        if reading.inspection_id == inspection.id and reading.instrument_id:
            lapsed = calibration_lapsed(records, reading)
            used[reading.instrument_id] = used.get(reading.instrument_id, False) or lapsed
    rows = []
    for instrument_id, lapsed in used.items():
        instrument = records.instruments.get(instrument_id)
        if instrument is None:
            continue
        due = (
            instrument.calibration_due.isoformat() if instrument.calibration_due else "not recorded"
        )
        rows.append(
            (
                instrument.description,
                instrument.serial,
                due,
                "OUT OF CALIBRATION" if lapsed else "in calibration",
            )
        )
    return tuple(sorted(rows))


def revision_of(inspection: Inspection) -> int:
    """The revision a report of this inspection carries: 1 for an original, +1 per amendment."""
    return max(inspection.report_revision, 1)


def _revision_label(inspection: Inspection, signing: datetime | None) -> str:
    revision = revision_of(inspection)
    if inspection.state is InspectionState.SIGNED and inspection.signed_at:
        return (
            f"revision {revision}, copy of the report signed "
            f"{inspection.signed_at.date().isoformat()}"
        )
    if signing is not None:
        return f"revision {revision}, signed {signing.date().isoformat()}"
    return f"revision {revision}, DRAFT (not signed)"


def build_report(
    store: Store,
    inspection_id: str,
    *,
    signing: datetime | None = None,
    profile: Profile | None = None,
) -> ReportContent:
    """Everything one inspection's report says.

    Args:
        store: The database.
        inspection_id: The inspection reported on.
        signing: When the report is about to be signed (its revision line says so).
        profile: The rule set to judge by; the site's own by default.

    Raises:
        ReportError: no such inspection.
        ProfileError: the site names a profile that cannot be found.
    """
    inspection = store.get(Inspection, inspection_id)
    if inspection is None:
        raise ReportError(f"no inspection with id {inspection_id}; check the id")
    all_records = load_site_records(store, inspection.site_id)
    site = all_records.site
    profile = profile or load_profile(site.profile)
    records = history_for(all_records, inspection)
    check = check_site(records, profile, inspection.date)
    components = {c.id: c for c in records.components}
    inspector = store.get(Inspector, inspection.inspector_id) if inspection.inspector_id else None

    readings = _readings(inspection, records, check, profile, components)
    findings, general_photos = _findings(store, inspection, records, components)
    trends = tuple(
        chart for chart in (_trend_chart(t, records) for t in check.trends) if chart is not None
    )
    revision_label = _revision_label(inspection, signing)
    worst = check.worst
    verdict_word, verdict = _VERDICTS[worst]
    tally = Counter(row.result.split(":")[0] for row in readings)
    grades = Counter(f.grade for f in findings)
    headline = [
        f"{len(readings)} readings: "
        + (", ".join(f"{n} {w.lower()}" for w, n in tally.most_common()) or "none taken"),
        f"{len(findings)} findings: "
        + (", ".join(f"{n} {g.lower()}" for g, n in grades.most_common()) or "none recorded"),
        f"Next visual inspection due {check.schedule.next_visual.isoformat()}, "
        f"next complete inspection due {check.schedule.next_complete.isoformat()}",
    ]
    amends_text = ""
    changes: tuple[str, ...] = ()
    earlier = chain_of(store, inspection)
    if earlier:
        original = earlier[0]
        amends_text = (
            f"This report amends the signed report of inspection {original.id} of "
            f"{original.date.isoformat()} (revision {revision_of(original)}"
            + (f", sha256 {original.report_sha256}" if original.report_sha256 else "")
            + "), which it replaces."
        )
        changes = tuple(
            describe_changes(
                _parts(all_records, original.id), _parts(all_records, inspection.id), components
            )
        ) or ("No reading, finding or photo was changed.",)
    inspection_fields = [
        Field("Inspection", f"{_words(inspection.kind.value)}, {inspection.date.isoformat()}"),
        Field("Inspector", inspector.name if inspector else "not recorded"),
        Field("Qualification", inspector.qualification if inspector else ""),
        Field("Organisation", inspector.organisation if inspector else ""),
        Field("Accompanied by", inspection.accompanied_by),
        Field("Weather", inspection.weather),
        Field("Soil", inspection.soil.value if inspection.soil else "not recorded"),
        *([Field("Notes", inspection.notes)] if inspection.notes.strip() else []),
        Field("Report", revision_label),
        Field("Inspection id", inspection.id),
    ]
    return ReportContent(
        title=_KIND_TITLES[inspection.kind],
        site_name=site.name,
        inspection_id=inspection.id,
        revision_label=revision_label,
        inspection_date=inspection.date,
        verdict=verdict,
        verdict_word=verdict_word,
        headline=tuple(headline),
        site=_general(site),
        structure=_structure(records, profile, inspection.date),
        inspection=tuple(inspection_fields),
        instruments=_instruments(inspection, records),
        readings=readings,
        findings=findings,
        notices=tuple(
            Notice(RESULT_WORDS[r.severity], r.component_tag or "site", r.message)
            for r in check.results
        ),
        trends=trends,
        schedule=(
            Field(
                "Intervals",
                f"visual every {check.schedule.visual_months} months, complete "
                f"every {check.schedule.complete_months} months ({check.schedule.interval_basis})",
            ),
            Field("Next visual inspection", check.schedule.next_visual.isoformat()),
            Field("Next complete inspection", check.schedule.next_complete.isoformat()),
        ),
        not_inspected=inspection.not_inspected,
        changes_since_last=inspection.changes_since_last,
        signer_name=inspector.name if inspector else "",
        signer_qualification=inspector.qualification if inspector else "",
        signer_organisation=inspector.organisation if inspector else "",
        amends=amends_text,
        amendment=changes,
        general_photos=general_photos,
        earthing=earthing_report(records, profile, inspection.date, inspection.id),
    )


def _parts(
    records: SiteRecords, inspection_id: str
) -> tuple[list[Reading], list[Finding], list[Photo]]:
    return (
        [r for r in records.readings if r.inspection_id == inspection_id],
        [f for f in records.findings if f.inspection_id == inspection_id],
        [p for p in records.photos if p.inspection_id == inspection_id],
    )


def latest_inspection(store: Store, site_id: str) -> Inspection | None:
    """A site's most recent inspection (by date, then by when it was recorded)."""
    found = store.select(
        Inspection, "site_id = ?", [site_id], order_by="date DESC, created_at DESC"
    )
    return found[0] if found else None
