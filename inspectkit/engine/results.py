"""What a check found: one result per thing a person should know about or act on."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from typing import Any

from inspectkit.model import Severity


@dataclass(frozen=True)
class Result:
    """One finding of the engine, with the sentence that tells a person what to do.

    Attributes:
        severity: ok < watch < incomplete < fail < overdue.
        rule: short id of the rule that made it: "limit", "rise", "calibration",
            "unreliable", "strike-counter", "incomplete", "ungraded", "not-inspected",
            "carried-defect", "schedule" or "trend".
        site_id, site_name: the site.
        component_id, component_tag: the component, where the result is about one.
        reading_id: the reading, where it is about one.
        message: one sentence a person can act on.
        value, limit, unit: the figure judged and what it was judged against (SI units;
            for a trend, the fitted value at the last reading).
        due: the date something must be done by, where there is one.
        components: the tags of the components a result about several names.
    """

    severity: Severity
    rule: str
    site_id: str
    site_name: str
    message: str
    component_id: str | None = None
    component_tag: str | None = None
    reading_id: str | None = None
    value: float | None = None
    limit: float | None = None
    unit: str | None = None
    due: date | None = None
    components: tuple[str, ...] = ()

    def sort_key(self) -> tuple[int, str, str, str]:
        """Worst first, then by site, component tag and rule, so output is stable."""
        return (-self.severity.rank, self.site_name, self.component_tag or "", self.rule)

    def to_json(self) -> dict[str, Any]:
        """The object `inspectkit check --json` prints for this result."""
        return {
            "site": self.site_name,
            "component": self.component_tag,
            "severity": self.severity.value,
            "rule": self.rule,
            "message": self.message,
            "value": self.value,
            "limit": self.limit,
            "unit": self.unit,
            "due": self.due.isoformat() if self.due else None,
            "components": list(self.components),
        }
