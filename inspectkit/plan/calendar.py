"""Which days can be booked: the office's weekdays, public holidays, closed days, site access.

Public holidays come from the `holidays` library (country and region from the
planning settings), so a bank holiday is never planned on; the office's own closed
days and a site's access rule are laid over them.
"""

from __future__ import annotations

from collections.abc import Iterable
from datetime import date
from functools import cached_property

from inspectkit.plan.access import Access
from inspectkit.plan.settings import PlanSettings


class WorkCalendar:
    """The office's working days, and the days a given site can be visited on."""

    def __init__(self, settings: PlanSettings) -> None:
        self.settings = settings

    @cached_property
    def _holidays(self) -> dict[date, str]:
        """Public holidays by day, filled year by year as days are asked about."""
        if not self.settings.holiday_country:
            return {}
        import holidays

        return holidays.country_holidays(  # type: ignore[no-any-return]
            self.settings.holiday_country.upper(),
            subdiv=self.settings.holiday_region.upper() or None,
        )

    def closed_why(self, day: date) -> str | None:
        """Why the office does not work on the day, or None if it does."""
        if day.weekday() not in self.settings.weekday_numbers:
            return f"{day:%A}: not a working day"
        holiday = self._holidays.get(day)
        if holiday:
            return f"public holiday: {holiday}"
        if any(day in span for span in self.settings.closed_days):
            return "closed day (closed_days)"
        return None

    def site_closed_why(self, day: date, access: Access) -> str | None:
        """Why the site cannot be visited on the day (office first), or None."""
        why = self.closed_why(day)
        if why is not None:
            return why
        if access.weekdays is not None and day.weekday() not in access.weekdays:
            return f"{day:%A}: outside the site's access days"
        if any(day in span for span in access.not_spans):
            return "inside a span the site's access rule excludes"
        for name in access.not_periods:
            if any(day in span for span in self.settings.periods.get(name, ())):
                return f"inside {name}"
        return None

    def bookable(self, day: date, accesses: Iterable[Access] = ()) -> bool:
        """The office works and every one of the sites can be visited on the day."""
        return all(self.site_closed_why(day, a) is None for a in accesses) and (
            self.closed_why(day) is None
        )

    def unknown_periods(self, access: Access) -> list[str]:
        """Periods the rule names that the settings do not define."""
        return [p for p in access.not_periods if p not in self.settings.periods]


def holiday_countries() -> list[tuple[str, str]]:
    """(ISO code, name) of every country the holidays library keeps, by name."""
    from holidays.registry import COUNTRIES

    named = {entry[1]: module.replace("_", " ").title() for module, entry in COUNTRIES.items()}
    return sorted(named.items(), key=lambda item: item[1])


def holiday_regions(country: str) -> list[tuple[str, str]]:
    """(code, name) of the country's regions whose holidays the library keeps."""
    import holidays

    calendar = holidays.country_holidays(country.upper())
    names = {code: name for name, code in getattr(calendar, "subdivisions_aliases", {}).items()}
    return [(code, names.get(code, code)) for code in calendar.subdivisions]
