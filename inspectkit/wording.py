"""Small grammar for generated sentences: "an earth electrode", "1 record was", "3 readings"."""

from __future__ import annotations

#: Words spelt with a leading vowel letter that are said with a consonant sound, and
#: the reverse ("an LPS", "an SPD"): the few the trade's sentences meet.
_SAID_WITH_CONSONANT = ("uni", "usa", "use", "usu", "one", "eu")
_SAID_WITH_VOWEL = ("hour", "honest", "lps", "spd", "rcd")


def article(phrase: str) -> str:
    """ "a" or "an" for the phrase, judged by its first word as it is said."""
    first = phrase.strip().split(" ", 1)[0].lower()
    if first.startswith(_SAID_WITH_VOWEL):
        return "an"
    if first.startswith(_SAID_WITH_CONSONANT):
        return "a"
    return "an" if first[:1] in set("aeiou") else "a"


def with_article(phrase: str) -> str:
    """The phrase after its article: "an air terminal", "a test joint"."""
    return f"{article(phrase)} {phrase}"


def plural(count: int, noun: str, many: str | None = None) -> str:
    """The noun for that many: "reading" for 1, "readings" otherwise (or `many`)."""
    return noun if count == 1 else (many or f"{noun}s")


def counted(count: int, noun: str, many: str | None = None) -> str:
    """ "1 reading", "3 readings", "0 readings"."""
    return f"{count} {plural(count, noun, many)}"


def was_were(count: int) -> str:
    """The verb that agrees with a count: "1 record was", "2 records were"."""
    return "was" if count == 1 else "were"
