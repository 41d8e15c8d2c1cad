"""The report screen: preview, photo choice, and signing inside the running event loop."""

from __future__ import annotations

from pathlib import Path

import pytest
from reportlab import rl_config
from test_report_factory import PASSPHRASE, build_site
from test_report_sign import give_key
from textual.app import App
from textual.widgets import Input, SelectionList, Static

from inspectkit.model import Inspection, InspectionState
from inspectkit.report.verify import async_verify_pdf
from inspectkit.store import Store
from inspectkit.tui.screens.report import ReportScreen


class Harness(App[None]):
    """Just the report screen, on a store, as the real app provides it."""

    def __init__(self, store: Store, db_path: Path, inspection_id: str) -> None:
        super().__init__()
        self.store, self.db_path, self.inspection_id = store, db_path, inspection_id

    def on_mount(self) -> None:
        self.push_screen(ReportScreen(self.inspection_id))


@pytest.fixture
def harness(tmp_path: Path, monkeypatch: pytest.MonkeyPatch):
    monkeypatch.setattr(rl_config, "invariant", 1)
    db = tmp_path / "db.sqlite"
    store = Store.open(db)
    made = build_site(store, tmp_path, photos=2)
    inspector = give_key(store, made.inspector)
    yield Harness(store, db, made.current.id), store, made, inspector
    store.close()


def _preview(app: App) -> str:
    return "\n".join(str(s.render()) for s in app.screen.query("#preview Static").results(Static))


async def test_preview_shows_the_readings_and_results(harness) -> None:
    app, _, made, _ = harness
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        text = _preview(app)
        assert "DC-02" in text and "350 mΩ" in text and "FAIL" in text
        assert "30/30 rule" in text and "Local codes" in text
        assert app.screen.query_one("#photos", SelectionList).option_count == 2
        assert app.screen.query_one("#output", Input).value.endswith("-r1.pdf")


async def test_sign_from_the_screen_with_one_photo_left_out(harness, tmp_path: Path) -> None:
    app, store, made, inspector = harness
    out = tmp_path / "from-tui.pdf"
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        screen = app.screen
        screen.query_one("#photos", SelectionList).deselect(made.photo_ids[0])
        screen.query_one("#output", Input).value = str(out)
        screen.query_one("#passphrase", Input).value = PASSPHRASE.decode()
        await pilot.press("ctrl+s")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert "SIGNED" in str(screen.query_one("#report-status", Static).render())
        assert screen.query_one("#passphrase", Input).value == ""
    from pypdf import PdfReader

    assert sum(len(p.images) for p in PdfReader(out).pages) == 1
    assert (await async_verify_pdf(out.read_bytes(), [inspector.certificate_pem])).ok
    assert store.get(Inspection, made.current.id).state is InspectionState.SIGNED


async def test_signing_without_a_passphrase_asks_for_it(harness, tmp_path: Path) -> None:
    app, store, made, _ = harness
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        await pilot.press("ctrl+s")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert "passphrase" in str(app.screen.query_one("#report-status", Static).render())
    assert store.get(Inspection, made.current.id).state is InspectionState.DRAFT


async def test_export_draft_leaves_it_a_draft(harness, tmp_path: Path) -> None:
    app, store, made, _ = harness
    out = tmp_path / "draft.pdf"
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        app.screen.query_one("#output", Input).value = str(out)
        await pilot.press("ctrl+e")
        await app.workers.wait_for_complete()
        await pilot.pause()
    assert out.is_file()
    assert store.get(Inspection, made.current.id).state is InspectionState.DRAFT


async def test_the_site_screen_opens_the_latest_visits_report(tmp_path: Path) -> None:
    from test_report_factory import TODAY

    from inspectkit.store.preferences import Preferences
    from inspectkit.tui.app import make_app
    from inspectkit.tui.screens.site import SiteScreen

    db = tmp_path / "db.sqlite"
    with Store.open(db) as store:
        made = build_site(store, tmp_path, photos=0)
        Preferences(store).acknowledge_cautions()
    app = make_app(db, today=TODAY)
    async with app.run_test(size=(100, 30)) as pilot:
        await app.workers.wait_for_complete()
        await app.push_screen(SiteScreen(made.site.id))
        await app.workers.wait_for_complete()
        await pilot.pause()
        await pilot.press("r")
        await pilot.pause()
        assert isinstance(app.screen, ReportScreen)
        assert app.screen.inspection_id == made.current.id
        assert "Müllerhof Granary" in _preview(app)
