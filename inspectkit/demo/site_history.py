"""A demo site's history: its LPS, its visits, what was measured at each, and what was found.

The pieces are drawn in one order from the demo's one generator (the visits, then the
readings visit by visit, then the findings), so the same anchor gives the same records;
a new piece that must not move the others draws from a generator of its own, as the
earthing does, or derives its ids.
"""

from __future__ import annotations

from datetime import UTC, date, datetime, time, timedelta

from dateutil.relativedelta import relativedelta

from inspectkit.demo.context import DemoContext, Visit, stamps
from inspectkit.demo.earthing import add_earthing
from inspectkit.demo.geometry import demo_geometry
from inspectkit.demo.marks import Marks
from inspectkit.demo.readings import Measurements, Special
from inspectkit.demo.scenario import ScenarioError, SiteSpec, Strike
from inspectkit.demo.system import System, lay_out
from inspectkit.demo.visit_plan import VisitRefs, new_visit, visit_plan, visit_refs
from inspectkit.model import ComponentKind, Grade, InspectionKind, JointState, Site

#: Scenario keys that are Site fields of the same name.
_SITE_FIELDS = {
    "name",
    "client",
    "address",
    "town",
    "latitude",
    "longitude",
    "profile",
    "critical",
    "explosive_risk",
    "height_m",
    "notes",
    "installer",
    "built_year",
    "use",
    "construction",
    "roofing",
    "design_standard",
    "air_termination",
    "access",
}
#: Scenario keys that are set on the latest complete inspection.
_LATEST_FIELDS = {"not_inspected", "accompanied_by", "changes_since_last"}


