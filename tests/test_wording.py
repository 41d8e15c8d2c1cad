"""Generated sentences use the right article and number."""

from __future__ import annotations

import pytest

from inspectkit.wording import article, counted, was_were, with_article


@pytest.mark.parametrize(
    ("phrase", "expected"),
    [
        ("earth resistance, electrode isolated", "an"),
        ("air terminal", "an"),
        ("equipotential bond", "an"),
        ("test joint", "a"),
        ("down conductor", "a"),
        ("SPD", "an"),
        ("usable reading", "a"),
        ("hour", "an"),
    ],
)
def test_article(phrase, expected):
    assert article(phrase) == expected


def test_counts_and_verbs_agree():
    assert counted(1, "record") == "1 record" and was_were(1) == "was"
    assert counted(2, "record") == "2 records" and was_were(2) == "were"
    assert counted(0, "reading") == "0 readings"
    assert with_article("air terminal") == "an air terminal"
