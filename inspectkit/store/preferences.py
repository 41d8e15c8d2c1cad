"""The few choices the TUI remembers, kept in the database so they travel with it."""

from __future__ import annotations

import json

from inspectkit.cautions import ACKNOWLEDGED_SETTING
from inspectkit.model import Inspector, Instrument
from inspectkit.store import Store

#: Setting keys, shared with the walkdown and the commands.
INSPECTOR_SETTING = "inspector_id"
INSTRUMENT_SETTING = "instrument_id"
#: Keys the user moved: a JSON object of binding id → key, e.g. {"app.findings": "f9"}.
KEYMAP_SETTING = "keymap"


class Preferences:
    """Typed access to the settings the screens share (`app.settings`).

    Reads go to the database every time, so a choice made on one screen is seen
    on the next without any cache to keep in step.
    """

    def __init__(self, store: Store) -> None:
        self.store = store

    @property
    def inspector_id(self) -> str | None:
        """The inspector whose name goes on new inspections (None once retired)."""
        return self._in_service(Inspector, self.store.get_setting(INSPECTOR_SETTING))

    @inspector_id.setter
    def inspector_id(self, value: str) -> None:
        self.store.set_setting(INSPECTOR_SETTING, value)

    @property
    def instrument_id(self) -> str | None:
        """The instrument readings are taken with unless the walkdown says otherwise."""
        return self._in_service(Instrument, self.store.get_setting(INSTRUMENT_SETTING))

    def _in_service(
        self, model: type[Inspector] | type[Instrument], chosen: str | None
    ) -> str | None:
        """The chosen id, unless that record is gone or retired since."""
        record = self.store.get(model, chosen) if chosen else None
        return chosen if record is not None and record.retired_on is None else None

    @instrument_id.setter
    def instrument_id(self, value: str) -> None:
        self.store.set_setting(INSTRUMENT_SETTING, value)

    @property
    def cautions_acknowledged(self) -> bool:
        """Whether the safety cautions were read on this database."""
        return self.store.get_setting(ACKNOWLEDGED_SETTING) == "yes"

    def acknowledge_cautions(self) -> None:
        self.store.set_setting(ACKNOWLEDGED_SETTING, "yes")

    @property
    def keymap(self) -> dict[str, str]:
        """The user's own keys by binding id; a malformed setting is ignored, not fatal."""
        text = self.store.get_setting(KEYMAP_SETTING)
        try:
            keymap = json.loads(text) if text else {}
        except json.JSONDecodeError:
            return {}
        if not isinstance(keymap, dict):
            return {}
        return {str(k): str(v) for k, v in keymap.items() if isinstance(v, str)}

    @property
    def inspector(self) -> Inspector | None:
        """The current inspector's record, if one is chosen and still exists."""
        key = self.inspector_id
        return self.store.get(Inspector, key) if key else None

    @property
    def instrument(self) -> Instrument | None:
        """The default instrument's record, if one is chosen and still exists."""
        key = self.instrument_id
        return self.store.get(Instrument, key) if key else None
