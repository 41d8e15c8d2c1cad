"""An instrument's CSV file read into its header and rows of cells, however it is written.

A header or none, commas, semicolons or tabs, UTF-8 or the Windows code page: the
file is turned into cells here, and nothing about what the cells mean is known yet.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

from inspectkit.sync.csv_options import CsvImportError, CsvOptions


def read_table(
    path: Path, options: CsvOptions
) -> tuple[list[str] | None, list[tuple[int, list[str]]]]:
    """The header (None without one) and each non-blank row with its line in the file."""
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise CsvImportError([f"{path}: cannot be read ({exc.strerror})"]) from exc
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        text = raw.decode("cp1252", errors="replace")
    delimiter = options.delimiter or _guess_delimiter(text)
    delimiter = {"\\t": "\t", "tab": "\t"}.get(delimiter, delimiter)
    if len(delimiter) != 1 or delimiter in '"\r\n':
        raise CsvImportError(
            [f"--delimiter {delimiter!r}: give one character such as ; or , (a tab: \\t)"]
        )
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    header = None
    records = []
    try:
        for cells in reader:
            if not any(cell.strip() for cell in cells):
                continue
            if options.header and header is None:
                header = [cell.strip() for cell in cells]
                continue
            records.append((reader.line_num, cells))
    except csv.Error as exc:
        raise CsvImportError(
            [f"{path}: line {reader.line_num}: {exc}; a cell that long or that broken is not "
             "an instrument's reading, check the file and --delimiter"]
        ) from None  # fmt: skip
    return header, records


def _guess_delimiter(text: str) -> str:
    """Semicolon or tab when every one of the first lines has the same number of them.

    Files with decimal commas separate columns with semicolons, so a comma is the
    last guess, not the first.
    """
    lines = [line for line in text.splitlines()[:10] if line.strip()]
    for candidate in (";", "\t", ","):
        counts = {line.count(candidate) for line in lines}
        if len(counts) == 1 and counts != {0}:
            return candidate
    return ","
