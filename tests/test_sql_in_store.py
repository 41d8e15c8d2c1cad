"""SQL text lives in `inspectkit/store/` only: the other layers ask the store's named queries.

An AST scan, so that a condition handed to `store.select(...)`, a statement handed to
`.execute(...)` or a string that reads as SQL fails here, with its file and line.
"""

from __future__ import annotations

import ast
import re
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "inspectkit"

# Files still holding SQL, each for a reason; remove an entry once its SQL has moved.
ALLOWED = (
    # The CSV import is reworked in another step; its two selects move then.
    "sync/csvimport.py",
)

# sqlite-utils' and the Store's methods that take SQL text.
SQL_METHODS = {"execute", "executemany", "executescript", "rows_where", "count_where"}
SQL_METHODS |= {"delete_where", "select"}
# A string that opens as an SQL statement or condition (upper case, as written here).
SQL_START = re.compile(r"\s*(SELECT|INSERT|UPDATE|DELETE|WHERE|WITH|CREATE|DROP|ALTER|PRAGMA)\s")


def sql_text_in(tree: ast.AST) -> list[tuple[int, str]]:
    """(line, code) of each place in a module that writes SQL text."""
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute):
            # `store.select(Model)` names no SQL; any further argument is a condition or
            # an order. Textual's `query(...)` takes CSS selectors, caught only as SQL text.
            name = node.func.attr
            extra = node.args[1:] if name == "select" else node.args
            if name in SQL_METHODS and (extra or node.keywords):
                found.append((node.lineno, ast.unparse(node)))
        elif (
            isinstance(node, ast.Constant)
            and isinstance(node.value, str)
            and SQL_START.match(node.value)
        ):
            found.append((node.lineno, repr(node.value)))
    return found


def modules_outside_store() -> list[Path]:
    return [
        path
        for path in sorted(PACKAGE.rglob("*.py"))
        if path.relative_to(PACKAGE).parts[0] != "store"
        and not path.relative_to(PACKAGE).as_posix().startswith(ALLOWED)
    ]


def test_no_sql_text_outside_the_store() -> None:
    places = [
        f"{path.relative_to(PACKAGE.parent)}:{line}: {code}"
        for path in modules_outside_store()
        for line, code in sql_text_in(ast.parse(path.read_text(encoding="utf-8")))
    ]
    assert not places, "SQL outside inspectkit/store/; add a named query there:\n" + "\n".join(
        places
    )


@pytest.mark.parametrize(
    "code",
    [
        'store.select(Site, "name = ?", ["x"])',
        'store.select(Site, order_by="name")',
        "store.select(model, *where)",
        'store.db.execute("PRAGMA user_version")',
        'db["site"].rows_where("id = ?", [1])',
        'sql = "SELECT id FROM site"',
        'text = f"x"; q = "  WHERE a = 1"',
    ],
)
def test_the_scan_sees_sql(code: str) -> None:
    assert sql_text_in(ast.parse(code))


@pytest.mark.parametrize(
    "code",
    [
        "store.select(Inspector)",
        "self.query(RadioButton)",
        'self.query_one("#entry")',
        'fail("Select a site first; Update the list with r")',
    ],
)
def test_the_scan_lets_plain_code_be(code: str) -> None:
    assert not sql_text_in(ast.parse(code))


def test_every_allowed_entry_still_holds_sql() -> None:
    """An entry left behind after its SQL moved would let new SQL in there unseen."""
    for entry in ALLOWED:
        paths = [
            p for p in PACKAGE.rglob("*.py") if p.relative_to(PACKAGE).as_posix().startswith(entry)
        ]
        held = [p for p in paths if sql_text_in(ast.parse(p.read_text(encoding="utf-8")))]
        assert held, f"{entry!r} holds no SQL any more: remove it from ALLOWED"
