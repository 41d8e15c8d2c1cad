"""Choosing whose public holidays a round leaves out: a country, then one of its regions."""

from __future__ import annotations

from collections.abc import Callable

from textual.app import App

from inspectkit.plan.calendar import holiday_countries, holiday_regions
from inspectkit.plan.settings import (
    PlanSettings,
    PlanSettingsError,
    load_plan_settings,
    save_plan_values,
)
from inspectkit.tui.dialogs.choice import ChoiceDialog

#: The region choice that keeps only the country's nationwide holidays.
WHOLE_COUNTRY = "*"


def calendar_label(settings: PlanSettings) -> str:
    """E.g. "GB · ENG public holidays", or what is left when no country is set."""
    if not settings.holiday_country:
        return "none: only the weekdays and closed days in plan.toml"
    region = f" · {settings.holiday_region}" if settings.holiday_region else ""
    return f"{settings.holiday_country}{region} public holidays"


def holiday_text() -> str:
    """The calendar in force and the time zone, from the planning settings, for a screen."""
    try:
        settings = load_plan_settings()
    except PlanSettingsError as exc:
        return str(exc)
    return f"{calendar_label(settings)}; times in {settings.zone}"


def choose_holiday_calendar(
    app: App[object], current: PlanSettings | None, done: Callable[[PlanSettings], None]
) -> None:
    """Ask for the country, then the region, and keep both in the user's plan.toml.

    The country in force is offered first, as the list is long. `done` is called
    with the settings as saved; a refused choice is shown and changes nothing.
    """
    now = current.holiday_country.upper() if current else ""

    def save(country: str, region: str) -> None:
        try:
            saved = save_plan_values({"holiday_country": country, "holiday_region": region})
        except PlanSettingsError as exc:
            app.notify(str(exc), severity="error")
            return
        app.notify(f"Public holidays: {calendar_label(saved)}")
        done(saved)

    def country_chosen(country: str | None) -> None:
        if country is None:
            return
        regions = holiday_regions(country)
        if not regions:
            save(country, "")
            return

        def region_chosen(region: str | None) -> None:
            if region is not None:
                save(country, "" if region == WHOLE_COUNTRY else region)

        app.push_screen(
            ChoiceDialog(
                f"Region of {country} whose holidays are kept",
                [
                    (WHOLE_COUNTRY, "the whole country (nationwide holidays only)"),
                    *((code, f"{name} ({code})") for code, name in regions),
                ],
            ),
            region_chosen,
        )

    countries = sorted(holiday_countries(), key=lambda item: item[0] != now)
    app.push_screen(
        ChoiceDialog(
            "Country whose public holidays are not worked",
            [
                (code, f"{name} ({code})" + (" · now" if code == now else ""))
                for code, name in countries
            ],
        ),
        country_chosen,
    )
