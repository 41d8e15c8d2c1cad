"""Building a report's content for one inspection from the store and the engine's verdicts.

Pass, fail and watch come from the engine's results (`check_site` as of the
visit's day), never from a second copy of the rules here. The history the
engine sees is the site's as it stood that day, with an amended inspection
replaced by its amendment, so a correction is judged and trended once.
"""

from __future__ import annotations

from collections import Counter
from datetime import date, datetime, timedelta

from inspectkit.engine.check import check_site
from inspectkit.engine.conformity import assess
from inspectkit.engine.history import as_of, calibration_lapsed, usable
from inspectkit.engine.schedule import SiteSchedule
from inspectkit.engine.trend import YEAR_DAYS, ElectrodeTrend
from inspectkit.model import (
    WALKING_ORDER,
    Component,
    EarthingArrangement,
    Finding,
    Inspection,
    InspectionKind,
    InspectionState,
    Inspector,
    Photo,
    Reading,
    Severity,
    Site,
    SiteRecords,
)
from inspectkit.profiles import Profile, load_profile
from inspectkit.report.actions import actions, headline, legend, visits
from inspectkit.report.amend import chain_of, describe_changes
from inspectkit.report.content import (
    Field,
    Notice,
    ReportContent,
    RoofPlan,
    TrendChart,
)
from inspectkit.report.earthing_content import earthing_report
from inspectkit.report.findings import visit_findings
from inspectkit.report.letterhead import organisation_of
from inspectkit.report.readings import RESULT_WORDS, reading_rows, soil_words
from inspectkit.store import Store, StoreError
from inspectkit.store.queries import load_site_records
from inspectkit.store.record_queries import site_inspections


