"""Reading a TOML file of ours and checking it against its model, with one kind of message.

Profiles, checklists, branding, plan settings and the demo scenario are all edited by hand,
so a slip in any of them must be reported the same way: the file, the key, and what to do.
"""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Any, TypeVar

from pydantic import BaseModel, ValidationError

M = TypeVar("M", bound=BaseModel)


def read_toml(
    path: Path, error: type[Exception], what: str, *, missing: str = ""
) -> dict[str, Any]:
    """The file's tables, or `error` naming the file and why it cannot be read.

    Args:
        what: the file's role in a sentence ("the profile"), for "cannot read the profile".
        missing: the message for a missing file, when it should say more than the OS does.
    """
    try:
        return tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError as exc:
        if missing:
            raise error(f"{path}: {missing}") from None
        raise error(f"{path}: cannot read {what} ({exc.strerror})") from exc
    except OSError as exc:
        raise error(f"{path}: cannot read {what} ({exc.strerror})") from exc
    except tomllib.TOMLDecodeError as exc:
        raise error(f"{path}: not valid TOML ({exc})") from exc


def problem(item: Any) -> str:
    """One pydantic error in a person's words, with a hint for a missing key."""
    if item["type"] == "missing":
        return "missing; add this key"
    return str(item["msg"]).removeprefix("Value error, ")


def problems(exc: ValidationError, where: str) -> str:
    """Every error of a validation, a line each: `where: key.path: problem`."""
    return "\n".join(
        f"{where}: {'.'.join(str(p) for p in item['loc'])}: {problem(item)}"
        for item in exc.errors()
    )


def validated(model: type[M], data: dict[str, Any], error: type[Exception], where: str) -> M:
    """The data as the model, or `error` with every problem named by `where` and key."""
    try:
        return model.model_validate(data)
    except ValidationError as exc:
        raise error(problems(exc, where)) from None
