"""What judging a site's geometry returns: a verdict per rooftop item and per system check,
for the site screen, the report and the `conformity` rule.
"""

from __future__ import annotations

from dataclasses import dataclass

from inspectkit.engine.rolling_sphere import ENVELOPE_TOLERANCE_M
from inspectkit.engine.rooftop_protection import TOP_SPACING_M, Protection
from inspectkit.engine.rooftop_separation import Separation
from inspectkit.geometry_model import GeometryItem
from inspectkit.model import ProtectionLevel, Severity


@dataclass(frozen=True)
class Verdict:
    """One judged thing: a rooftop item, or a system check (mesh, down conductors).

    Attributes:
        tag: the item's or roof's tag, or "DC" for the down-conductor count.
        severity: ok, watch or fail.
        message: what was found and what to do, in one or two sentences.
        value, limit, unit: the figure judged and what it was judged against.
    """

    tag: str
    severity: Severity
    message: str
    value: float | None = None
    limit: float | None = None
    unit: str | None = None
    item: GeometryItem | None = None
    protection: Protection | None = None
    separation: Separation | None = None


@dataclass(frozen=True)
class Conformity:
    """A site's geometry judged against its protection level."""

    level: ProtectionLevel
    radius_m: float
    items: tuple[Verdict, ...]
    system: tuple[Verdict, ...]
    recorded: bool

    @property
    def resolution(self) -> str:
        """How exact the numerical test is, for the screen and the report."""
        return (
            f"rolling sphere r = {self.radius_m:g} m (IEC 62305-3 Table 2); protected volume's "
            f"edge bracketed within {ENVELOPE_TOLERANCE_M * 100:g} cm at points of each item's "
            f"top up to {TOP_SPACING_M:g} m apart, judged on the low side"
        )
