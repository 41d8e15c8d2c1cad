"""How the terms relate: which quantities a component carries, which methods measure
a quantity, what an instrument kind measures, and in what order a site is walked.

Every way a reading comes in (the walkdown, `readings add`, CSV and bundle imports)
asks these tables, so a pairing refused in one is refused in all.
"""

from __future__ import annotations

from inspectkit.model.limits import MAX_COUNT, MAX_RESISTANCE_OHM, MAX_RESISTIVITY_OHM_M
from inspectkit.model.terms import ComponentKind, InstrumentKind, JointState, Method, Quantity

#: The order an inspector walks a site: roof first, then down the building, then
#: the ground-level test joints and what hangs off them.
WALKING_ORDER: tuple[ComponentKind, ...] = (
    ComponentKind.AIR_TERMINAL,
    ComponentKind.AIR_CONDUCTOR,
    ComponentKind.DOWN_CONDUCTOR,
    ComponentKind.TEST_JOINT,
    ComponentKind.EARTH_ELECTRODE,
    ComponentKind.BONDING,
    ComponentKind.SPD,
    ComponentKind.STRIKE_COUNTER,
)


#: Most a value of each quantity can plausibly be, in its SI unit.
QUANTITY_MAX: dict[Quantity, float] = {
    Quantity.EARTH_ISOLATED: MAX_RESISTANCE_OHM,
    Quantity.EARTH_COMBINED: MAX_RESISTANCE_OHM,
    Quantity.CONTINUITY: MAX_RESISTANCE_OHM,
    Quantity.BONDING: MAX_RESISTANCE_OHM,
    Quantity.SOIL_RESISTIVITY: MAX_RESISTIVITY_OHM_M,
    Quantity.STRIKE_COUNT: float(MAX_COUNT),
}

#: Which methods make sense for which quantity; anything else is refused.
METHODS_FOR: dict[Quantity, frozenset[Method]] = {
    Quantity.EARTH_ISOLATED: frozenset({Method.FALL_OF_POTENTIAL_3P, Method.FOUR_POLE}),
    # A clamp-on meter needs a parallel network: combined system only (common practice).
    Quantity.EARTH_COMBINED: frozenset(
        {Method.FALL_OF_POTENTIAL_3P, Method.FOUR_POLE, Method.CLAMP_ON}
    ),
    Quantity.CONTINUITY: frozenset({Method.LOW_OHM_2W, Method.LOW_OHM_4W}),
    Quantity.BONDING: frozenset({Method.LOW_OHM_2W, Method.LOW_OHM_4W}),
    Quantity.SOIL_RESISTIVITY: frozenset({Method.WENNER, Method.FOUR_POLE}),
    Quantity.STRIKE_COUNT: frozenset({Method.COUNTER_READ}),
}

#: The method assumed when none is chosen: the one most instruments in the trade use.
DEFAULT_METHOD: dict[Quantity, Method] = {
    Quantity.EARTH_ISOLATED: Method.FALL_OF_POTENTIAL_3P,
    Quantity.EARTH_COMBINED: Method.FALL_OF_POTENTIAL_3P,
    Quantity.CONTINUITY: Method.LOW_OHM_4W,
    Quantity.BONDING: Method.LOW_OHM_4W,
    Quantity.SOIL_RESISTIVITY: Method.WENNER,
    Quantity.STRIKE_COUNT: Method.COUNTER_READ,
}


#: The methods each kind of instrument works by (common practice): an earth tester
#: drives current through auxiliary probes, a low-resistance ohmmeter through leads,
#: a clamp meter induces it in a closed loop.
INSTRUMENT_METHODS: dict[InstrumentKind, frozenset[Method]] = {
    InstrumentKind.EARTH_TESTER: frozenset(
        {Method.FALL_OF_POTENTIAL_3P, Method.FOUR_POLE, Method.WENNER}
    ),
    InstrumentKind.LOW_OHMMETER: frozenset({Method.LOW_OHM_2W, Method.LOW_OHM_4W}),
    InstrumentKind.CLAMP_METER: frozenset({Method.CLAMP_ON}),
}

#: The quantities each kind of instrument measures: those its methods measure. A
#: strike counter is read by eye, with no instrument.
INSTRUMENT_QUANTITIES: dict[InstrumentKind, frozenset[Quantity]] = {
    kind: frozenset(q for q, ways in METHODS_FOR.items() if ways & methods)
    for kind, methods in INSTRUMENT_METHODS.items()
}


def instrument_misfit(
    kind: InstrumentKind | None, quantity: Quantity, method: Method, named: str
) -> str | None:
    """Why an instrument of this kind cannot have taken the reading, or None when it can.

    An instrument whose kind is not recorded is not judged.

    Args:
        named: How to call the instrument in the message (description and serial).
    """
    if kind is None:
        return None
    if quantity not in INSTRUMENT_QUANTITIES[kind]:
        fits = (
            ", ".join(k.label for k in InstrumentKind if quantity in INSTRUMENT_QUANTITIES[k])
            or "none (it is read by eye)"
        )
        return (
            f"{named} is a {kind.label} and does not measure {quantity.label}; "
            f"take it with an instrument of kind: {fits}"
        )
    if method not in INSTRUMENT_METHODS[kind]:
        ways = ", ".join(sorted(m.value for m in INSTRUMENT_METHODS[kind] & METHODS_FOR[quantity]))
        return (
            f"{named} is a {kind.label} and does not measure by {method.value}; "
            f"give the method it used: {ways}"
        )
    return None


#: The joint state an earth reading implies: isolated means the joint was opened.
JOINT_FOR: dict[Quantity, JointState] = {
    Quantity.EARTH_ISOLATED: JointState.OPEN,
    Quantity.EARTH_COMBINED: JointState.CLOSED,
}


#: What can be measured on each kind of component, in entry order. Soil resistivity is
#: optional at a test joint or electrode; air terminals and SPDs are judged by eye only.
#: A reading of any other quantity on a component is refused, whichever way it comes.
QUANTITIES_FOR: dict[ComponentKind, tuple[Quantity, ...]] = {
    ComponentKind.AIR_TERMINAL: (),
    ComponentKind.AIR_CONDUCTOR: (Quantity.CONTINUITY,),
    ComponentKind.DOWN_CONDUCTOR: (Quantity.CONTINUITY,),
    ComponentKind.TEST_JOINT: (
        Quantity.EARTH_ISOLATED,
        Quantity.EARTH_COMBINED,
        Quantity.SOIL_RESISTIVITY,
    ),
    ComponentKind.EARTH_ELECTRODE: (Quantity.EARTH_ISOLATED, Quantity.SOIL_RESISTIVITY),
    ComponentKind.BONDING: (Quantity.BONDING,),
    ComponentKind.SPD: (),
    ComponentKind.STRIKE_COUNTER: (Quantity.STRIKE_COUNT,),
}
