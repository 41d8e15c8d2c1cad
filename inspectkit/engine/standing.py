"""One word per site and one order of sites, for every list: the TUI, `check` and `sites`.

The word folds the schedule and the worst result together because the question a person
asks of a list is one question: where must I go first. Every list asks this module, so the
command line and the screens cannot come to order the same sites differently.
"""

from __future__ import annotations

from collections.abc import Iterable
from datetime import date

from inspectkit.engine.check import SiteCheck
from inspectkit.engine.results import SEVERITY_WORDS
from inspectkit.engine.schedule import DueStatus
from inspectkit.model import Severity

#: Words from worst to best.
WORDS_WORST_FIRST = ("overdue", "fail", "retake", "incomplete", "due soon", "watch", "ok")


def standing(check: SiteCheck) -> str:
    """The site's word: overdue beats a failing reading beats due soon beats watch."""
    schedule, worst = check.schedule, check.worst
    if schedule.status is DueStatus.OVERDUE or worst is Severity.OVERDUE:
        return "overdue"
    if worst in (Severity.FAIL, Severity.RETAKE, Severity.INCOMPLETE):
        return SEVERITY_WORDS[worst].word
    if schedule.status in (DueStatus.DUE, DueStatus.DUE_SOON):
        return "due soon"
    if worst is Severity.WATCH:
        return "watch"
    return "ok"


def rank(word: str) -> int:
    """Smaller is worse; a word not in the list sorts first, since nobody could judge it."""
    return WORDS_WORST_FIRST.index(word) if word in WORDS_WORST_FIRST else -1


def order_key(word: str, next_due: date | None, name: str) -> tuple[int, date, str]:
    """Worst word first, then the soonest (most overdue) date due, then the name."""
    return rank(word), next_due or date.max, name.lower()


def worst_first(checks: Iterable[SiteCheck]) -> list[SiteCheck]:
    """Sites in the order a person should look at them."""
    return sorted(
        checks, key=lambda c: order_key(standing(c), c.schedule.next_due.due, c.site_name)
    )
