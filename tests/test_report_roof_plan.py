"""The report's roof plan page, on the demo sites that have geometry."""

from __future__ import annotations

import io
from datetime import date
from pathlib import Path

import pytest
from pypdf import PdfReader
from reportlab.graphics.shapes import String

from inspectkit.demo.generate import build_demo
from inspectkit.model import Site
from inspectkit.report.branding import load_branding
from inspectkit.report.gather import build_report, latest_inspection
from inspectkit.report.render import render_report
from inspectkit.report.roof_plan import plan_drawing
from inspectkit.store import Store
from inspectkit.store.queries import find_site

ANCHOR = date(2026, 12, 1)


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return build_demo(tmp_path_factory.mktemp("demo") / "demo.sqlite", ANCHOR)


def _content(demo: Path, name: str):
    with Store.open(demo, create=False) as store:
        site = find_site(store, name)
        assert isinstance(site, Site)
        inspection = latest_inspection(store, site.id)
        assert inspection is not None
        return build_report(store, inspection.id)


def test_plan_page_names_each_item_with_its_verdict_in_words(demo: Path) -> None:
    content = _content(demo, "Eskfold")
    assert content.roof_plan is not None
    pdf = render_report(content, load_branding()).data
    text = "\n".join(page.extract_text() for page in PdfReader(io.BytesIO(pdf)).pages)
    assert "Roof plan and protection" in text
    assert "AHU-1 FAIL" in text and "CH-1 OK" in text  # words beside the colours
    assert "outside the protected volume" in text and "rod at its centre" in text


def test_plan_drawing_has_scale_bar_north_arrow_and_every_part(demo: Path) -> None:
    plan = _content(demo, "Hartle").roof_plan
    assert plan is not None
    drawing = plan_drawing(plan, 170 * 2.83, 120 * 2.83)
    words = {s.text for s in drawing.contents if isinstance(s, String)}
    assert {"N", "0", "5 m"} <= words
    assert {"AT-01", "AT-02", "DC-02", "CAB-1 FAIL", "MAST-1 OK"} <= words
    assert any(w.endswith("at CAB-1") for w in words)  # a protected circle, labelled


def test_site_without_geometry_has_no_plan(demo: Path) -> None:
    content = _content(demo, "Aldermere")
    assert content.roof_plan is None


def test_demo_check_finds_the_new_air_handler_and_the_cabinet_too_close(demo: Path) -> None:
    # The invented scenario: Eskfold's air handler, added since the last visit, stands
    # outside the protected volume; Hartle Cross's unbonded cabinet is closer to DC-02's
    # run than the separation distance (IEC 62305-3 clause 6.3, simplified).
    from inspectkit.cli.check import gather

    with Store.open(demo, create=False) as store:
        checks = {c.site_name: c for c in gather(store, ANCHOR)}
    esk = [r for r in checks["Eskfold Civic Offices"].results if r.rule == "conformity"]
    assert any(
        r.component_tag == "AHU-1" and "outside the protected volume" in r.message for r in esk
    )
    hartle = [
        r for r in checks["Hartle Cross Telephone Exchange"].results if r.rule == "conformity"
    ]
    assert any(
        r.component_tag == "CAB-1" and "too close" in r.message and "DC-02" in r.message
        for r in hartle
    )
    assert not [r for r in checks["Larkmoor Distribution Centre"].results if r.rule == "conformity"]
