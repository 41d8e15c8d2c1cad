"""Validation of the vocabulary: bad input is refused with the field named and a fix."""

from __future__ import annotations

import uuid
from datetime import UTC, date, datetime, timedelta

import pytest
from pydantic import ValidationError

from inspectkit.model import (
    Component,
    ComponentKind,
    EarthingArrangement,
    Finding,
    Inspection,
    InspectionKind,
    ProtectionLevel,
    Quantity,
    Reading,
    Site,
    explain,
    new_ids,
)

NOW = datetime(2026, 6, 1, 12, 0, tzinfo=UTC)


def reading(**changes: object) -> dict[str, object]:
    data: dict[str, object] = {
        "inspection_id": "i",
        "component_id": "c",
        "quantity": "earth_isolated",
        "value": 4.2,
        "method": "fall_of_potential_3p",
        "joint_state": "open",
        "taken_at": NOW - timedelta(hours=1),
    }
    data.update(changes)
    return data


def message(model: type, data: dict[str, object]) -> str:
    with pytest.raises(ValidationError) as caught:
        model.model_validate(data, context={"now": NOW})
    return explain(caught.value)


def test_a_good_reading_validates() -> None:
    got = Reading.model_validate(reading(), context={"now": NOW})
    assert got.quantity is Quantity.EARTH_ISOLATED
    assert got.value == 4.2


@pytest.mark.parametrize(
    ("changes", "expected"),
    [
        ({"value": -0.5}, "negative"),
        ({"value": 5e7}, "not plausible"),
        ({"value": None}, "value is missing"),
        ({"taken_at": NOW + timedelta(days=2)}, "later than now"),
        ({"quantity": "voltage"}, "not a known quantity"),
        ({"method": "clamp_on"}, "does not measure"),
        ({"joint_state": "closed"}, "needs the test joint open"),
        (
            {
                "quantity": "strike_count",
                "method": "counter_read",
                "value": 3.5,
                "joint_state": None,
            },
            "whole number",
        ),
    ],
)
def test_bad_readings_name_the_problem(changes: dict[str, object], expected: str) -> None:
    assert expected in message(Reading, reading(**changes))


def test_small_clock_skew_is_allowed() -> None:
    Reading.model_validate(reading(taken_at=NOW + timedelta(hours=2)), context={"now": NOW})


def test_over_range_reading_keeps_its_bound() -> None:
    got = Reading.model_validate(reading(value=2000.0, over_range=True), context={"now": NOW})
    assert got.over_range and got.value == 2000.0
    unbounded = Reading.model_validate(reading(value=None, over_range=True), context={"now": NOW})
    assert unbounded.value is None


def test_unknown_kind_lists_the_known_ones() -> None:
    text = message(Component, {"site_id": "s", "kind": "lightning rod thing", "tag": "AT-1"})
    assert text.startswith("kind:")
    assert "air_terminal" in text


def test_kind_accepts_words_with_spaces() -> None:
    assert Component(site_id="s", kind="Test Joint", tag=" tj-03 ").kind is ComponentKind.TEST_JOINT


def test_tag_is_normalised() -> None:
    assert Component(site_id="s", kind="test_joint", tag=" tj-03 ").tag == "TJ-03"


@pytest.mark.parametrize("level", ["V", "0", 5, "five"])
def test_protection_level_outside_i_to_iv(level: object) -> None:
    text = message(Site, {"name": "Mill", "protection_level": level})
    assert "protection_level" in text and "I, II, III or IV" in text


@pytest.mark.parametrize(("given", "level"), [("ii", ProtectionLevel.II), (3, ProtectionLevel.III)])
def test_protection_level_spellings(given: object, level: ProtectionLevel) -> None:
    assert Site(name="Mill", protection_level=given).protection_level is level


@pytest.mark.parametrize(
    ("field", "value", "expected"),
    [("latitude", 91.0, "latitude runs from -90 to 90"), ("longitude", -181.0, "longitude runs")],
)
def test_coordinates_out_of_range(field: str, value: float, expected: str) -> None:
    data = {"name": "Mill", "protection_level": "I", "latitude": 10.0, "longitude": 10.0}
    data[field] = value
    text = message(Site, data)
    assert text.startswith(field) and expected in text


def test_latitude_without_longitude() -> None:
    assert "go together" in message(
        Site, {"name": "Mill", "protection_level": "I", "latitude": 1.0}
    )


@pytest.mark.parametrize(
    ("field", "value"), [("built_year", 1799), ("installed_year", 2028), ("built_year", 26)]
)
def test_implausible_years_name_the_field(field: str, value: int) -> None:
    text = message(Site, {"name": "Mill", "protection_level": "I", field: value})
    assert text.startswith(f"{field}: {value} is not a plausible year")
    assert "1800 to 2027" in text, "the range runs to next year of the clock given"


def test_plausible_years_and_old_records_without_them() -> None:
    data = {"name": "Mill", "protection_level": "I"}
    site = Site.model_validate(
        {**data, "built_year": 1800, "installed_year": 2027}, context={"now": NOW}
    )
    assert (site.built_year, site.installed_year) == (1800, 2027)
    bare = Site.model_validate(data)
    assert (bare.installer, bare.built_year, bare.earthing_arrangement) == ("", None, None)


@pytest.mark.parametrize(
    ("given", "arrangement"),
    [
        ("A", EarthingArrangement.A),
        ("b", EarthingArrangement.B),
        ("type B", EarthingArrangement.B),
        ("", None),
    ],
)
def test_earthing_arrangement_spellings(given: str, arrangement: EarthingArrangement) -> None:
    site = Site(name="Mill", protection_level="I", earthing_arrangement=given)
    assert site.earthing_arrangement is arrangement


def test_unknown_earthing_arrangement_says_what_a_and_b_are() -> None:
    text = message(Site, {"name": "Mill", "protection_level": "I", "earthing_arrangement": "C"})
    assert text.startswith("earthing_arrangement: 'C' is not an earthing arrangement")
    assert "A (a rod or plate at each down conductor) or B" in text


def test_inspection_in_the_future_is_refused() -> None:
    text = message(Inspection, {"site_id": "s", "kind": "visual", "date": date(2026, 6, 3)})
    assert text.startswith("date:") and "future" in text


def test_amendment_must_name_the_original() -> None:
    text = message(
        Inspection, {"site_id": "s", "kind": InspectionKind.AMENDMENT, "date": date(2026, 5, 1)}
    )
    assert "amends_id" in text


def test_a_defect_needs_words() -> None:
    assert "say what was found" in message(Finding, {"inspection_id": "i", "grade": "defect"})


def test_unknown_fields_are_refused() -> None:
    assert "colour" in message(Site, {"name": "Mill", "protection_level": "I", "colour": "red"})


def test_ids_must_be_uuids() -> None:
    assert "UUID" in message(Site, {"id": "site-1", "name": "Mill", "protection_level": "I"})


@pytest.mark.parametrize("count", [0, 1, 2, 1000])
def test_keys_made_in_bulk_are_random_uuid4s_as_the_stdlib_reads_them(count):
    """Version 4 and the RFC 4122 variant (RFC 4122 §4.4), checked with the `uuid` module."""
    keys = new_ids(count)
    assert len(keys) == len(set(keys)) == count
    for key in keys:
        parsed = uuid.UUID(key)
        assert (parsed.version, parsed.variant, str(parsed)) == (4, uuid.RFC_4122, key)
