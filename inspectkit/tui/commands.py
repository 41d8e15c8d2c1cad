"""The command palette's view of the keys: every action shown in the footer, by name."""

from __future__ import annotations

from functools import partial

from textual.binding import Binding
from textual.command import DiscoveryHit, Hit, Hits, Provider


class ActionsProvider(Provider):
    """Offers every binding of the current screen and of the app as a command.

    Built from the bindings rather than a list of its own, so a screen or a
    binding added later shows up in the palette without touching this module.
    """

    def _commands(self) -> list[tuple[str, str, partial[object]]]:
        """The screen's own bindings, even where a focused widget shadows the key, then the app's.

        Widgets' own keys (cursor moves and the like) are left out: they are not
        actions a person looks for by name.
        """
        screen, app = self.screen, self.app
        found: list[tuple[Binding, object]] = [
            (binding, screen) for binding in screen.BINDINGS if isinstance(binding, Binding)
        ]
        found += [
            (active.binding, active.node)
            for active in screen.active_bindings.values()
            if active.node is app and active.enabled
        ]
        seen: set[str] = set()
        commands = []
        for binding, node in found:
            if not binding.description or binding.system or binding.action in seen:
                continue
            seen.add(binding.action)
            run = partial(app.call_later, app.run_action, binding.action, node)
            commands.append((binding.description, binding.tooltip, run))
        return sorted(commands, key=lambda c: c[0])

    async def discover(self) -> Hits:
        for title, help_text, run in self._commands():
            yield DiscoveryHit(title, run, help=help_text)

    async def search(self, query: str) -> Hits:
        matcher = self.matcher(query)
        for title, help_text, run in self._commands():
            score = matcher.match(title)
            if score > 0:
                yield Hit(score, matcher.highlight(title), run, help=help_text)