class ReportError(StoreError):
    """A report cannot be built as asked; the message says why."""


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
    Severity.RETAKE: (
        "READINGS TO RETAKE",
        "Some readings were taken with an instrument out of calibration and prove nothing; "
        "they must be taken again before the system can be judged.",
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


def _words(value: str) -> str:
    return value.replace("_", " ")


def history_for(records: SiteRecords, inspection: Inspection) -> SiteRecords:
    """The site's records as the engine should judge this inspection.

    Later visits are left out (as of the visit's day, as the engine judges it);
    inspections replaced by an amendment are dropped with their readings,
    findings and photos; so are other drafts not finished, and other unsigned
    visits of the same day (a visit started twice), so that the report speaks of
    this inspection alone; and this inspection counts as finished.
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
    replaced |= {
        i.id
        for i in records.inspections
        if i.state is not InspectionState.SIGNED
        and (not i.finished or i.date == inspection.date)
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
            "not_inspected": [n for n in records.not_inspected if n.inspection_id in kept],
        }
    )
    return as_of(trimmed, inspection.date)


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
        Field(*profile.grading(site.protection_level, site.height_m)),
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
) -> tuple[tuple[str, str, str, str, str], ...]:
    """Each instrument of the visit, its calibration, and which readings it took."""
    used: dict[str, bool] = {}
    took: dict[str, Counter[str]] = {}
    for reading in records.readings:
        if reading.inspection_id == inspection.id and reading.instrument_id:
            lapsed = calibration_lapsed(records, reading)
            used[reading.instrument_id] = used.get(reading.instrument_id, False) or lapsed
            took.setdefault(reading.instrument_id, Counter())[reading.quantity.label] += 1
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
                ", ".join(f"{n} {label}" for label, n in sorted(took[instrument_id].items())),
            )
        )
    return tuple(sorted(rows))


def _reconnection(inspection: Inspection) -> str:
    """What the inspector confirmed of the test joints opened for isolated readings."""
    if inspection.joints_reconnected is None:
        return ""
    if inspection.joints_reconnected:
        return "every test joint opened for an isolated reading was reconnected and re-tested"
    return f"NOT confirmed reconnected and re-tested: {inspection.reconnection_note}"


def _not_inspected_parts(
    inspection: Inspection, records: SiteRecords, components: dict[str, Component]
) -> tuple[str, ...]:
    """`DC-02 (down conductor): covered: behind the cladding`, by tag."""
    lines = []
    for mark in records.not_inspected:
        component = components.get(mark.component_id)
        if mark.inspection_id == inspection.id and component is not None:
            lines.append(f"{component.tag} ({component.kind.label}): {mark.why}")
    return tuple(sorted(lines))


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
    organisation = organisation_of(store, inspector)
    org_name = organisation.name if organisation else (inspector.organisation if inspector else "")

    readings = reading_rows(inspection, records, check, profile, components)
    seen = visit_findings(store, inspection, records, components)
    findings = seen.to_act_on
    revision_label = _revision_label(inspection, signing)
    verdict_word, verdict = _VERDICTS[check.worst]
    to_do = actions(check)
    amends_text, changes = _amendment(store, inspection, all_records, components)
    visit_readings = [r for r in records.readings if r.inspection_id == inspection.id]
    return ReportContent(
        title=_KIND_TITLES[inspection.kind],
        site_name=site.name,
        inspection_id=inspection.id,
        revision_label=revision_label,
        inspection_date=inspection.date,
        verdict=verdict,
        verdict_word=verdict_word,
        headline=headline(to_do, readings, findings, seen.sound),
        site=_general(site),
        structure=_structure(records, profile, inspection.date),
        inspection=_inspection_fields(
            inspection, inspector, org_name, revision_label, visit_readings
        ),
        instruments=_instruments(inspection, records),
        readings=readings,
        findings=findings,
        notices=tuple(
            Notice(RESULT_WORDS[r.severity], r.component_tag or "site", r.message)
            for r in check.results
        ),
        trends=tuple(c for t in check.trends if (c := _trend_chart(t, records)) is not None),
        schedule=_schedule(check.schedule),
        not_inspected=inspection.not_inspected,
        not_inspected_parts=_not_inspected_parts(inspection, records, components),
        changes_since_last=inspection.changes_since_last,
        signer_name=inspector.name if inspector else "",
        signer_qualification=inspector.qualification if inspector else "",
        signer_organisation=org_name,
        amends=amends_text,
        amendment=changes,
        general_photos=seen.other_photos,
        sound=seen.sound,
        actions=to_do,
        visits=visits(check),
        legend=legend(),
        roof_plan=_roof_plan(records),
        earthing=earthing_report(records, profile, inspection.date, inspection.id),
    )


def _amendment(
    store: Store, inspection: Inspection, all_records: SiteRecords, components: dict[str, Component]
) -> tuple[str, tuple[str, ...]]:
    """What an amendment says of the signed report it replaces, and what it changed;
    empty for an original inspection."""
    earlier = chain_of(store, inspection)
    if not earlier:
        return "", ()
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
    return amends_text, changes


def _inspection_fields(
    inspection: Inspection,
    inspector: Inspector | None,
    org_name: str,
    revision_label: str,
    visit_readings: list[Reading],
) -> tuple[Field, ...]:
    return (
        Field("Inspection", f"{_words(inspection.kind.value)}, {inspection.date.isoformat()}"),
        Field("Inspector", inspector.name if inspector else "not recorded"),
        Field("Qualification", inspector.qualification if inspector else ""),
        Field("Organisation", org_name),
        Field("Accompanied by", inspection.accompanied_by),
        Field("Weather", inspection.weather),
        Field("Soil", soil_words(inspection, visit_readings)),
        *([Field("Notes", inspection.notes)] if inspection.notes.strip() else []),
        *([Field("Test joints", joints)] if (joints := _reconnection(inspection)) else []),
        Field("Report", revision_label),
        Field("Inspection id", inspection.id),
    )


def _schedule(schedule: SiteSchedule) -> tuple[Field, ...]:
    return (
        Field(
            "Intervals",
            f"visual every {schedule.visual_months} months, complete "
            f"every {schedule.complete_months} months ({schedule.interval_basis})",
        ),
        Field("Next visual inspection", schedule.next_visual.isoformat()),
        Field("Next complete inspection", schedule.next_complete.isoformat()),
    )


def _roof_plan(records: SiteRecords) -> RoofPlan | None:
    """The site's geometry with its verdicts, for the plan page; None without geometry."""
    if not records.geometry:
        return None
    return RoofPlan(tuple(records.geometry), assess(records.site, records.geometry))


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
    found = site_inspections(store, site_id)
    return found[0] if found else None
