"""Each site's standing for the lists, judged from its stored records.

The word and the order come from `engine.standing`; this module loads the records, finds
the profile and keeps one bad site from stopping a list. Free of Textual, so the sites
screen's worker, `inspectkit sites`, the benchmark and the tests judge sites the same way.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from datetime import date
from pathlib import Path

from inspectkit.engine.check import SiteCheck, check_site
from inspectkit.engine.history import series
from inspectkit.engine.results import SEVERITY_WORDS
from inspectkit.engine.standing import order_key, standing
from inspectkit.model import Severity, SiteRecords
from inspectkit.profiles import Profile, ProfileError, load_profile
from inspectkit.store import Store
from inspectkit.store.queries import load_site_records

#: Shown when a site's profile cannot be read: it cannot be judged at all.
NO_PROFILE = "no profile"
#: Shown when judging a site failed for another reason (bad data, a bug): see `reason`.
ERROR = "error"


@dataclass(frozen=True)
class SiteState:
    """What the lists show about a site.

    Attributes:
        word: one of `engine.standing.WORDS_WORST_FIRST`, NO_PROFILE or ERROR.
        next_due: the date of the most urgent inspection the site owes.
        next_kind: which inspection that is (visual, complete, post_strike...).
        check: the engine's whole verdict, when the site's profile could be read.
        reason: why the site could not be judged (NO_PROFILE, ERROR), in words.
    """

    word: str
    next_due: date | None = None
    next_kind: str = ""
    check: SiteCheck | None = field(default=None, compare=False)
    reason: str = ""

    def order_key(self, name: str) -> tuple[int, date, str]:
        """Where the site named `name` goes in a list ordered worst first."""
        return order_key(self.word, self.next_due, name)


def assess(records: SiteRecords, profile: Profile, today: date) -> SiteState:
    """The site's state, in the engine's words."""
    check = check_site(records, profile, today)
    item = check.schedule.next_due
    return SiteState(standing(check), item.due, item.kind.value, check)


class ProfileCache:
    """Profiles by name, each read once; a name that cannot be read is remembered as such."""

    def __init__(self) -> None:
        self._profiles: dict[str, Profile | None] = {}
        self._problems: dict[str, str] = {}

    def get(self, name: str) -> Profile | None:
        if name not in self._profiles:
            try:
                self._profiles[name] = load_profile(name)
            except ProfileError as exc:
                self._profiles[name] = None
                self._problems[name] = str(exc)
        return self._profiles[name]

    def problem(self, name: str) -> str:
        """Why the profile of that name could not be read ("" if it could, or was not tried)."""
        return self._problems.get(name, "")


def judge(records: SiteRecords, today: date, profiles: ProfileCache) -> SiteState:
    """The site's state; NO_PROFILE or ERROR, with the reason, when it cannot be judged.

    Never raises: a failure in the engine on one site's data (or a bug) is that
    site's state, so a list or a screen showing it carries on.
    """
    profile = profiles.get(records.site.profile)
    if profile is None:
        return SiteState(NO_PROFILE, reason=profiles.problem(records.site.profile))
    try:
        return assess(records, profile, today)
    except Exception as exc:  # noqa: BLE001 - shown on that site alone, see above
        return _failed(exc)


def _failed(exc: Exception) -> SiteState:
    return SiteState(ERROR, reason=f"{type(exc).__name__}: {exc}")


def assess_site(store: Store, site_id: str, today: date, profiles: ProfileCache) -> SiteState:
    """Load one site's records and judge them."""
    return judge(load_site_records(store, site_id), today, profiles)


def assess_all(
    db_path: Path,
    site_ids: list[str],
    today: date,
    stop: Callable[[], bool] = lambda: False,
) -> Iterator[tuple[str, SiteState]]:
    """Judge many sites on a connection of its own, so it can run on a worker thread.

    A site that cannot be judged (its records do not load, or the engine fails on
    them) gets the state ERROR with the reason, and the other sites are still judged:
    one bad site must not leave the whole list without states, nor stop the app.

    Args:
        db_path: the database file; a fresh connection is opened on the calling thread.
        site_ids: the sites, in the order their states are wanted.
        today: the day to judge by.
        stop: asked before each site; True ends the work early.
    """
    profiles = ProfileCache()
    with Store.open(db_path, create=False) as store:
        for site_id in site_ids:
            if stop():
                return
            try:
                state = assess_site(store, site_id, today, profiles)
            except Exception as exc:  # noqa: BLE001 - records that do not load: that site alone
                state = _failed(exc)
            yield site_id, state


def reading_verdicts(check: SiteCheck, records: SiteRecords) -> dict[str, str]:
    """Pass, watch or fail for the latest reading of each component and quantity.

    The engine's results decide: a reading it said nothing about passed.
    """
    by_reading: dict[str, Severity] = {}
    for result in check.results:
        for reading_id in filter(None, (result.reading_id, *result.reading_ids)):
            known = by_reading.get(reading_id)
            if known is None or result.severity.rank > known.rank:
                by_reading[reading_id] = result.severity
    verdicts = {}
    for readings in series(records.readings).values():
        severity = by_reading.get(readings[-1].id, Severity.OK)
        verdicts[readings[-1].id] = SEVERITY_WORDS[severity].word
    return verdicts
