"""The contractor's name, contact, logo and colours for reports, from templates/report.toml."""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from inspectkit.paths import templates_dir
from inspectkit.tomlfile import read_toml

_COLOUR = re.compile(r"^#[0-9a-fA-F]{6}$")


class BrandingError(Exception):
    """The branding file cannot be used; the message names the field and the fix."""


@dataclass(frozen=True)
class Branding:
    """Who a report comes from, and how it looks."""

    name: str
    address: str = ""
    phone: str = ""
    email: str = ""
    logo: Path | None = None
    primary: str = "#1F4E79"
    accent: str = "#C98A1B"

    @property
    def contact(self) -> str:
        """Address, phone and e-mail on one line, skipping the empty ones."""
        return " · ".join(part for part in (self.address, self.phone, self.email) if part)


def default_branding_path() -> Path:
    return templates_dir() / "report.toml"


def load_branding(path: Path | None = None) -> Branding:
    """Read the branding file (the shipped one by default).

    Raises:
        BrandingError: the file is missing, not TOML, or a field is wrong.
    """
    path = path or default_branding_path()
    data = read_toml(path, BrandingError, "the branding file")
    contractor = _table(data, "contractor", path)
    colours = _table(data, "colours", path)
    name = str(contractor.get("name", "")).strip()
    if not name:
        raise BrandingError(f"{path}: contractor.name is empty; give the contractor's name")
    logo_text = str(contractor.get("logo", "")).strip()
    logo = None
    if logo_text:
        logo = (path.parent / logo_text).resolve()
        if not logo.is_file():
            raise BrandingError(
                f"{path}: contractor.logo {logo_text!r} is not a file; "
                "fix the path or leave it empty"
            )
    found: dict[str, str] = {}
    for key in ("primary", "accent"):
        if key in colours:
            value = str(colours[key]).strip()
            if not _COLOUR.match(value):
                raise BrandingError(
                    f"{path}: colours.{key} {value!r} is not a colour; write it as #RRGGBB"
                )
            found[key] = value
    return Branding(
        name=name,
        address=str(contractor.get("address", "")).strip(),
        phone=str(contractor.get("phone", "")).strip(),
        email=str(contractor.get("email", "")).strip(),
        logo=logo,
        **found,
    )


def _table(data: dict[str, Any], key: str, path: Path) -> dict[str, Any]:
    value = data.get(key, {})
    if not isinstance(value, dict):
        raise BrandingError(f"{path}: [{key}] must be a table of keys, not a value")
    return value
