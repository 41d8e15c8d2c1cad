"""Whose report it is: the inspecting organisation's letterhead, from records."""

from __future__ import annotations

import io
from pathlib import Path

from pypdf import PdfReader
from test_report_factory import build_site

from inspectkit.model import Inspector, Organisation
from inspectkit.report.branding import load_branding
from inspectkit.report.gather import build_report
from inspectkit.report.letterhead import (
    branding_of,
    ensure_default_organisation,
    report_branding,
)
from inspectkit.report.publish import prepare
from inspectkit.store import Store


def test_the_branding_file_becomes_the_default_organisation_once(tmp_path: Path) -> None:
    with Store.open(tmp_path / "db.sqlite") as store:
        made = ensure_default_organisation(store)
        again = ensure_default_organisation(store)
        assert made.id == again.id and made.is_default
        file = load_branding()
        assert (made.name, made.address, made.primary) == (file.name, file.address, file.primary)
        assert len(store.select(Organisation)) == 1


def test_a_report_carries_its_inspectors_organisation(tmp_path: Path) -> None:
    with Store.open(tmp_path / "db.sqlite") as store:
        made = build_site(store, tmp_path)
        ensure_default_organisation(store)
        other = store.save(
            Organisation(name="Brackwater Test House", address="9 Ferry Row", phone="01632 0")
        )
        inspector = store.get(Inspector, made.inspector.id)
        store.save(inspector.model_copy(update={"organisation_id": other.id}))
        assert report_branding(store, made.current).name == "Brackwater Test House"
        content = build_report(store, made.current.id)
        assert content.signer_organisation == "Brackwater Test House"
        data = prepare(store, made.current.id).rendered.data
    first = PdfReader(io.BytesIO(data)).pages[0].extract_text()
    assert "Brackwater Test House" in first and "9 Ferry Row" in first
    assert load_branding().name not in first


def test_an_inspector_without_one_gets_the_default(tmp_path: Path) -> None:
    with Store.open(tmp_path / "db.sqlite") as store:
        made = build_site(store, tmp_path)
        default = ensure_default_organisation(store)
        assert report_branding(store, made.current) == branding_of(default)


def test_the_demo_has_two_organisations_and_reports_follow_the_inspector(tmp_path: Path) -> None:
    from datetime import date

    from inspectkit.demo.generate import build_demo
    from inspectkit.model import Inspection, Site

    path = build_demo(tmp_path / "demo.sqlite", date(2026, 12, 1))
    with Store.open(path, create=False) as store:
        organisations = {o.id: o for o in store.select(Organisation)}
        assert len(organisations) == 2
        assert sum(o.is_default for o in organisations.values()) == 1
        site = store.select(Site, "name LIKE 'Larkmoor%'")[0]
        visit = store.select(Inspection, "site_id = ?", [site.id], order_by="date DESC")[0]
        inspector = store.get(Inspector, visit.inspector_id)
        assert report_branding(store, visit).name == organisations[inspector.organisation_id].name


def test_organisations_commands_add_join_and_list(tmp_path: Path) -> None:
    from typer.testing import CliRunner

    from inspectkit.cli import app

    db = tmp_path / "db.sqlite"
    with Store.open(db) as store:
        store.save(Inspector(name="Wren Attley"))
    run = CliRunner()
    added = run.invoke(app, ["organisations", "add", "Brackwater Test House", "--db", str(db)])
    assert added.exit_code == 0, added.output
    joined = run.invoke(
        app, ["organisations", "join", "wren attley", "Brackwater Test House", "--db", str(db)]
    )
    assert joined.exit_code == 0 and "works for Brackwater Test House" in joined.output
    listed = run.invoke(app, ["organisations", "--db", str(db)])
    assert "Brackwater Test House: Wren Attley" in listed.output
    assert "(default)" in listed.output  # the branding file's, made on first use
    bad = run.invoke(app, ["organisations", "join", "wren attley", "Nobody Ltd", "--db", str(db)])
    assert bad.exit_code == 2 and "no organisation" in bad.output
