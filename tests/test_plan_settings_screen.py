"""The Settings screen shows whose public holidays rounds leave out, and changes them."""

# ruff: noqa: F811 - the tui_db fixture is imported, then named as an argument

from __future__ import annotations

from pathlib import Path

from test_tui_settings import _settings as open_settings
from textual.widgets import Static
from tui_factories import ANCHOR, tui_db  # noqa: F401

from inspectkit.plan.settings import load_plan_settings
from inspectkit.tui.app import make_app
from inspectkit.tui.dialogs.choice import ChoiceDialog


async def test_settings_show_and_change_the_holiday_calendar(tui_db: Path) -> None:
    app = make_app(tui_db, today=ANCHOR)
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_settings(pilot)
        shown = str(screen.query_one("#holidays", Static).render())
        assert shown.startswith("GB · ENG")
        await pilot.press("h")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)
        assert app.screen.items[0][0] == "GB"  # the country in force is offered first
        app.screen.dismiss("FR")
        await pilot.pause()
        assert isinstance(app.screen, ChoiceDialog)
        app.screen.dismiss("*")  # the whole country
        await pilot.pause()
        assert app.screen is screen
        assert str(screen.query_one("#holidays", Static).render()).startswith("FR public holidays")
    loaded = load_plan_settings()
    assert (loaded.holiday_country, loaded.holiday_region) == ("FR", "")
