"""The safety cautions every user sees: on the TUI's first start, in reports and the README."""

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
    "Scope: inspectkit keeps records and applies the limits a user chose. It does not design "
    "a lightning protection system and does not certify compliance. Local codes, the "
    "authority having jurisdiction and licensed or accredited practice decide.",
)

#: The setting that records that the cautions were read on this database.
ACKNOWLEDGED_SETTING = "cautions_acknowledged"


def cautions_text() -> str:
    """The cautions as plain text, one paragraph each, for screens and documents."""
    return "\n\n".join(f"- {caution}" for caution in CAUTIONS)
