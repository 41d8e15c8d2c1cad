"""Every record type, in one place: what the store makes tables of, bundles carry and
the audit check walks.

A new record type is added here, and nowhere else needs to learn of it.
"""

from __future__ import annotations

from inspectkit.model.geometry import GeometryItem
from inspectkit.model.people import Inspector, Instrument
from inspectkit.model.record import Record
from inspectkit.model.site import Component, Site, SoilSurvey
from inspectkit.model.visit import Finding, Inspection, NotInspected, Photo, Reading

#: Every record type, in an order where a record's references come before it.
RECORD_TYPES: tuple[type[Record], ...] = (
    Site,
    Component,
    Instrument,
    Inspector,
    Inspection,
    Reading,
    Finding,
    Photo,
    NotInspected,
    SoilSurvey,
    GeometryItem,
)

MODEL_FOR_TABLE: dict[str, type[Record]] = {m.table: m for m in RECORD_TYPES}
