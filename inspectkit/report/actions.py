"""What a report's reader must have done, by when, and what that costs in visits.

The first page is read by someone who runs the building, not by an inspector:
the overall result, the list of things to have done with their dates, and how
many visits they take, all from the engine's results as of the visit's day.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable

from inspectkit.engine.check import SiteCheck
from inspectkit.engine.results import SEVERITY_WORDS, Result
from inspectkit.model import Severity
from inspectkit.report.content import Action, FindingRow, ReadingRow, SoundRow
from inspectkit.wording import counted

#: Severities that need someone on site again before the next routine visit.
_RETURN = (Severity.OVERDUE, Severity.FAIL, Severity.RETAKE, Severity.INCOMPLETE)


def _when(result: Result) -> str:
    due = result.due.isoformat() if result.due else ""
    if result.rule == "schedule":
        return "book now" if result.severity is Severity.OVERDUE else f"book by {due}"
    if result.severity is Severity.OVERDUE:
        return f"now (was due {due})" if due else "now"
    if result.severity is Severity.FAIL:
        return f"now (advised by {due})" if due else "now"
    if result.severity in (Severity.RETAKE, Severity.INCOMPLETE):
        return "at a return visit"
    return f"by {due}" if due else "at the next visit"


def actions(check: SiteCheck) -> tuple[Action, ...]:
    """Every result that asks for something, most urgent first, then by date."""
    asking = [r for r in check.results if r.severity is not Severity.OK]
    asking.sort(key=lambda r: (-r.severity.rank, r.due.isoformat() if r.due else "9999"))
    return tuple(
        Action(_when(r), SEVERITY_WORDS[r.severity].shout, r.component_tag or "site", r.message)
        for r in asking
    )


def visits(check: SiteCheck) -> tuple[str, ...]:
    """What the results and the schedule cost in visits, in two or three sentences."""
    lines = []
    back = [r for r in check.results if r.severity in _RETURN and r.rule != "schedule"]
    if back:
        lines.append(
            f"1 return visit as soon as possible for {counted(len(back), 'item')} "
            "(repairs, then re-tests of what they touch)."
        )
    else:
        lines.append("No return visit is needed before the next routine inspection.")
    late = [r for r in check.results if r.rule == "schedule" and r.severity is Severity.OVERDUE]
    if late:
        lines.append(
            f"{counted(len(late), 'routine inspection')} overdue: book "
            f"{'it' if len(late) == 1 else 'them'} now."
        )
    schedule = check.schedule
    lines.append(
        f"Routine visits: the next visual inspection by {schedule.next_visual.isoformat()}, "
        f"the next complete inspection by {schedule.next_complete.isoformat()}."
    )
    return tuple(lines)


def headline(
    found: Iterable[Action],
    readings: tuple[ReadingRow, ...],
    findings: tuple[FindingRow, ...],
    sound: tuple[SoundRow, ...],
) -> tuple[str, ...]:
    """The summary's counts: actions first, then readings and findings to act on."""
    by_word = Counter(a.result.lower() for a in found)
    total = sum(by_word.values())
    order = [w.word for _, w in sorted(SEVERITY_WORDS.items(), key=lambda i: -i[0].rank)]
    parts = ", ".join(f"{by_word[w]} {w}" for w in order if by_word[w])
    tally = Counter(row.result.split(":")[0].lower() for row in readings)
    grades = Counter(f.grade.lower() for f in findings)
    kinds = ", ".join(f"{n} {_GRADE_WORDS.get(g, (g, g))[n != 1]}" for g, n in grades.most_common())
    return (
        f"{counted(total, 'action')}: {parts}" if total else "No action: nothing to do",
        (
            f"{counted(len(readings), 'reading')}: "
            + ", ".join(f"{n} {w}" for w, n in tally.most_common())
            if readings
            else "No reading taken at this visit"
        ),
        (
            f"{counted(len(findings), 'finding')} to act on ({kinds})"
            if findings
            else "No finding to act on"
        )
        + f"; {counted(len(sound), 'component')} found sound",
    )


#: How a count of findings of a grade is written: (one, many).
_GRADE_WORDS = {"defect": ("defect", "defects"), "needs attention": ("needing attention",) * 2}


def legend() -> tuple[tuple[str, str], ...]:
    """Every result word with its meaning: all of them, so reports can be compared."""
    return tuple((w.shout, w.meaning) for w in SEVERITY_WORDS.values())
