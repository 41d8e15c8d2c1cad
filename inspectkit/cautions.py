"""The safety cautions every user sees, from this one list.

Shown by the TUI at its first start (until acknowledged by an explicit choice), by
`inspectkit cautions`, once by the first command a person runs on a database, and
on every report; README.md's "Safety cautions" lists the same items
(`tests/test_cautions.py` checks that they agree).
"""

from __future__ import annotations

#: Heading shown above the cautions.
TITLE = "Safety cautions"

#: Each caution as one paragraph, in the order they are shown.
CAUTIONS: tuple[str, ...] = (
    "Storms: stop outdoor and rooftop work and testing when thunder is heard or lightning "
    "is seen (the 30/30 rule: thunder within 30 s of the flash means shelter; resume only "
    "30 minutes after the last thunder).",
    "Height: work on roofs only with the site's roof-access arrangements and fall "
    "protection. LPS conductors and air terminals are not anchor points.",
    "Test joints: an electrode disconnected at its test joint leaves that part of the "
    "structure unprotected and can carry fault current. Test one electrode at a time, do "
    "not touch electrodes, spikes or leads during a test, and reconnect every test joint "
    "before leaving.",
    "Readings: an earth reading depends on the soil's state (dry, wet, frozen) and on "
    "probe placement; record the soil state with every earth reading. A reading taken "
    "with an instrument past its calibration date proves nothing.",
    "Scope: inspectkit keeps records and applies the limits a user chose. It does not design "
    "a lightning protection system and does not certify compliance. Local codes, the "
    "authority having jurisdiction and licensed or accredited practice decide.",
)

#: The setting that records that the cautions were read on this database.
ACKNOWLEDGED_SETTING = "cautions_acknowledged"
#: The setting that records that a command has shown the cautions on this database.
SHOWN_BY_COMMAND_SETTING = "cautions_shown_by_command"


def cautions_text() -> str:
    """The cautions as plain text, one paragraph each, for screens and documents."""
    return "\n\n".join(f"- {caution}" for caution in CAUTIONS)
