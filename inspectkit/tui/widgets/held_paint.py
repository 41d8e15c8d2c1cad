"""Repaints held across a few steps of the event loop, let go exactly once."""

from __future__ import annotations

from contextlib import AbstractContextManager, ExitStack


class HeldPaint:
    """One `App.batch_update` held open from one callback to another.

    A context manager cannot span callbacks on its own; this keeps it entered until
    `release`, which is safe to call again or when nothing is held, so a screen can
    let go when it unmounts whatever happened to the callback meant to do it.
    """

    def __init__(self) -> None:
        self._stack = ExitStack()
        self.is_pending = False

    def hold(self, batch: AbstractContextManager[None]) -> None:
        self._stack.enter_context(batch)
        self.is_pending = True

    def release(self) -> None:
        if self.is_pending:
            self.is_pending = False
            self._stack.close()
