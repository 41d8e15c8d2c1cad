"""One site's records gathered: what the engine judges a site by."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict, Field

from inspectkit.model.geometry import GeometryItem
from inspectkit.model.people import Instrument
from inspectkit.model.site import Component, Site, SoilSurvey
from inspectkit.model.visit import Finding, Inspection, NotInspected, Photo, Reading


class SiteRecords(BaseModel):
    """Everything recorded for one site: what the engine needs to judge it.

    Instruments are those referenced by the site's readings.
    """

    model_config = ConfigDict(arbitrary_types_allowed=True)

    site: Site
    components: list[Component] = Field(default_factory=list)
    inspections: list[Inspection] = Field(default_factory=list)
    readings: list[Reading] = Field(default_factory=list)
    findings: list[Finding] = Field(default_factory=list)
    photos: list[Photo] = Field(default_factory=list)
    instruments: dict[str, Instrument] = Field(default_factory=dict)
    not_inspected: list[NotInspected] = Field(default_factory=list)
    #: The site's Wenner soil surveys, oldest first.
    surveys: list[SoilSurvey] = Field(default_factory=list)
    #: The site's geometry (roofs, LPS conductors, rooftop items); empty: none recorded.
    geometry: list[GeometryItem] = Field(default_factory=list)
