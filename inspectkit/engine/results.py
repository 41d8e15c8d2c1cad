"""What a check found: one result per thing a person should know about or act on."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from typing import Any

from inspectkit.model import Severity


@dataclass(frozen=True)
class SeverityWord:
    """How a severity is written for people, and what it asks of them.

    Attributes:
        word: the word printed beside a result, in lower case (`check` and reports print
            it in capitals, the TUI as it is).
        meaning: one sentence for the report's legend.
    """

    word: str
    meaning: str

    @property
    def shout(self) -> str:
        """The word in capitals, as `check` and the report print it."""
        return self.word.upper()


#: The one definition of each severity's word and meaning: `check`, the TUI and the
#: report all print these (our wording).
SEVERITY_WORDS: dict[Severity, SeverityWord] = {
    Severity.OK: SeverityWord("pass", "Within its limit; nothing to do."),
    Severity.WATCH: SeverityWord(
        "watch", "Not a failure today: follow it up by the date given or at the next visit."
    ),
    Severity.INCOMPLETE: SeverityWord(
        "incomplete", "A test the inspection should include was not taken: take it."
    ),
    Severity.RETAKE: SeverityWord(
        "retake",
        "Invalid: the readings prove nothing (for example the instrument was out of "
        "calibration) and count neither as a pass nor as a fail: take them again.",
    ),
    Severity.FAIL: SeverityWord(
        "fail", "Fails today: put it right; a remedy date given is advice on how soon."
    ),
    Severity.OVERDUE: SeverityWord(
        "overdue", "An inspection, or the remedy of a defect found earlier, is past its date."
    ),
}


@dataclass(frozen=True)
class Result:
    """One finding of the engine, with the sentence that tells a person what to do.

    Attributes:
        severity: ok < watch < incomplete < retake < fail < overdue (words and meanings
            in `SEVERITY_WORDS`).
        rule: short id of the rule that made it: "limit", "rise", "calibration",
            "unreliable", "strike-counter", "incomplete", "ungraded", "not-inspected",
            "carried-defect", "schedule" or "trend".
        site_id, site_name: the site.
        component_id, component_tag: the component, where the result is about one.
        reading_id: the reading, where it is about one.
        reading_ids, listed: the readings a result stands for when it covers several
            (a lapsed instrument's readings of one visit), and their components' tags.
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
    reading_ids: tuple[str, ...] = ()
    listed: tuple[str, ...] = ()

    def covers(self, reading_id: str) -> bool:
        """This result is about that reading, alone or among others."""
        return reading_id == self.reading_id or reading_id in self.reading_ids

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
            "readings": list(self.listed),
        }
