"""Text from outside shown as data: control characters escaped before they reach a screen.

A site's name, a bundle's manifest or a CSV cell can hold a terminal escape (move
the cursor, rewrite a line, set the window title) or a right-to-left override that
shows a name reversed. Printed raw, such text speaks to the terminal instead of
the person. `printable` turns each of those characters into a visible `\\uXXXX`,
which is also a valid escape inside a JSON string, so the same filter serves
plain lines and `--json` output.
"""

from __future__ import annotations

from typing import IO, Any

#: C0 controls bar tab and newline, DEL, C1 controls, and the bidirectional controls.
_ESCAPED = (
    [c for c in range(0x20) if c not in (0x09, 0x0A)]
    + [0x7F, *range(0x80, 0xA0), 0x061C, 0x200E, 0x200F]
    + [*range(0x202A, 0x202F), *range(0x2066, 0x206A)]
)
_TABLE = {c: f"\\u{c:04x}" for c in _ESCAPED}


def printable(text: str) -> str:
    """The text with every control character written out as `\\uXXXX`."""
    return text.translate(_TABLE)


class PrintableStream:
    """A text stream that escapes control characters in all that is written to it.

    It has no `buffer`, so a writer looking for the bytes underneath (click does)
    keeps writing through it.
    """

    def __init__(self, stream: IO[str]) -> None:
        self._stream = stream

    def write(self, text: str) -> int:
        return self._stream.write(printable(text))

    def writelines(self, lines: Any) -> None:
        for line in lines:
            self.write(line)

    def __getattr__(self, name: str) -> Any:
        if name == "buffer":
            raise AttributeError(name)
        return getattr(self._stream, name)
