"""The validator's rules, in the order `check` runs them: each a small function that looks
at one site's `SiteFacts` (`site_facts`) and yields results.

The rules live by what they look at: a reading's own state (`reading_rules`), a series
of readings (`rise_rules`), what a visit left undone (`completeness_rules`), what the
site owes (`due_rules`), its geometry (`conformity`) and its earthing (`earthing_site`).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable

from inspectkit.engine.completeness_rules import missing_tests, not_inspected, ungraded_components
from inspectkit.engine.conformity import conformity
from inspectkit.engine.due_rules import open_defects, schedule_items, strike_counters
from inspectkit.engine.earthing_site import electrode_checks, traverse_plateaus
from inspectkit.engine.reading_rules import doubtful_readings, lapsed_calibration, reading_limits
from inspectkit.engine.results import Result
from inspectkit.engine.rise_rules import drifting_electrodes, electrode_rises, series_rises
from inspectkit.engine.site_facts import SiteFacts

#: Every rule, in the order their results are gathered (output is sorted afterwards).
RULES: tuple[Callable[[SiteFacts], Iterable[Result]], ...] = (
    reading_limits,
    electrode_rises,
    series_rises,
    lapsed_calibration,
    doubtful_readings,
    strike_counters,
    missing_tests,
    ungraded_components,
    not_inspected,
    open_defects,
    schedule_items,
    drifting_electrodes,
    conformity,
    traverse_plateaus,
    electrode_checks,
)

#: The rules that speak about one reading or its series, not the site as a whole:
#: what a reading is judged by the moment it is typed.
SERIES_RULES: tuple[Callable[[SiteFacts], Iterable[Result]], ...] = (
    reading_limits,
    electrode_rises,
    series_rises,
    lapsed_calibration,
    doubtful_readings,
    strike_counters,
    drifting_electrodes,
    traverse_plateaus,
)
