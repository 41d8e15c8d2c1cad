"""The site screen's visit actions: start or continue a walkdown, who inspects, discard a draft.

Kept apart from `site.py`, which shows the site; each function takes the screen and
asks through dialogs, then calls the walkdown's job functions.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING

from inspectkit.model import Inspection, InspectionKind, InspectionState, Inspector
from inspectkit.retiring import in_service
from inspectkit.tui.dialogs.choice import ChoiceDialog
from inspectkit.tui.dialogs.confirm import ConfirmDialog
from inspectkit.walkdown.errors import WalkdownError
from inspectkit.walkdown.visit import (
    discard_inspection,
    same_day_draft,
    set_inspector,
    start_inspection,
)

if TYPE_CHECKING:
    from inspectkit.tui.screens.site import SiteScreen

#: Kinds of visit a walkdown can start, most usual first.
WALKDOWN_KINDS = (
    InspectionKind.VISUAL,
    InspectionKind.COMPLETE,
    InspectionKind.POST_STRIKE,
    InspectionKind.INITIAL,
)


def start_walkdown(screen: SiteScreen) -> None:
    """Continue the open draft, or ask which visit this is; with no inspector chosen, ask
    who is inspecting first. The same kind already finished today is offered to continue."""
    from inspectkit.tui.screens.walkdown import WalkdownScreen

    app = screen.app

    def begin(kind: str, inspector_id: str | None, *, again: bool = True) -> None:
        try:
            inspection = start_inspection(
                app.store, screen.site_id, kind, inspector_id, app.today, continue_draft=again
            )
        except WalkdownError as error:
            screen.notify(str(error), severity="error")
            return
        app.push_screen(WalkdownScreen(inspection.id))

    def kind_for(inspector_id: str | None) -> None:
        draft = screen.open_draft()
        if draft is not None:
            begin(draft.kind.value, inspector_id)
            return

        def picked(kind: str | None) -> None:
            if kind is None:
                return
            earlier = same_day_draft(app.store, screen.site_id, kind, app.today)
            if earlier is None:
                begin(kind, inspector_id)
                return
            app.push_screen(
                ConfirmDialog(
                    f"Continue the {kind.replace('_', '-')} inspection finished earlier today? "
                    "It opens again; No starts a second inspection of this visit.",
                    yes_label="Continue",
                ),
                lambda yes: begin(kind, inspector_id, again=bool(yes)),
            )

        suggested = screen.state.next_kind if screen.state else ""
        kinds = sorted(WALKDOWN_KINDS, key=lambda k: k.value != suggested)
        app.push_screen(
            ChoiceDialog(
                "Which inspection is this?",
                [(k.value, k.value.replace("_", "-")) for k in kinds],
            ),
            picked,
        )

    chosen = app.settings.inspector_id
    if chosen is not None and app.store.get(Inspector, chosen) is not None:
        kind_for(chosen)
        return

    def remember(inspector_id: str) -> None:
        app.settings.inspector_id = inspector_id
        kind_for(inspector_id)

    if not _ask_inspector(screen, "Who is inspecting? (kept for the next visits too)", remember):
        screen.notify("No inspector yet: add one in Settings (F4)", severity="warning")
        kind_for(None)


def choose_draft_inspector(screen: SiteScreen) -> None:
    """Set or change who inspected the site's latest draft, until it is signed."""
    draft = latest_draft(screen)
    if draft is None:
        screen.notify("No draft inspection here to put an inspector on")
        return

    def put(inspector_id: str) -> None:
        try:
            set_inspector(screen.app.store, draft.id, inspector_id)
        except WalkdownError as error:
            screen.notify(str(error), severity="error")
            return
        screen.notify(f"Inspector set on the {draft.kind.value} draft of {draft.date}")
        screen.reload()

    if not _ask_inspector(screen, f"Who inspected the draft of {draft.date}?", put):
        screen.notify("No inspector yet: add one in Settings (F4)", severity="warning")


def discard_draft(screen: SiteScreen) -> None:
    """Discard the site's latest draft with what it recorded, after asking."""
    draft = latest_draft(screen)
    if draft is None:
        screen.notify("No draft inspection here to discard (a signed one never is)")
        return

    def answered(yes: bool | None) -> None:
        if not yes:
            return
        try:
            discard_inspection(screen.app.store, draft.id)
        except WalkdownError as error:
            screen.notify(str(error), severity="error")
            return
        screen.notify(f"Draft of {draft.date} discarded; the audit log keeps it")
        screen.reload()

    screen.app.push_screen(
        ConfirmDialog(
            f"Discard the {draft.kind.value.replace('_', '-')} draft of {draft.date} with every "
            "reading, finding and photo recorded in it? The audit log keeps them.",
            yes_label="Discard",
        ),
        answered,
    )


def latest_draft(screen: SiteScreen) -> Inspection | None:
    """The site's latest unsigned inspection, finished or not."""
    drafts = [
        i
        for i in (screen.records.inspections if screen.records else [])
        if i.state is InspectionState.DRAFT
    ]
    return max(drafts, key=lambda i: (i.date, i.created_at), default=None)


def _ask_inspector(screen: SiteScreen, question: str, then: Callable[[str], None]) -> bool:
    """Ask which inspector; False when there is none to choose from."""
    people = in_service(screen.app.store, Inspector, "name")
    if not people:
        return False

    def picked(inspector_id: str | None) -> None:
        if inspector_id is not None:
            then(inspector_id)

    screen.app.push_screen(ChoiceDialog(question, [(p.id, p.name) for p in people]), picked)
    return True
