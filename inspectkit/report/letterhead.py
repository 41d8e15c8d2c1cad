"""Whose report it is: the inspecting organisation's letterhead, address, logo and colours.

Organisations are records; an inspector belongs to one. The branding file
(`templates/report.toml`) is only the starting point: at first start it becomes
the default organisation, which a report uses when its inspector has none (or
one this laptop does not hold).
"""

from __future__ import annotations

from pathlib import Path

from inspectkit.model import Inspection, Inspector, Organisation
from inspectkit.report.branding import Branding, BrandingError, load_branding
from inspectkit.store import Store
from inspectkit.store.record_queries import default_organisation


def ensure_default_organisation(store: Store) -> Organisation:
    """The default organisation, made from the branding file the first time it is asked for.

    Raises:
        BrandingError: the branding file cannot be read (only when it is needed).
    """
    found = default_organisation(store)
    if found is not None:
        return found
    branding = load_branding()
    return store.save(
        Organisation(
            name=branding.name,
            address=branding.address,
            phone=branding.phone,
            email=branding.email,
            logo=str(branding.logo) if branding.logo else "",
            primary=branding.primary,
            accent=branding.accent,
            is_default=True,
        )
    )


def organisation_of(store: Store, inspector: Inspector | None) -> Organisation | None:
    """The inspector's organisation, else the default one, else None (none made yet)."""
    if inspector is not None and inspector.organisation_id:
        own = store.get(Organisation, inspector.organisation_id)
        if own is not None:
            return own
    return default_organisation(store)


def branding_of(organisation: Organisation) -> Branding:
    """The report branding an organisation's record gives.

    Raises:
        BrandingError: the logo it names is not a file.
    """
    logo = Path(organisation.logo) if organisation.logo else None
    if logo is not None and not logo.is_file():
        raise BrandingError(
            f"organisation {organisation.name!r}: logo {organisation.logo!r} is not a file; "
            "fix the path or leave it empty"
        )
    return Branding(
        name=organisation.name,
        address=organisation.address,
        phone=organisation.phone,
        email=organisation.email,
        logo=logo,
        primary=organisation.primary,
        accent=organisation.accent,
    )


def report_branding(store: Store, inspection: Inspection) -> Branding:
    """The letterhead of the organisation whose inspector made the inspection.

    Falls back to the branding file when no organisation is recorded at all.
    """
    inspector = store.get(Inspector, inspection.inspector_id) if inspection.inspector_id else None
    organisation = organisation_of(store, inspector)
    return branding_of(organisation) if organisation is not None else load_branding()
