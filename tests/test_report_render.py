"""Rendering: every value, limit and result in the text; pages, photos, charts; site details."""

from __future__ import annotations

import io
from dataclasses import replace
from datetime import date
from pathlib import Path

import pytest
from pypdf import PdfReader
from reportlab import rl_config
from test_report_factory import Built, _jpeg, build_site

from inspectkit.cautions import CAUTIONS
from inspectkit.model import Inspection, Site
from inspectkit.report.branding import BrandingError, load_branding
from inspectkit.report.content import CHANGES_TITLE, Field, ReadingRow, text_sections
from inspectkit.report.gather import build_report
from inspectkit.report.photos import downscale
from inspectkit.report.render import render_report
from inspectkit.store import Store
from inspectkit.units import format_value


@pytest.fixture(autouse=True)
def _invariant(monkeypatch: pytest.MonkeyPatch) -> None:
    """Reproducible bytes: no creation dates or random ids in the PDF."""
    monkeypatch.setattr(rl_config, "invariant", 1)


@pytest.fixture
def built(tmp_path: Path):
    store = Store.open(tmp_path / "db.sqlite")
    yield store, build_site(store, tmp_path)
    store.close()


def _text(data: bytes) -> tuple[PdfReader, list[str]]:
    reader = PdfReader(io.BytesIO(data))
    return reader, [" ".join(page.extract_text().split()) for page in reader.pages]


