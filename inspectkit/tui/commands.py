"""The command palette's view of the keys: every action shown in the footer, by name."""

from __future__ import annotations

from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider


class ActionsProvider(Provider):
    """Offers every binding active on the current screen (and the app's) as a command.

    Built from the live bindings rather than a list of its own, so a screen or a
    binding added later shows up in the palette without touching this module.
    """

    def _commands(self) -> list[tuple[str, str, partial[object]]]:
        seen: set[str] = set()
        commands = []
        for active in self.screen.active_bindings.values():
            binding = active.binding
            if not binding.description or not active.enabled or binding.system:
                continue
            if binding.action in seen:
                continue
            seen.add(binding.action)
            run = partial(self.app.call_later, self.app.run_action, binding.action, active.node)
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
