"""A demo site's lightning protection system: its tagged parts and what each typically reads.

Tags follow what is painted on site (AT-01, DC-01, TJ-01, E-01 …); each down
conductor has a test joint and an electrode below it, so the parent links run
electrode → test joint → down conductor as the trade wires them.
"""

from __future__ import annotations

import random
from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import date
from typing import Any

from inspectkit.demo.scenario import ScenarioError, SiteSpec
from inspectkit.model import Component, ComponentKind, ElectrodeType

_COMPASS = (
    "north",
    "north-east",
    "east",
    "south-east",
    "south",
    "south-west",
    "west",
    "north-west",
)
_ELECTRODE_MATERIAL = {
    ElectrodeType.ROD: "copper-bonded steel rods, coupled, driven 6 m",
    ElectrodeType.PLATE: "copper plate 600 × 600 mm",
    ElectrodeType.RING: "copper tape ring 25 × 3 mm",
    ElectrodeType.FOUNDATION: "foundation steel",
}
#: Typical continuity of a down conductor run and resistance of a bond, in Ω (invented).
_CONTINUITY_OHMS = (0.02, 0.09)
_BONDING_OHMS = (0.01, 0.25)


@dataclass
class System:
    """The parts of one site's LPS, and each part's value in normal conditions (Ω)."""

    components: list[Component] = field(default_factory=list)
    typical: dict[str, float] = field(default_factory=dict)

    def of_kind(self, kind: ComponentKind) -> list[Component]:
        return [c for c in self.components if c.kind is kind]

    def tagged(self, tag: str) -> Component:
        """The part with that tag.

        Raises:
            ScenarioError: the scenario names a tag the site does not have.
        """
        for component in self.components:
            if component.tag == tag.upper():
                return component
        raise ScenarioError(f"no part tagged {tag!r}; the counts in the scenario make no such tag")

    def child(self, parent: Component) -> Component:
        """The test joint below a down conductor, or the electrode below a test joint."""
        kind = {
            ComponentKind.DOWN_CONDUCTOR: ComponentKind.TEST_JOINT,
            ComponentKind.TEST_JOINT: ComponentKind.EARTH_ELECTRODE,
        }[parent.kind]
        return next(c for c in self.of_kind(kind) if c.parent_id == parent.id)

    def parent(self, component: Component) -> Component:
        return next(c for c in self.components if c.id == component.parent_id)


def lay_out(
    spec: SiteSpec,
    site_id: str,
    installed_on: date,
    stamps: dict[str, Any],
    new_id: Callable[[], str],
    rng: random.Random,
) -> System:
    """Every part the scenario counts for the site, in walking order."""
    system = System()

    def add(
        kind: ComponentKind, tag: str, location: str, material: str, parent: str | None = None
    ) -> Component:
        component = Component(
            id=new_id(),
            site_id=site_id,
            kind=kind,
            tag=tag,
            location=location,
            material=material,
            installed_on=installed_on,
            parent_id=parent,
            electrode_type=spec.electrode if kind is ComponentKind.EARTH_ELECTRODE else None,
            **stamps,
        )
        system.components.append(component)
        return component

    for n in range(1, spec.air_terminals + 1):
        side = _COMPASS[(n - 1) % len(_COMPASS)]
        add(ComponentKind.AIR_TERMINAL, f"AT-{n:02d}", f"roof, {side} side", "aluminium rod 16 mm")
    for n in range(1, spec.mesh_conductors + 1):
        add(ComponentKind.AIR_CONDUCTOR, f"AC-{n:02d}", f"roof mesh, run {n}", "aluminium 8 mm")
    low, high = spec.earth_ohms
    for n in range(1, spec.down_conductors + 1):
        side = _COMPASS[(n - 1) * len(_COMPASS) // spec.down_conductors]
        down = add(
            ComponentKind.DOWN_CONDUCTOR,
            f"DC-{n:02d}",
            f"{side} elevation",
            "copper tape 25 × 3 mm",
        )
        joint = add(
            ComponentKind.TEST_JOINT,
            f"TJ-{n:02d}",
            f"{side} elevation, 0.5 m above ground",
            "gunmetal test clamp",
            down.id,
        )
        electrode = add(
            ComponentKind.EARTH_ELECTRODE,
            f"E-{n:02d}",
            f"below TJ-{n:02d}, inspection pit",
            _ELECTRODE_MATERIAL[spec.electrode],
            joint.id,
        )
        system.typical[electrode.id] = rng.uniform(low, high)
        system.typical[down.id] = rng.uniform(*_CONTINUITY_OHMS)
    for n, what in enumerate(spec.bonding, start=1):
        bond = add(ComponentKind.BONDING, f"BD-{n:02d}", what, "copper braid 50 mm²")
        system.typical[bond.id] = rng.uniform(*_BONDING_OHMS)
    for n in range(1, spec.spds + 1):
        add(ComponentKind.SPD, f"SPD-{n:02d}", f"distribution board {n}", "type 1+2")
    for n, down_tag in enumerate(spec.strike_counters, start=1):
        add(
            ComponentKind.STRIKE_COUNTER,
            f"SC-{n:02d}",
            f"on {down_tag}, 2 m above ground",
            "impulse counter",
            system.tagged(down_tag).id,
        )
    return system
