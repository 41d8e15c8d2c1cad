"""When a site can be visited: its access rule ("weekdays 08:00-15:00; not school_term").

A rule is the site's `access` text, read here rather than in the model because it
may name periods that only the planning settings define. Clauses are separated by
semicolons, and each may hold:

- days: `mon` … `sun`, ranges such as `mon-fri`, `weekdays`, `weekends`, plurals
  (`saturdays`), with an optional `only`;
- a time window `HH:MM-HH:MM` the whole visit must fit in;
- `not NAME` or `not in NAME`: a period from the settings' `[periods]` table (words
  joined by `_`, so "not in school term" names `school_term`), or a span of days
  written `YYYY-MM-DD..YYYY-MM-DD` (or one day).

An empty rule allows every working day at any time.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import date, time

WEEKDAYS = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")
_DAY_GROUPS = {"weekdays": range(0, 5), "weekends": range(5, 7), "daily": range(7)}
_CLOCK = re.compile(r"^(\d{1,2}:\d{2})-(\d{1,2}:\d{2})$")


class AccessError(ValueError):
    """A site's access rule cannot be read; the message quotes it and says what to write."""


@dataclass(frozen=True)
class DaySpan:
    """The days from `first` to `last`, both included."""

    first: date
    last: date

    def __contains__(self, day: object) -> bool:
        return isinstance(day, date) and self.first <= day <= self.last


def parse_span(text: str, field: str) -> DaySpan:
    """A span from "YYYY-MM-DD" or "YYYY-MM-DD..YYYY-MM-DD".

    Raises:
        AccessError: not dates, or the span ends before it starts (field named).
    """
    parts = [p.strip() for p in text.split("..")]
    try:
        days = [date.fromisoformat(p) for p in parts]
    except ValueError:
        days = []
    if len(parts) > 2 or not days:
        raise AccessError(
            f"{field}: {text!r} is not a day or span; write YYYY-MM-DD or "
            "YYYY-MM-DD..YYYY-MM-DD, e.g. 2027-08-02..2027-08-13"
        )
    if days[-1] < days[0]:
        raise AccessError(f"{field}: {text!r} ends before it starts; put the earlier day first")
    return DaySpan(days[0], days[-1])


@dataclass(frozen=True)
class Access:
    """A site's access rule, read.

    Attributes:
        text: the rule as typed.
        weekdays: `date.weekday()` numbers it allows; None for any day.
        opens, closes: the window the visit must fit in; None for any time.
        not_periods: names of settings periods it is closed in.
        not_spans: spans of days it is closed in.
    """

    text: str = ""
    weekdays: frozenset[int] | None = None
    opens: time | None = None
    closes: time | None = None
    not_periods: tuple[str, ...] = ()
    not_spans: tuple[DaySpan, ...] = ()

    @property
    def opens_minute(self) -> float:
        return 0.0 if self.opens is None else self.opens.hour * 60.0 + self.opens.minute

    @property
    def closes_minute(self) -> float:
        return 24 * 60.0 if self.closes is None else self.closes.hour * 60.0 + self.closes.minute


OPEN = Access()


def _days(word: str) -> range | tuple[int, ...] | None:
    """The weekdays one word names, or None if it names none."""
    word = word.lower().rstrip(",")
    if word in _DAY_GROUPS:
        return _DAY_GROUPS[word]
    if "-" in word:
        a, _, b = word.partition("-")
        if a[:3] in WEEKDAYS and b[:3] in WEEKDAYS:
            i, j = WEEKDAYS.index(a[:3]), WEEKDAYS.index(b[:3])
            return tuple(k % 7 for k in range(i, j + 1 if j >= i else j + 8))
    if word[:3] in WEEKDAYS and len(word) >= 3 and word.rstrip("s")[:3] == word[:3]:
        return (WEEKDAYS.index(word[:3]),)
    return None


def _clock(text: str, rule: str) -> time:
    try:
        return time.fromisoformat(text.zfill(5))
    except ValueError:
        raise AccessError(f"access {rule!r}: {text!r} is not a time; write HH:MM") from None


def parse_access(text: str) -> Access:
    """Read a site's access rule.

    Raises:
        AccessError: a word that is not a day, time window or `not …` clause, or a
            window that closes before it opens; the message quotes the rule.
    """
    rule = text.strip()
    if not rule:
        return OPEN
    days: set[int] = set()
    opens = closes = None
    periods: list[str] = []
    spans: list[DaySpan] = []
    for clause in (c.strip() for c in rule.split(";")):
        words = clause.split()
        if words and words[0].lower() == "not":
            rest = [w for w in words[1:] if w.lower() != "in"]
            target = " ".join(rest)
            if not rest:
                raise AccessError(f"access {rule!r}: 'not' needs a period or dates after it")
            if target[:1].isdigit():
                spans.append(parse_span(target, f"access {rule!r}"))
            else:
                periods.append("_".join(w.lower() for w in rest))
            continue
        for word in re.split(r"[\s,]+", re.sub(r"\s*[-–]\s*", "-", clause)):
            window = _CLOCK.match(word)
            if window is not None:
                opens, closes = _clock(window[1], rule), _clock(window[2], rule)
                if closes <= opens:
                    raise AccessError(f"access {rule!r}: the window closes before it opens")
                continue
            if not word or word.lower() == "only":
                continue
            named = _days(word)
            if named is None:
                raise AccessError(
                    f"access {rule!r}: {word!r} is not a day, a time window or 'not …'; "
                    "write e.g. 'weekdays 08:00-15:00; not school_term'"
                )
            days.update(named)
    return Access(rule, frozenset(days) or None, opens, closes, tuple(periods), tuple(spans))