class SiteHistory:
    """One site: its LPS, its visits, and what was measured and found at each."""

    def __init__(self, demo: DemoContext, spec: SiteSpec) -> None:
        self.demo = demo
        self.spec = spec
        self.rng = demo.rng
        self.anchor = demo.anchor
        self.start = self.anchor - relativedelta(years=spec.years)
        self.start -= timedelta(days=self.rng.randint(0, 40))
        created = stamps(datetime.combine(self.start, time(8, 0), UTC))
        self.site = Site.model_validate(
            {
                "id": demo.new_id(),
                "protection_level": spec.level,
                # The LPS went in when it had its initial inspection.
                "installed_year": self.start.year,
                "earthing_arrangement": spec.electrode.arrangement,
                **spec.model_dump(include=_SITE_FIELDS),
                **created,
            },
            context=demo.validation,
        )
        self.system: System = lay_out(
            spec, self.site.id, self.start, created, demo.new_id, self.rng
        )
        self.visits: list[Visit] = []
        self.measurements = Measurements(demo, self.system, self.start, spec.counter_start)
        self.marks = Marks(demo, spec, self.system)

    def build(self) -> None:
        """Make the site's records and add them, in save order, to the demo's output.

        Raises:
            ScenarioError: the site's entry names a tag or a visit the site does not have.
        """
        try:
            self._build()
        except ScenarioError as exc:
            raise ScenarioError(f"site {self.spec.key}: {exc}") from None

    def _build(self) -> None:
        spec = self.spec
        named = [*spec.failing_earth, *spec.failing_continuity, *spec.drifting_earth, *spec.skipped]
        for tag in [*(n.tag for n in named), *spec.missing_readings]:
            self.system.tagged(tag)
        refs, strikes = self._plan_visits()
        latest = refs["complete-1"]
        usual, scenario = self._specials(latest.inspection.date)
        count = self._measure(latest, usual, scenario, strikes)
        self._mark(refs, latest)
        if spec.draft_today:
            self._draft(count, usual)
        self._close_visits()
        surveys = add_earthing(self, latest.inspection.id)
        self.demo.out.records.extend(
            [
                self.site,
                *self.system.components,
                *(v.inspection for v in self.visits),
                *self.measurements.readings,
                *self.marks.findings,
                *self.marks.skipped,
                *demo_geometry(
                    spec.geometry, self.site, self.system.components, stamps(self.site.created_at)
                ),
                *surveys,
            ]
        )

    def _visit(self, kind: InspectionKind, day: date, *, finished: bool = True) -> Visit:
        visit = new_visit(
            self.demo, self.site.id, self.spec.inspectors, kind, day, finished=finished
        )
        self.visits.append(visit)
        return visit

    def _plan_visits(self) -> tuple[VisitRefs, dict[str, Strike]]:
        """Every visit, oldest first; their names, and the strikes by the visit that saw them."""
        for kind, day in visit_plan(self.spec, self.start, self.anchor, self.rng):
            self._visit(kind, day)
        refs = visit_refs(self.visits)
        strikes = {refs[s.at].inspection.id: s for s in self.spec.strikes}
        for strike in self.spec.strikes:
            if strike.post_strike_days:
                day = refs[strike.at].inspection.date + timedelta(days=strike.post_strike_days)
                self._visit(InspectionKind.POST_STRIKE, day)
        self.visits.sort(key=lambda v: v.inspection.date)
        return visit_refs(self.visits), strikes

    def _specials(self, drift_ends: date) -> tuple[Special, Special]:
        """What every visit takes from the scenario, and what the latest complete one does."""
        spec = self.spec
        usual = Special(drift_ends, {d.tag: d for d in spec.drifting_earth})
        lapsed = (
            self.demo.instruments[spec.lapsed_instrument][0] if spec.lapsed_instrument else None
        )
        scenario = Special(
            usual.drift_ends,
            usual.drifting,
            earth={f.tag: f.ohms for f in spec.failing_earth},
            continuity={f.tag: f.ohms for f in spec.failing_continuity},
            missing=frozenset(spec.missing_readings),
            instrument=lapsed,
        )
        return usual, scenario

    def _measure(
        self, latest: Visit, usual: Special, scenario: Special, strikes: dict[str, Strike]
    ) -> int:
        """Each visit's readings, as its kind calls for; returns the strike count at the end."""
        count = self.spec.counter_start
        for visit in self.visits:
            special = scenario if visit is latest else usual
            kind = visit.inspection.kind
            if visit.inspection.id in strikes:
                count += strikes[visit.inspection.id].increment
            if kind in (InspectionKind.INITIAL, InspectionKind.COMPLETE):
                self.measurements.tests(visit, special)
            elif kind is InspectionKind.POST_STRIKE:
                self.measurements.post_strike_tests(visit, special)
            self.measurements.counter_readings(visit, count)
        return count

    def _mark(self, refs: VisitRefs, latest: Visit) -> None:
        """The latest complete visit's notes from the scenario, then what the visits found."""
        latest_fields = self.spec.model_dump(include=_LATEST_FIELDS)
        if any(latest_fields.values()):
            latest.inspection = latest.inspection.model_copy(update=latest_fields)
        self.marks.minor_findings(self.visits)
        self.marks.scenario_findings(refs)
        self.marks.skip_parts(latest)
        finished = [v for v in self.visits if v.inspection.finished]
        for visit in {id(v): v for v in (latest, *finished[-1:])}.values():
            self.marks.sound_grades(visit)

    def _draft(self, count: int, usual: Special) -> None:
        """Today's walkdown, half done: the first half of the test joints measured."""
        visit = self._visit(InspectionKind(self.spec.draft_today), self.anchor, finished=False)
        self.measurements.counter_readings(visit, count)
        if visit.inspection.kind is InspectionKind.COMPLETE:
            joints = max(1, len(self.system.of_kind(ComponentKind.TEST_JOINT)) // 2)
            self.measurements.tests(visit, usual, joints=joints)
        terminal = self.system.of_kind(ComponentKind.AIR_TERMINAL)[0]
        words = (
            "fixing",
            f"{terminal.tag} leaning; base bolt loose",
            f"Tighten the {terminal.tag} base bolt",
        )
        self.marks.finding(visit, terminal, Grade.NEEDS_ATTENTION, words, 60, None)

    def _close_visits(self) -> None:
        """Each visit's last change at its clock; a finished one that opened a joint confirms
        the joints were reconnected."""
        readings = self.measurements.readings
        opened = {r.inspection_id for r in readings if r.joint_state is JointState.OPEN}
        for visit in self.visits:
            confirmed = visit.inspection.finished and visit.inspection.id in opened
            visit.inspection = visit.inspection.model_copy(
                update={
                    "updated_at": visit.clock,
                    "joints_reconnected": True if confirmed else None,
                }
            )
