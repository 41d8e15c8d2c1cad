"""The report's earthing section on the demo: surveys, electrode lengths against l1, traverses."""

from __future__ import annotations

import io
from datetime import date
from pathlib import Path

import pytest
from pypdf import PdfReader
from reportlab import rl_config

from inspectkit.demo.generate import build_demo
from inspectkit.model import Inspection, InspectionKind, Site
from inspectkit.report.branding import load_branding
from inspectkit.report.content import text_sections
from inspectkit.report.gather import build_report
from inspectkit.report.render import render_report
from inspectkit.store import Store

ANCHOR = date(2026, 6, 1)


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return build_demo(tmp_path_factory.mktemp("demo") / "demo.sqlite", ANCHOR)


def latest_complete(store: Store, site_start: str) -> Inspection:
    site = store.select(Site, "name LIKE ?", [f"{site_start}%"])[0]
    visits = store.select(Inspection, "site_id = ? AND kind = ?",
                          [site.id, InspectionKind.COMPLETE.value], order_by="date")  # fmt: skip
    return visits[-1]


def pdf_text(data: bytes) -> str:
    return " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(data)).pages)


def test_the_section_holds_the_survey_the_short_electrode_and_the_traverse(demo: Path) -> None:
    with Store.open(demo, create=False) as store:
        content = build_report(store, latest_complete(store, "Aldermere").id)
    earthing = content.earthing
    assert earthing is not None
    assert earthing.design == "41 Ω·m (highest of the survey, 2025-04-07)"
    (survey,) = earthing.surveys
    assert [a for a, *_ in survey.rows] == [1.0, 2.0, 4.0, 8.0, 16.0]
    assert survey.message.startswith("layered")
    # IEC 62305-3 5.4.2.1 (as quoted) with l1 = 5 m for level II below 800 Ω·m
    # (Figure 2, from memory): a vertical rod needs 2.5 m; E-04 has 2 m.
    e04 = next(row for row in earthing.electrodes if row[0] == "E-04")
    assert e04[1:5] == ("type A, vertical", "length 2 m", "2.5 m (l1 5 m)", "short")
    (curve,) = earthing.traverses
    assert curve.tag == "E-02" and "on the plateau" in curve.verdict
    assert 61.8 in [round(p, 1) for p, _ in curve.points]
    earthing_lines = next(s for s in text_sections(content) if s.title == "Earthing").lines
    assert any("E-04 type A, vertical: length 2 m against 2.5 m (l1 5 m): short" in line
               for line in earthing_lines)  # fmt: skip


def test_the_section_renders_with_its_charts(demo: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(rl_config, "invariant", 1)
    with Store.open(demo, create=False) as store:
        content = build_report(store, latest_complete(store, "Eskfold").id)
    text = pdf_text(render_report(content, load_branding()).data)
    assert "Earthing Design soil resistivity: 19.6 Ω·m" in text
    assert "Soil resistivity (Wenner, IEEE Std 81)" in text
    assert "uniform: rho from 17.5 Ω·m at 1 m to 19.6 Ω·m at 16 m" in text
    assert "Electrodes against the minimum length l1" in text
    assert "E-01: R (Ω) against P (% of E–C, C at 60 m)" in text
    assert "61.8 %" in text


def test_a_site_without_earthing_records_has_no_section(demo: Path) -> None:
    with Store.open(demo, create=False) as store:
        content = build_report(store, latest_complete(store, "Pellow").id)
    assert content.earthing is None
    assert "Earthing" not in [s.title for s in text_sections(content)]
