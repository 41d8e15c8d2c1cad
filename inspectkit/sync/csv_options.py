"""What the person says about an instrument's CSV file: which column holds what, how to read it.

The mapping is checked as it is parsed, before the file is opened, so a mistyped
`--map` is named as such rather than as a problem in every row; `locate` then finds
its columns in the file's header. `CsvImportError` is what every refusal of the
import raises, from here to the last row.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import UTC, tzinfo

from inspectkit.model import Method, Quantity

#: What a column can hold, and which of them a file must have.
FIELDS = ("tag", "value", "taken_at", "unit", "quantity", "method", "joint_state", "note",
          "traverse", "current_probe")  # fmt: skip
REQUIRED = ("tag", "value", "taken_at")


class CsvImportError(Exception):
    """The file was refused and nothing imported; `problems` holds one line per problem."""

    def __init__(self, problems: list[str]) -> None:
        super().__init__("\n".join(problems))
        self.problems = problems


@dataclass(frozen=True)
class ColumnMap:
    """Which column holds each field: a header name, or a 1-based position."""

    columns: dict[str, str | int]

    @classmethod
    def parse(cls, text: str) -> ColumnMap:
        """Read `tag=Point,value=Reading,taken_at=Date` or `tag=1,value=3,taken_at=2`.

        Raises:
            CsvImportError: an unknown field, a field given twice, a required one missing.
        """
        columns: dict[str, str | int] = {}
        for part in filter(None, (p.strip() for p in text.split(","))):
            name, sep, column = (s.strip() for s in part.partition("="))
            if not sep or not column:
                raise CsvImportError([f"--map: {part!r} must be field=column, e.g. tag=Point"])
            if name not in FIELDS:
                raise CsvImportError(
                    [f"--map: unknown field {name!r}; fields are {', '.join(FIELDS)}"]
                )
            if name in columns:
                raise CsvImportError([f"--map: field {name!r} is given twice"])
            if column.isascii() and column.isdigit():
                if int(column) < 1:
                    raise CsvImportError([f"--map: {name}={column}: positions start at 1"])
                columns[name] = int(column)
            else:
                columns[name] = column
        # A file of traverses may have no value column: each value comes from its traverse.
        optional = {"value"} if "traverse" in columns else set()
        missing = [f for f in REQUIRED if f not in columns and f not in optional]
        if ("traverse" in columns) != ("current_probe" in columns):
            raise CsvImportError(["--map: traverse and current_probe go together; map both"])
        if missing:
            raise CsvImportError(
                [f"--map: say which column holds {', '.join(missing)} (e.g. {missing[0]}=2)"]
            )
        return cls(columns)


@dataclass(frozen=True)
class CsvOptions:
    """How to read the cells.

    Attributes:
        quantity: What every row measures, when no column says.
        method: How every row was measured, when no column says.
        unit: Unit of bare numbers in the value column (e.g. `mΩ`).
        decimal_comma: Commas in values are decimal commas (`1,234` is 1.234).
        dayfirst: `03/04/2026` is 3 April, not March 4.
        tz: Zone of times written without one.
        instrument_id: The instrument every reading was taken with.
        header: The first line names the columns.
        delimiter: Column separator; None: guessed from `,`, `;` or tab.
    """

    quantity: Quantity | None = None
    method: Method | None = None
    unit: str | None = None
    decimal_comma: bool = False
    dayfirst: bool = False
    tz: tzinfo = UTC
    instrument_id: str | None = None
    header: bool = True
    delimiter: str | None = None


def locate(mapping: ColumnMap, header: list[str] | None) -> dict[str, tuple[int, str]]:
    """Each mapped field's 0-based column and the name to give it in messages."""
    where = {}
    folded = [h.casefold() for h in header] if header else []
    for name, column in mapping.columns.items():
        if isinstance(column, int):
            label = header[column - 1] if header and column <= len(header) else f"#{column}"
            where[name] = (column - 1, label)
        elif header is None:
            raise CsvImportError([f"--map {name}={column}: the file has no header; use positions"])
        elif column.casefold() in folded:
            where[name] = (folded.index(column.casefold()), column)
        else:
            raise CsvImportError(
                [f"--map {name}={column}: no such column; the header has {', '.join(header)}"]
            )
    return where
