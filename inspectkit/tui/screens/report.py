"""A report before it goes out: its content as text, the photos to include, sign and export."""

from __future__ import annotations

import os
from pathlib import Path

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Header, Input, Label, SelectionList, Static

from inspectkit.model import Inspection, InspectionState
from inspectkit.report.content import ReportContent, text_sections
from inspectkit.report.gather import build_report
from inspectkit.report.publish import default_file_name

#: Read when the passphrase field is left empty, as the command line does.
PASSPHRASE_ENV = "INSPECTKIT_PASSPHRASE"


class ReportScreen(Screen[None]):
    """Preview one inspection's report, choose its photos, then export it or sign it.

    Uses the app's `store` and `db_path`. Signing awaits pyHanko's asynchronous
    signer and renders in a worker thread, so the screen never blocks or nests
    the event loop.
    """

    CSS_PATH = "report.tcss"

    BINDINGS = [
        Binding("escape", "app.pop_screen", "Back", id="report.back", tooltip="Back"),
        Binding(
            "ctrl+e",
            "export",
            "Export draft",
            id="report.export",
            tooltip="Write the PDF without signing it",
        ),
        Binding(
            "ctrl+s",
            "sign",
            "Sign & export",
            id="report.sign",
            tooltip="Sign with the inspector's key, write the PDF and freeze the inspection",
        ),
    ]

    def __init__(self, inspection_id: str) -> None:
        super().__init__()
        self.inspection_id = inspection_id
        self.content: ReportContent | None = None

    @property
    def photos(self) -> SelectionList[str]:
        return self.query_one("#photos", SelectionList)

    @property
    def status(self) -> Static:
        return self.query_one("#report-status", Static)

    def compose(self) -> ComposeResult:
        yield Header()
        with Horizontal(id="report-body"):
            yield VerticalScroll(id="preview")
            with Vertical(id="report-side"):
                yield Label("Photos (space: in/out)")
                yield SelectionList[str](id="photos")
                yield Label("Save as")
                yield Input(id="output")
                yield Label("Passphrase, to sign")
                yield Input(id="passphrase", password=True, placeholder="or env variable")
                yield Static("", id="report-status")
        yield Footer()

    def on_mount(self) -> None:
        self.refresh_preview()
        inspection = self.app.store.get(Inspection, self.inspection_id)
        if inspection is not None and self.content is not None:
            self.photos.add_options(
                (p.caption or p.photo_id, p.photo_id, True) for p in self.content.photos()
            )
            name = default_file_name(self.content.site_name, inspection)
            self.query_one("#output", Input).value = str(Path(self.app.db_path).parent / name)
        self.query_one("#preview").focus()

    def refresh_preview(self) -> None:
        """Build the report's content again and show it section by section."""
        try:
            self.content = build_report(self.app.store, self.inspection_id)
        except Exception as error:  # noqa: BLE001 - shown to the user, the screen stays usable
            self.status.update(f"Cannot build the report: {error}")
            return
        preview = self.query_one("#preview", VerticalScroll)
        preview.remove_children()
        preview.mount_all(
            Static(
                f"[b]{_escape(section.title)}[/b]\n"
                + "\n".join(_escape(line) for line in section.lines),
                classes="section",
            )
            for section in text_sections(self.content)
        )
        self.sub_title = f"{self.content.site_name} · {self.content.revision_label}"

    def action_export(self) -> None:
        self.run_worker(self._export(sign=False), exclusive=True, group="report")

    def action_sign(self) -> None:
        self.run_worker(self._export(sign=True), exclusive=True, group="report")

    async def _export(self, *, sign: bool) -> None:
        from inspectkit.report.branding import BrandingError
        from inspectkit.report.gather import ReportError
        from inspectkit.report.publish import export_report_async
        from inspectkit.report.render import RenderError
        from inspectkit.report.sign import SignError

        output = Path(self.query_one("#output", Input).value.strip() or "report.pdf")
        secret = None
        if sign:
            typed = self.query_one("#passphrase", Input).value or os.environ.get(PASSPHRASE_ENV, "")
            if not typed:
                self.status.update("Type the key passphrase to sign.")
                self.query_one("#passphrase", Input).focus()
                return
            secret = typed.encode("utf-8")
        self.status.update("Signing…" if sign else "Writing…")
        try:
            _, data = await export_report_async(
                self.app.store,
                self.inspection_id,
                output,
                passphrase=secret,
                keep_photos=set(self.photos.selected),
            )
        except (ReportError, SignError, RenderError, BrandingError, OSError) as error:
            self.status.update(f"Not written: {error}")
            self.notify(str(error), severity="error")
            return
        finally:
            self.query_one("#passphrase", Input).value = ""
        inspection = self.app.store.get(Inspection, self.inspection_id)
        if inspection is not None and inspection.state is InspectionState.SIGNED:
            message = f"SIGNED and written to {output} ({len(data) / 1e6:.1f} MB); frozen now."
        else:
            message = f"Draft written to {output} ({len(data) / 1e6:.1f} MB); not signed."
        self.status.update(message)
        self.notify(message)
        self.refresh_preview()


def _escape(text: str) -> str:
    """Text shown as is, not read as console markup."""
    return text.replace("[", r"\[")
