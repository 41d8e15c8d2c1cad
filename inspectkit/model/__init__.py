"""The vocabulary of inspectkit: the records an inspection produces, as pydantic models,
and the terms and tables they are made of.

This package's namespace is the vocabulary's surface: well over a hundred modules say
`from inspectkit.model import Reading`, so it re-exports the public names of its
submodules (limits, ids, terms, tables, record, site, people, visit, registry,
site_records). The site geometry records, used by the few modules that draw or judge a
roof, are imported from `inspectkit.model.geometry` itself.

Values are kept in SI base units (Ω, Ω·m, counts); `units.py` turns what people
type into those.
"""

from __future__ import annotations

from inspectkit.model.ids import new_id, new_ids, utcnow
from inspectkit.model.limits import (
    CLOCK_SKEW,
    EARLIEST_YEAR,
    MAX_COUNT,
    MAX_ELECTRODE_M,
    MAX_RESISTANCE_OHM,
    MAX_RESISTIVITY_OHM_M,
    MAX_ROD_DIAMETER_M,
    NAME_MAX,
    NOTES_MAX,
    SEAL_MAX,
)
from inspectkit.model.people import Inspector, Instrument, Organisation
from inspectkit.model.record import Record, explain
from inspectkit.model.registry import MODEL_FOR_TABLE, RECORD_TYPES
from inspectkit.model.site import Component, Site, SoilSurvey
from inspectkit.model.site_records import SiteRecords
from inspectkit.model.tables import (
    DEFAULT_METHOD,
    INSTRUMENT_METHODS,
    INSTRUMENT_QUANTITIES,
    JOINT_FOR,
    METHODS_FOR,
    QUANTITIES_FOR,
    QUANTITY_MAX,
    WALKING_ORDER,
    instrument_misfit,
)
from inspectkit.model.terms import (
    Between,
    ComponentKind,
    EarthingArrangement,
    ElectrodeOrientation,
    ElectrodeType,
    GeometryKind,
    Grade,
    InspectionKind,
    InspectionState,
    InstrumentKind,
    JointState,
    Method,
    NotInspectedReason,
    ProtectionLevel,
    Quantity,
    Severity,
    SoilCondition,
)
from inspectkit.model.visit import Finding, Inspection, NotInspected, Photo, Reading

__all__ = [
    "CLOCK_SKEW",
    "DEFAULT_METHOD",
    "EARLIEST_YEAR",
    "INSTRUMENT_METHODS",
    "INSTRUMENT_QUANTITIES",
    "JOINT_FOR",
    "MAX_COUNT",
    "MAX_ELECTRODE_M",
    "MAX_RESISTANCE_OHM",
    "MAX_RESISTIVITY_OHM_M",
    "MAX_ROD_DIAMETER_M",
    "METHODS_FOR",
    "MODEL_FOR_TABLE",
    "NAME_MAX",
    "NOTES_MAX",
    "QUANTITIES_FOR",
    "QUANTITY_MAX",
    "RECORD_TYPES",
    "SEAL_MAX",
    "WALKING_ORDER",
    "Between",
    "Component",
    "ComponentKind",
    "EarthingArrangement",
    "ElectrodeOrientation",
    "ElectrodeType",
    "Finding",
    "GeometryKind",
    "Grade",
    "Inspection",
    "InspectionKind",
    "InspectionState",
    "Inspector",
    "Instrument",
    "InstrumentKind",
    "JointState",
    "Method",
    "NotInspected",
    "NotInspectedReason",
    "Organisation",
    "Photo",
    "ProtectionLevel",
    "Quantity",
    "Reading",
    "Record",
    "Severity",
    "Site",
    "SiteRecords",
    "SoilCondition",
    "SoilSurvey",
    "explain",
    "instrument_misfit",
    "new_id",
    "new_ids",
    "utcnow",
]
