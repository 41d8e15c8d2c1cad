"""The order an inspector walks a site's components in, worked out from the components alone.

Pure: the walkdown reads the components from the store and hands them here.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from dataclasses import dataclass
from datetime import date
from typing import Any

from inspectkit.model import QUANTITIES_FOR, WALKING_ORDER, Component, ComponentKind, Quantity

#: Kinds walked under their parent (a down conductor's test joint, a joint's electrode).
_NESTED_KINDS = frozenset({ComponentKind.TEST_JOINT, ComponentKind.EARTH_ELECTRODE})


@dataclass(frozen=True)
class Stop:
    """One component on the walk, with how deep it sits under its down conductor.

    Attributes:
        component: The component to inspect here.
        depth: 0 for a component walked in its own right, 1 for a down conductor's
            test joint, 2 for that joint's electrode.
        quantities: What can be measured on it, in entry order.
    """

    component: Component
    depth: int
    quantities: tuple[Quantity, ...]


def tag_key(tag: str) -> tuple[Any, ...]:
    """`TJ-2` before `TJ-10`: numbers inside tags compare as numbers."""
    return tuple(int(p) if p.isdigit() else p for p in re.split(r"(\d+)", tag))


def walking_order(components: Iterable[Component], on: date | None = None) -> list[Stop]:
    """The components still in service, in the order an inspector walks them.

    Roof first (air terminals, then the mesh), then each down conductor followed by
    its test joints and each joint's electrodes, then anything of those kinds with no
    parent on the walk, then bonding, SPDs and strike counters; by tag within a kind.

    Args:
        components: The site's components; retired ones are left out.
        on: Leave out components retired on or before this day (default: any retired).
    """
    live = [c for c in components if c.retired_on is None or (on is not None and c.retired_on > on)]
    by_id = {c.id: c for c in live}
    children: dict[str, list[Component]] = {}
    roots = []
    for component in live:
        if component.kind in _NESTED_KINDS and component.parent_id in by_id:
            children.setdefault(component.parent_id, []).append(component)
        else:
            roots.append(component)

    def order(c: Component) -> tuple[Any, ...]:
        return (WALKING_ORDER.index(c.kind), tag_key(c.tag))

    stops: list[Stop] = []
    seen: set[str] = set()

    def visit(component: Component, depth: int) -> None:
        if component.id in seen:  # a parent loop in bad data must not hang the walk
            return
        seen.add(component.id)
        quantities = QUANTITIES_FOR[component.kind]
        if component.kind is ComponentKind.TEST_JOINT and any(
            c.kind is ComponentKind.EARTH_ELECTRODE for c in children.get(component.id, [])
        ):
            # The electrode below carries its own isolated reading; the joint, the system's.
            quantities = (Quantity.EARTH_COMBINED,)
        stops.append(Stop(component, depth, quantities))
        for child in sorted(children.get(component.id, []), key=order):
            visit(child, depth + 1)

    for root in sorted(roots, key=order):
        visit(root, 0)
    return stops
