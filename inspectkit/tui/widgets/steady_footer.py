"""A footer that is rebuilt only when the keys it shows change, not at every focus change."""

from __future__ import annotations

from textual.screen import Screen
from textual.widgets import Footer


class SteadyFooter(Footer):
    """Textual's footer, minus the rebuild when a new field takes the focus with the same keys.

    Rebuilding the footer's keys takes longer than the walkdown's whole move to the
    next component, and the walk changes focus at every Enter and Page Down.
    """

    _shown: tuple[tuple[str, str, bool], ...] | None = None

    def bindings_changed(self, screen: Screen) -> None:
        shown = tuple(
            (key, binding.action, enabled)
            for key, (_, binding, enabled, _) in screen.active_bindings.items()
            if binding.show
        )
        if shown == self._shown and self._bindings_ready:
            return
        self._shown = shown
        super().bindings_changed(screen)
