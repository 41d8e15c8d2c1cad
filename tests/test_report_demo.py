"""The demo scenario's reports: every site's latest visit builds, and one renders in full."""

from __future__ import annotations

import io
import tomllib
from datetime import date
from pathlib import Path

import pytest
from pypdf import PdfReader
from reportlab import rl_config

from inspectkit.demo.generate import build_demo
from inspectkit.model import Site
from inspectkit.paths import demo_dir
from inspectkit.report.branding import load_branding
from inspectkit.report.gather import RESULT_WORDS, build_report, latest_inspection
from inspectkit.report.render import render_report
from inspectkit.store import Store

ANCHOR = date(2026, 12, 1)
WORDS = set(RESULT_WORDS.values()) | {"RECORDED", "SUPERSEDED"}


@pytest.fixture(scope="module")
def demo(tmp_path_factory: pytest.TempPathFactory) -> Path:
    return build_demo(tmp_path_factory.mktemp("demo") / "demo.sqlite", ANCHOR)


def test_branding_names_the_demo_contractor() -> None:
    scenario = tomllib.loads((demo_dir() / "scenario.toml").read_text(encoding="utf-8"))
    assert load_branding().name == scenario["contractor"]["name"]


def test_every_sites_latest_report_builds_with_results_in_words(demo: Path) -> None:
    with Store.open(demo, create=False) as store:
        sites = store.select(Site)
        assert sites
        for site in sites:
            inspection = latest_inspection(store, site.id)
            assert inspection is not None
            content = build_report(store, inspection.id)
            assert content.site_name == site.name
            for row in content.readings:
                assert row.result.split(":")[0] in WORDS, row


def test_a_demo_report_renders_with_every_reading(demo: Path, monkeypatch) -> None:
    monkeypatch.setattr(rl_config, "invariant", 1)
    with Store.open(demo, create=False) as store:
        site = store.select(Site, "name LIKE 'Aldermere%'")[0]
        content = build_report(store, latest_inspection(store, site.id).id)
        rendered = render_report(content, load_branding())
    reader = PdfReader(io.BytesIO(rendered.data))
    text = " ".join(" ".join(p.extract_text().split()) for p in reader.pages)
    assert content.readings
    for row in content.readings:
        assert row.value in text and row.limit in text and row.result.split(":")[0] in text
    assert f"page {len(reader.pages)} of {len(reader.pages)}" in text


def test_a_repeat_defect_shows_how_long_the_fault_has_been_open(demo: Path) -> None:
    from inspectkit.engine.check import check_site
    from inspectkit.profiles import load_profile
    from inspectkit.store.queries import load_site_records

    with Store.open(demo, create=False) as store:
        site = store.select(Site, "name LIKE 'Greyholm%'")[0]
        content = build_report(store, latest_inspection(store, site.id).id)
        records = load_site_records(store, site.id)
    (repeat,) = [f for f in content.findings if f.tag == "AT-05"]
    assert repeat.history.startswith("The same fault as found ")
    assert "closed as still present, see this one" in repeat.history
    # The engine lists the fault once, with its age from when it was first found.
    check = check_site(records, load_profile(records.site.profile), ANCHOR)
    at05 = [r for r in check.results if r.rule == "carried-defect" and r.component_tag == "AT-05"]
    assert len(at05) == 1 and "still present on" in at05[0].message
