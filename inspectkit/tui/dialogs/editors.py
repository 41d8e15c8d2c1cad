"""The edit dialogs for sites, components, inspectors and instruments, as field lists."""

from __future__ import annotations

from collections.abc import Sequence
from datetime import date

from inspectkit.model import (
    Component,
    ComponentKind,
    EarthingArrangement,
    ElectrodeType,
    Inspector,
    Instrument,
    InstrumentKind,
    Organisation,
    ProtectionLevel,
    Site,
)
from inspectkit.profiles import level_shown, load_all_profiles
from inspectkit.tui.dialogs.record_form import Field, RecordDialog

DATE_HINT = "a date as YYYY-MM-DD"
YEAR_HINT = "a four-digit year, e.g. 1998"
#: The earthing arrangements as a pick list, each with what it means (IEC 62305-3, 5.4.2).
ARRANGEMENT_CHOICES = [
    ("A: rod or plate at each down conductor", EarthingArrangement.A.value),
    ("B: ring or foundation electrode", EarthingArrangement.B.value),
]


def profile_choices() -> list[tuple[str, str]]:
    """Every rule set a site may be held to, by name."""
    return [(name, name) for name in sorted(load_all_profiles())]


def site_dialog(site: Site | None = None) -> RecordDialog[Site]:
    """Edit a site, or make a new one when `site` is None."""
    fields = [
        Field("name", "Name", "the site's name"),
        Field("client", "Client"),
        Field("address", "Address"),
        Field("town", "Town"),
        Field(
            "protection_level", "Protection level", "I, II, III or IV",
            choices=[(level.value, level.value) for level in ProtectionLevel],
        ),
        Field("profile", "Profile", choices=profile_choices()),
        Field("critical", "Critical", flag=True),
        Field("explosive_risk", "Explosive risk", flag=True),
        Field("height_m", "Height (m)", "metres, e.g. 18.5", optional=True),
        Field("latitude", "Latitude", "degrees, e.g. 51.48", optional=True),
        Field("longitude", "Longitude", "degrees, e.g. -0.61", optional=True),
        Field("access", "Access", "when it can be visited, e.g. weekdays 08:00-15:00"),
        Field("altered_on", "Altered on", DATE_HINT, optional=True),
        Field("use", "Use", "what it is used for, e.g. offices, fuel depot"),
        Field("construction", "Construction", "e.g. steel frame, brick cladding"),
        Field("roofing", "Roofing", "e.g. flat felt roof on concrete deck"),
        Field("built_year", "Year built", YEAR_HINT, optional=True),
        Field("installer", "LPS installed by", "firm or person"),
        Field("installed_year", "LPS installed in", YEAR_HINT, optional=True),
        Field("design_standard", "Designed to", "standard and edition, e.g. IEC 62305-3:2010"),
        Field("air_termination", "Air termination", "e.g. mesh on flat roof, rods on plant"),
        Field(
            "earthing_arrangement", "Earthing", "A or B", optional=True,
            choices=ARRANGEMENT_CHOICES,
        ),
        Field("notes", "Notes"),
    ]
    base = site.model_dump() if site else {"profile": "iec-62305-3"}
    if site is not None and level_shown(site.profile, site.protection_level, None) is None:
        # Its standard has no protection levels: the field is not asked (the stored value
        # stays as it was, unused).
        fields = [f for f in fields if f.name != "protection_level"]
    return RecordDialog("Edit site" if site else "New site", Site, fields, base)


def component_dialog(
    site_id: str,
    component: Component | None = None,
    parents: list[Component] | None = None,
    kind: ComponentKind | None = None,
) -> RecordDialog[Component]:
    """Edit a component (re-tag, move, re-parent) or add one to a site.

    Args:
        site_id: The site the component belongs to.
        component: The component to edit; None to add a new one.
        parents: Components it may hang off (a test joint's down conductor...).
        kind: The kind a new component starts as (the group the user was in).
    """
    fields = [
        Field(
            "kind", "Kind", "a component kind",
            choices=[(kind.label, kind.value) for kind in ComponentKind],
        ),
        Field("tag", "Tag", "the tag painted on site, e.g. TJ-03"),
        Field("location", "Location", "where it is, e.g. north-east corner"),
        Field("material", "Material", "e.g. copper tape 25×3"),
        Field("installed_on", "Installed on", DATE_HINT, optional=True),
        Field(
            "parent_id", "Hangs off", optional=True,
            choices=[(f"{p.tag} ({p.kind.label})", p.id) for p in parents or []],
        ),
        Field(
            "electrode_type", "Electrode type", "only for earth electrodes", optional=True,
            choices=[(t.value, t.value) for t in ElectrodeType],
        ),
    ]
    base = component.model_dump() if component else {"site_id": site_id, "kind": kind}
    title = f"Edit {component.tag}" if component else "New component"
    return RecordDialog(title, Component, fields, base)


def inspector_dialog(organisations: Sequence[Organisation] = ()) -> RecordDialog[Inspector]:
    """Add an inspector, the person whose name goes on inspections.

    With organisations on record the inspector is picked into one (its letterhead
    goes on their reports); without, the organisation is a name typed in.
    """
    belongs = (
        Field(
            "organisation_id",
            "Organisation",
            choices=[(o.name, o.id) for o in organisations],
            optional=True,
        )
        if organisations
        else Field("organisation", "Organisation")
    )
    fields = [
        Field("name", "Name", "the inspector's full name"),
        belongs,
        Field("qualification", "Qualification"),
    ]
    return RecordDialog("New inspector", Inspector, fields, {})


def instrument_dialog() -> RecordDialog[Instrument]:
    """Add a test instrument with what kind it is and its calibration due date."""
    fields = [
        Field("description", "Description", "make and model, e.g. earth tester ET-4"),
        Field(
            "kind", "Kind", "what it measures", optional=True,
            choices=[(k.label, k.value) for k in InstrumentKind],
        ),
        Field("serial", "Serial", "the serial number on the instrument"),
        Field("calibration_due", "Calibration due", DATE_HINT, optional=True),
    ]
    return RecordDialog("New instrument", Instrument, fields, {})


def retired(component: Component, today: date) -> Component:
    """The component marked retired: it keeps its history but is no longer inspected."""
    return component.model_copy(update={"retired_on": today})
