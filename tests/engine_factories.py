"""Small builders of site records for the engine tests; each test says what it needs."""

from __future__ import annotations

from datetime import UTC, date, datetime
from typing import Any

from inspectkit.model import (
    DEFAULT_METHOD,
    JOINT_FOR,
    Component,
    ComponentKind,
    Finding,
    Grade,
    Inspection,
    InspectionKind,
    InspectionState,
    Instrument,
    NotInspected,
    Quantity,
    Reading,
    Site,
    SiteRecords,
)

#: Validation clock for records made here: far enough ahead for any test date.
NOW = {"now": datetime(2100, 1, 1, tzinfo=UTC)}

class SiteBuilder:
    """Builds one site's records step by step: components, visits, readings, findings."""

    def __init__(self, level: str = "II", **site: Any) -> None:
        self.site = Site(name=site.pop("name", "Test Hall"), protection_level=level, **site)
        self.components: list[Component] = []
        self.inspections: list[Inspection] = []
        self.readings: list[Reading] = []
        self.findings: list[Finding] = []
        self.not_inspected: list[NotInspected] = []
        self.instruments: dict[str, Instrument] = {}

    def component(
        self, kind: ComponentKind, tag: str, parent: Component | None = None, **fields: Any
    ) -> Component:
        component = Component(
            site_id=self.site.id,
            kind=kind,
            tag=tag,
            parent_id=parent.id if parent else None,
            **fields,
        )
        self.components.append(component)
        return component

    def joint_with_electrode(self, number: int, down: bool = True) -> tuple[Component, Component]:
        """A down conductor (optional), its test joint TJ-nn and electrode E-nn."""
        parent = self.component(ComponentKind.DOWN_CONDUCTOR, f"DC-{number:02d}") if down else None
        joint = self.component(ComponentKind.TEST_JOINT, f"TJ-{number:02d}", parent)
        electrode = self.component(ComponentKind.EARTH_ELECTRODE, f"E-{number:02d}", joint)
        return joint, electrode

    def instrument(self, calibration_due: date | None) -> Instrument:
        instrument = Instrument(
            description="earth tester", serial="SN-1", calibration_due=calibration_due
        )
        self.instruments[instrument.id] = instrument
        return instrument

    def visit(
        self,
        day: date,
        kind: InspectionKind = InspectionKind.COMPLETE,
        signed: bool = True,
        finished: bool | None = None,
    ) -> Inspection:
        inspection = Inspection.model_validate(
            {
                "site_id": self.site.id,
                "kind": kind,
                "date": day,
                "state": InspectionState.SIGNED if signed else InspectionState.DRAFT,
                "signed_at": datetime(day.year, day.month, day.day, 17, tzinfo=UTC)
                if signed
                else None,
                "finished": signed if finished is None else finished,
            },
            context=NOW,
        )
        self.inspections.append(inspection)
        return inspection

    def reading(
        self,
        inspection: Inspection,
        component: Component,
        quantity: Quantity,
        value: float | None,
        *,
        hour: int = 10,
        **fields: Any,
    ) -> Reading:
        day = inspection.date
        reading = Reading.model_validate(
            {
                "inspection_id": inspection.id,
                "component_id": component.id,
                "quantity": quantity,
                "value": value,
                "method": DEFAULT_METHOD[quantity],
                "joint_state": JOINT_FOR.get(quantity),
                "taken_at": datetime(day.year, day.month, day.day, hour, tzinfo=UTC),
                **fields,
            },
            context=NOW,
        )
        self.readings.append(reading)
        return reading

    def finding(
        self,
        inspection: Inspection,
        component: Component | None,
        grade: Grade,
        text: str = "clamp loose",
        **fields: Any,
    ) -> Finding:
        finding = Finding(
            inspection_id=inspection.id,
            component_id=component.id if component else None,
            grade=grade,
            text=text,
            **fields,
        )
        self.findings.append(finding)
        return finding

    def grade_all(self, inspection: Inspection) -> None:
        """Every component found sound at this visit, as a complete walkdown grades each."""
        for component in self.components:
            self.finding(inspection, component, Grade.SOUND, "")

    def skip(
        self, inspection: Inspection, component: Component, reason: str, text: str = ""
    ) -> NotInspected:
        mark = NotInspected(
            inspection_id=inspection.id, component_id=component.id, reason=reason, text=text
        )
        self.not_inspected.append(mark)
        return mark

    def records(self) -> SiteRecords:
        return SiteRecords(
            site=self.site,
            components=list(self.components),
            inspections=sorted(self.inspections, key=lambda i: i.date),
            readings=list(self.readings),
            findings=list(self.findings),
            instruments=dict(self.instruments),
            not_inspected=list(self.not_inspected),
        )
