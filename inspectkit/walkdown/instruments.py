"""The instrument chosen for each kind of measurement, and which one a reading is taken with.

The choice is kept in the database's settings, so it outlasts the walkdown that made it.
"""

from __future__ import annotations

from inspectkit.model import (
    INSTRUMENT_METHODS,
    INSTRUMENT_QUANTITIES,
    Instrument,
    InstrumentKind,
    Method,
    Quantity,
)
from inspectkit.store import Store
from inspectkit.store.preferences import INSTRUMENT_SETTING
from inspectkit.walkdown.errors import WalkdownError

#: Setting of the one instrument chosen before kinds were recorded (any quantity).
ANY_INSTRUMENT_SETTING = INSTRUMENT_SETTING

#: Chosen instruments by kind; None: one whose kind is not recorded.
Chosen = dict[InstrumentKind | None, Instrument]


def instrument_setting(kind: InstrumentKind) -> str:
    """The setting that holds the chosen instrument of a kind."""
    return f"{ANY_INSTRUMENT_SETTING}.{kind.value}"


def chosen_instruments(store: Store) -> Chosen:
    """The instrument chosen for each kind of measurement, as kept in this database.

    An instrument chosen before kinds were recorded counts for its own kind, or, with
    none recorded, under None for any quantity no chosen kind measures.
    """
    chosen: Chosen = {}
    for kind in InstrumentKind:
        key = store.get_setting(instrument_setting(kind))
        instrument = store.get(Instrument, key) if key else None
        if instrument is not None:
            chosen[kind] = instrument
    key = store.get_setting(ANY_INSTRUMENT_SETTING)
    older = store.get(Instrument, key) if key else None
    if older is not None and older.kind not in chosen:
        chosen[older.kind] = older
    return chosen


def choose_instrument(store: Store, instrument_id: str) -> Instrument:
    """Make this instrument the one readings of its kind are taken with from now on.

    Raises:
        WalkdownError: no such instrument.
    """
    instrument = store.get(Instrument, instrument_id)
    if instrument is None:
        raise WalkdownError("instrument_id", f"no instrument with id {instrument_id}")
    if instrument.kind is None:
        store.set_setting(ANY_INSTRUMENT_SETTING, instrument.id)
    else:
        store.set_setting(instrument_setting(instrument.kind), instrument.id)
    return instrument


def instrument_for(chosen: Chosen, quantity: Quantity, method: Method) -> Instrument | None:
    """The chosen instrument whose kind measures this quantity by this method, if any.

    The usual method's instrument when none fits the method given; an instrument of
    no recorded kind when no kind fits at all (it is not judged).
    """
    fits = [
        chosen[kind]
        for kind in InstrumentKind
        if kind in chosen and quantity in INSTRUMENT_QUANTITIES[kind]
    ]
    exact = [i for i in fits if i.kind is not None and method in INSTRUMENT_METHODS[i.kind]]
    return next(iter(exact or fits), chosen.get(None))