def test_every_reading_value_limit_and_result_is_in_the_text(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    reader, pages = _text(render_report(content, load_branding()).data)
    text = " ".join(pages)
    assert len(content.readings) == len(made.readings) == 6
    for reading in made.readings:
        row = next(r for r in content.readings if r.reading_id == reading.id)
        # The value as units.format_value writes it, e.g. "350 mΩ" (Ω must survive the font).
        assert format_value(reading.value, reading.quantity) in text
        assert row.limit in text
        assert row.result.split(":")[0] in text
    # Judged by the engine against the iec-62305-3 profile: continuity ≤ 0.2 Ω and
    # isolated electrode ≤ 10 Ω (the profile's own sources are in its file).
    results = {r.tag + " " + r.quantity: r.result for r in content.readings}
    assert results["DC-02 continuity"].startswith("FAIL")
    assert results["DC-01 continuity"] == "PASS"
    assert results["E-02 earth resistance, electrode isolated"].startswith("FAIL")
    assert results["E-01 earth resistance, electrode isolated"].startswith("WATCH")
    assert "≤ 10 Ω" in text and "≤ 200 mΩ" in text
    assert "Zoë Ångström-Müller" in text and "Müllerhof Granary" in text
    assert content.verdict_word in text


def test_pages_footers_cautions_and_deferral(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    rendered = render_report(content, load_branding())
    reader, pages = _text(rendered.data)
    assert rendered.pages == len(reader.pages) >= 4
    for number, page in enumerate(pages, start=1):
        assert f"page {number} of {len(pages)}" in page
        assert made.current.id in page and "Müllerhof Granary" in page
        assert "revision 1" in page
    text = " ".join(pages)
    for caution in CAUTIONS:
        assert " ".join(caution.split())[:60] in text
    assert "Local codes, the authority having jurisdiction" in text
    assert "Roof over the kiln: no safe access." in text
    assert "Kestrelmoor Lightning Maintenance" in text


def test_photos_and_charts_are_in_the_pdf(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    reader, pages = _text(render_report(content, load_branding()).data)
    images = sum(len(page.images) for page in reader.pages)
    assert images == len(made.photo_ids) == 2
    text = " ".join(pages)
    assert "View 1 of the north façade" in text
    # Both electrodes have three readings: a trend chart each. E-02 is above its limit
    # already (12.4 Ω against 10 Ω), so it gets no forecast crossing, only since when.
    assert {t.tag for t in content.trends} == {"E-01", "E-02"}
    assert "E-01: earth resistance (Ω)" in text and "E-02: earth resistance (Ω)" in text
    (e02,) = [t for t in content.trends if t.tag == "E-02"]
    assert e02.crossing is None and "above the 10 Ω limit since about" in e02.summary


def test_photo_choice_leaves_the_others_out(built) -> None:
    store, made = built
    content = build_report(store, made.current.id).without_photos({made.photo_ids[1]})
    reader, _ = _text(render_report(content, load_branding()).data)
    assert sum(len(page.images) for page in reader.pages) == 1


def test_same_content_gives_the_same_bytes(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    assert (
        render_report(content, load_branding()).data == render_report(content, load_branding()).data
    )


def test_long_tables_split_with_the_header_repeated(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    row = content.readings[0]
    many = tuple(replace(row, reading_id=str(n), tag=f"ZZ-{n:02d}") for n in range(90))
    _, pages = _text(render_report(replace(content, readings=many), load_branding()).data)
    with_rows = [p for p in pages if "ZZ-" in p]
    assert len(with_rows) >= 2
    for page in with_rows:
        assert "Quantity, method" in page  # the header row again on every page of the table
    assert all(f"ZZ-{n:02d}" in " ".join(pages) for n in range(90))


def test_photos_are_upright_and_small(tmp_path: Path) -> None:
    # EXIF orientation 6 = rotate 90° clockwise to display (EXIF 2.3, tag 0x0112).
    path = _jpeg(tmp_path / "big.jpg", (4000, 3000), orientation=6)
    small = downscale(path)
    assert (small.width, small.height) == (750, 1000)
    assert len(small.data) < 400_000


def test_branding_errors_name_the_field(tmp_path: Path) -> None:
    path = tmp_path / "report.toml"
    path.write_text('[contractor]\nname = "X"\n[colours]\nprimary = "blue"\n', encoding="utf-8")
    with pytest.raises(BrandingError, match="colours.primary"):
        load_branding(path)
    path.write_text('[contractor]\nname = ""\n', encoding="utf-8")
    with pytest.raises(BrandingError, match="contractor.name"):
        load_branding(path)


def test_a_hand_built_report_renders_without_a_store(built) -> None:
    store, made = built
    content = replace(
        build_report(store, made.current.id),
        readings=(
            ReadingRow(
                "r",
                "SPD-01",
                "surge protective device",
                "bonding resistance",
                "low-ohm, 4-wire",
                "0.9 Ω",
                "≤ 1 Ω",
                "PASS",
            ),
        ),
        site=(Field("Client", "Ærø Ølstue"),),
        inspection_date=date(2026, 1, 2),
    )
    _, pages = _text(render_report(content, load_branding()).data)
    assert "Ærø Ølstue" in " ".join(pages) and "SPD-01" in " ".join(pages)


# ------------------------------------------------ the site's and the visit's details

SITE_DETAILS = {
    "installer": "Wexcombe Earthing Works",
    "installed_year": 2019,
    "built_year": 1957,
    "use": "grain store",
    "construction": "steel portal frame, sheet cladding",
    "roofing": "pitched fibre-cement sheet",
    "design_standard": "IEC 62305-3:2010",
    "air_termination": "ridge conductor with air rods at both gables",
    "earthing_arrangement": "A",
}
VISIT_DETAILS = {
    "accompanied_by": "Ulrike Sæbø, farm manager",
    "changes_since_last": "New grain dryer on the north gable since the last visit, not yet bonded",
    "notes": "Keys to the roof hatch from the farm office",
}


def _joined_text(data: bytes) -> str:
    return " ".join(_text(data)[1])


def _fill(store: Store, made: Built) -> None:
    store.save(Site.model_validate({**made.site.model_dump(), **SITE_DETAILS}))
    visit = store.get(Inspection, made.current.id)
    store.save(Inspection.model_validate({**visit.model_dump(), **VISIT_DETAILS}))


def test_site_details_and_visit_details_are_in_the_pdf(built) -> None:
    store, made = built
    _fill(store, made)
    text = _joined_text(render_report(build_report(store, made.current.id), load_branding()).data)
    for value in SITE_DETAILS.values():
        if value != "A":
            assert str(value) in text, value
    # Type A: a rod or plate at each down conductor (IEC 62305-3, 5.4.2.1).
    assert "type A: a rod or plate electrode at each down conductor" in text
    assert "Down conductors 2" in text
    assert "Accompanied by Ulrike Sæbø, farm manager" in text
    assert "Notes Keys to the roof hatch from the farm office" in text
    assert f"{CHANGES_TITLE} {VISIT_DETAILS['changes_since_last']}" in text
    # The site and its protection system: the general part first, then the system.
    assert text.index("The site and its protection system") < text.index("LPS installed by")
    assert text.index("Designed to IEC 62305-3:2010") < text.index("Earthing arrangement")


def test_changes_paragraph_only_when_there_are_changes(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    assert content.changes_since_last == ""
    assert CHANGES_TITLE not in _joined_text(render_report(content, load_branding()).data)
    assert CHANGES_TITLE not in [s.title for s in text_sections(content)]


def test_plain_text_sections_carry_the_details(built) -> None:
    store, made = built
    _fill(store, made)
    sections = {s.title: s.lines for s in text_sections(build_report(store, made.current.id))}
    assert "Use: grain store" in sections["Site"]
    arrangement = "Earthing arrangement: type A: a rod or plate electrode at each down conductor"
    assert arrangement in sections["Site"]
    assert "Accompanied by: Ulrike Sæbø, farm manager" in sections["Inspection"]
    assert "Notes: Keys to the roof hatch from the farm office" in sections["Inspection"]
    assert sections[CHANGES_TITLE] == (VISIT_DETAILS["changes_since_last"],)


def test_first_page_gives_the_result_what_to_do_by_when_and_the_visits(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    _, pages = _text(render_report(content, load_branding()).data)
    first = pages[0]
    assert "ACTION NEEDED" in first and "What to do, by when" in first
    # The TJ-02 defect graded at this visit fails now; its date is advice.
    defect = next(a for a in content.actions if a.tag == "TJ-02")
    assert defect.result == "FAIL" and defect.when == "now (advised by 2026-12-15)"
    assert defect.when in first
    assert "Visits this needs" in first and "1 return visit as soon as possible" in first
    assert "next complete inspection by" in first


def test_sound_components_are_a_compact_table_and_the_summary_counts_actions(built) -> None:
    store, made = built
    content = build_report(store, made.current.id)
    assert [(r.tag, r.remark) for r in content.sound] == [("AT-01", "Upright and secure")]
    assert [f.tag for f in content.findings] == ["TJ-02"]  # only what to act on
    assert content.findings[0].priority.startswith("Priority 1")
    assert content.headline[0].startswith(f"{len(content.actions)} actions: ")
    assert "1 finding to act on (1 defect); 1 component found sound" in content.headline
    _, pages = _text(render_report(content, load_branding()).data)
    text = " ".join(pages)
    assert "Components found sound" in text and "sound: Upright and secure" in text
    assert "SOUND — No remark" not in text and "Priority 1: defects" in text


def test_the_report_explains_every_result_word(built) -> None:
    from inspectkit.engine.results import SEVERITY_WORDS

    store, made = built
    content = build_report(store, made.current.id)
    _, pages = _text(render_report(content, load_branding()).data)
    text = " ".join(pages)
    assert "What the result words mean" in text
    for word in SEVERITY_WORDS.values():
        assert word.shout in text and " ".join(word.meaning.split()[:4]) in text


def test_the_soil_printed_is_the_one_recorded_with_the_readings(built) -> None:
    from inspectkit.model import Quantity, SoilCondition

    store, made = built
    kinds = (Quantity.EARTH_ISOLATED, Quantity.EARTH_COMBINED, Quantity.SOIL_RESISTIVITY)
    earth = [r for r in made.readings if r.quantity in kinds]
    # Soil recorded with every earth reading (common practice): said once for the visit.
    for reading in earth:
        store.save(reading.model_copy(update={"soil": SoilCondition.WET}))
    content = build_report(store, made.current.id)
    soil = next(f.value for f in content.inspection if f.label == "Soil")
    assert soil == "wet (recorded with every earth reading)"
    assert all(r.soil == "" for r in content.readings)
    # Where they differ, the visit's line counts them and each reading says its own.
    store.save(earth[0].model_copy(update={"soil": SoilCondition.DRY}))
    content = build_report(store, made.current.id)
    soil = next(f.value for f in content.inspection if f.label == "Soil")
    assert soil == f"differs by reading: {len(earth) - 1} wet, 1 dry; see each reading"
    by_id = {r.reading_id: r.soil for r in content.readings}
    assert by_id[earth[0].id] == "dry" and by_id[earth[1].id] == "wet"
    _, pages = _text(render_report(content, load_branding()).data)
    assert "soil dry" in " ".join(pages)
