"""The bounds a record's values are held to: beyond them a value is a typing slip.

They are figures of our own or of common practice, each said beside it; a profile's
limits (what passes an inspection) are another thing and live in the profiles.
"""

from __future__ import annotations

from datetime import timedelta

#: A reading may carry a time this far past the laptop's clock before it is refused:
#: instrument clocks and laptop clocks drift apart, and time zones get mixed up.
CLOCK_SKEW = timedelta(hours=12)
#: Longest name of a site, an inspector or a client (our default).
NAME_MAX = 200
#: Longest free-text notes on a site or an inspection (our default: a few pages).
NOTES_MAX = 10_000
#: Largest seal: about 100 characters per record an inspection holds (our default).
SEAL_MAX = 4_000_000

#: Above this an earth, continuity or bonding resistance is not a resistance an
#: instrument shows but a typing slip (our default).
MAX_RESISTANCE_OHM = 1.0e6
#: Highest plausible soil resistivity; rock and dry sand reach 10⁴ Ω·m (common practice).
MAX_RESISTIVITY_OHM_M = 1.0e6
#: Strike counters are six-digit at most (common practice).
MAX_COUNT = 999_999
#: Longest earth electrode, or ring radius, accepted in m: more is a typing slip (our default).
MAX_ELECTRODE_M = 1000.0
#: Widest rod accepted in m; a rod is far thinner than this (our default).
MAX_ROD_DIAMETER_M = 0.2

#: Oldest year a structure or an LPS on it may be given as built or installed.
EARLIEST_YEAR = 1800
