"""What a demo visit found: findings, components graded sound, components not inspected.

Small defects are noted now and then and put right by the next visit; the scenario's
own findings (with their photos and repeats) are set where its file says.
"""

from __future__ import annotations

import uuid
from datetime import timedelta
from itertools import pairwise

from inspectkit.demo.context import DemoContext, Shot, Visit, stamps
from inspectkit.demo.scenario import SiteSpec
from inspectkit.demo.system import System
from inspectkit.demo.visit_plan import VisitRefs
from inspectkit.model import Component, ComponentKind, Finding, Grade, NotInspected

#: Chance that a visit notes a small defect, put right by the next visit.
_MINOR_FINDING_CHANCE = 0.2
#: Small defects a visit may note, by component kind: category, text, remedial action.
_MINOR_FINDINGS: tuple[tuple[ComponentKind, str, str, str], ...] = (
    (ComponentKind.AIR_TERMINAL, "fixing", "{tag} base fixing loose", "Tighten the {tag} base"),
    (
        ComponentKind.AIR_CONDUCTOR,
        "fixing",
        "Two clips missing on {tag}",
        "Refit clips on {tag} at about 1 m spacing",
    ),
    (ComponentKind.DOWN_CONDUCTOR, "labelling", "Label missing on {tag}", "Fit a label to {tag}"),
    (ComponentKind.TEST_JOINT, "access", "{tag} pit cover cracked", "Replace the {tag} cover"),
    (
        ComponentKind.BONDING,
        "bonding",
        "{tag} bond clamp painted over",
        "Clean the {tag} clamp faces and remake the bond",
    ),
    (
        ComponentKind.SPD,
        "spd",
        "{tag} status window dirty; indicator hard to read",
        "Clean the {tag} status window",
    ),
)


class Marks:
    """The findings and the components not inspected of one site's visits."""

    def __init__(self, demo: DemoContext, spec: SiteSpec, system: System) -> None:
        self.demo = demo
        self.rng = demo.rng
        self.spec = spec
        self.system = system
        self.findings: list[Finding] = []
        self.skipped: list[NotInspected] = []

    def finding(
        self,
        visit: Visit,
        component: Component,
        grade: Grade,
        words: tuple[str, str, str],
        due_days: int | None,
        resolved: Visit | None,
    ) -> None:
        """A finding; `words` are its category, text and remedial action."""
        at = visit.tick(self.rng)
        category, text, remedial = words
        self.findings.append(
            Finding(
                id=self.demo.new_id(),
                inspection_id=visit.inspection.id,
                component_id=component.id,
                grade=grade,
                category=category,
                text=text,
                remedial_action=remedial,
                due_by=visit.inspection.date + timedelta(days=due_days) if due_days else None,
                resolved_by=resolved.inspection.id if resolved else None,
                created_at=at,
                updated_at=resolved.clock if resolved else at,
                updated_by=(resolved or visit).inspection.updated_by,
            )
        )

    def minor_findings(self, visits: list[Visit]) -> None:
        """Small defects noted now and then, each put right by the next visit."""
        rng = self.rng
        for visit, following in pairwise(visits):
            if rng.random() >= _MINOR_FINDING_CHANCE:
                continue
            kind, category, text, remedial = rng.choice(_MINOR_FINDINGS)
            candidates = self.system.of_kind(kind)
            if not candidates:
                continue
            tag = rng.choice(candidates).tag
            words = (category, text.format(tag=tag), remedial.format(tag=tag))
            self.finding(
                visit, self.system.tagged(tag), Grade.NEEDS_ATTENTION, words, 90, following
            )

    def scenario_findings(self, refs: VisitRefs) -> None:
        for spec in self.spec.finding:
            visit = refs[spec.at]
            component = self.system.tagged(spec.on)
            resolved = refs[spec.resolved_at] if spec.resolved_at else None
            words = (spec.category, spec.text, spec.remedial)
            self.finding(visit, component, spec.grade, words, spec.due_days, resolved)
            if spec.same_as:
                self._repeat(refs[spec.same_as], visit, component)
            if spec.photo:
                self.demo.out.shots.append(
                    Shot(
                        photo_id=self.demo.new_id(),
                        caption=spec.photo,
                        taken_at=visit.tick(self.rng),
                        inspection_id=visit.inspection.id,
                        component_id=component.id,
                        taken_by=visit.inspection.updated_by,
                        orientation=spec.photo_orientation,
                        seed=self.rng.getrandbits(32),
                    )
                )

    def _repeat(self, earlier: Visit, visit: Visit, component: Component) -> None:
        """The finding just made repeats `earlier`'s on the component, which it closes."""
        new = self.findings[-1]
        for n, finding in enumerate(self.findings):
            if finding.inspection_id == earlier.inspection.id and finding.component_id == (
                component.id
            ):
                self.findings[n] = finding.model_copy(
                    update={"resolved_by": visit.inspection.id, "updated_at": new.created_at}
                )
                self.findings[-1] = new.model_copy(update={"same_as_id": finding.id})
                return
        raise ValueError(f"{component.tag}: no finding at the visit the repeat names")

    # The marks below take their ids from the visit and the component, and their times
    # from the visit's clock, not from the seeded generator (as `sound_grades` does):
    # the rest of the scenario draws the same numbers as it did before they were added.

    def skip_parts(self, visit: Visit) -> None:
        """The components the scenario says the latest complete inspection could not inspect."""
        for part in self.spec.skipped:
            component = self.system.tagged(part.tag)
            self.skipped.append(
                NotInspected(
                    id=_derived_id(visit, component, "not inspected"),
                    inspection_id=visit.inspection.id,
                    component_id=component.id,
                    reason=part.reason,
                    text=part.text,
                    **stamps(visit.clock, visit.inspection.updated_by),
                )
            )

    def sound_grades(self, visit: Visit) -> None:
        """Every other component in service graded sound, as a walkdown grades them all.

        The ids are derived from the visit and the component, not drawn, so that the
        rest of the scenario draws the same numbers as before.
        """
        graded = {f.component_id for f in self.findings if f.inspection_id == visit.inspection.id}
        graded |= {s.component_id for s in self.skipped if s.inspection_id == visit.inspection.id}
        day = visit.inspection.date
        for component in self.system.components:
            if component.id in graded or (component.retired_on and component.retired_on <= day):
                continue
            if component.installed_on and component.installed_on > day:
                continue
            self.findings.append(
                Finding(
                    id=str(uuid.uuid5(uuid.NAMESPACE_OID, f"{visit.inspection.id}/{component.id}")),
                    inspection_id=visit.inspection.id,
                    component_id=component.id,
                    grade=Grade.SOUND,
                    created_at=visit.clock,
                    updated_at=visit.clock,
                    updated_by=visit.inspection.updated_by,
                )
            )


def _derived_id(visit: Visit, component: Component, what: str) -> str:
    """A key made from the visit, the component and what it is, the same every build."""
    return str(uuid.uuid5(uuid.UUID(visit.inspection.id), f"{component.id} {what}"))
