"""Amendments: a signed inspection is corrected by a new draft that says what changed."""

from __future__ import annotations

import hashlib
from datetime import date
from pathlib import Path

import pytest
from pypdf import PdfReader
from reportlab import rl_config
from test_report_factory import PASSPHRASE, build_site
from test_report_sign import NOW, give_key

from inspectkit.model import Finding, Inspection, InspectionKind, InspectionState, Reading
from inspectkit.report.amend import AmendError, create_amendment
from inspectkit.report.gather import build_report
from inspectkit.report.publish import export_report
from inspectkit.report.verify import verify_pdf
from inspectkit.store import Store


@pytest.fixture(autouse=True)
def _invariant(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(rl_config, "invariant", 1)


@pytest.fixture
def amended(tmp_path: Path):
    store = Store.open(tmp_path / "db.sqlite")
    made = build_site(store, tmp_path, photos=1)
    inspector = give_key(store, made.inspector)
    export_report(store, made.current.id, tmp_path / "original.pdf", passphrase=PASSPHRASE, now=NOW)
    amendment = create_amendment(store, made.current.id, date(2026, 11, 10))
    yield store, made, inspector, amendment, tmp_path
    store.close()


def test_amendment_copies_the_records_as_a_new_draft(amended) -> None:
    store, made, _, amendment, _ = amended
    assert amendment.kind is InspectionKind.AMENDMENT
    assert amendment.amends_id == made.current.id
    assert amendment.state is InspectionState.DRAFT and amendment.report_revision == 2
    copies = store.select(Reading, "inspection_id = ?", [amendment.id])
    assert sorted(r.value for r in copies) == sorted(r.value for r in made.readings)
    assert not {r.id for r in copies} & {r.id for r in made.readings}
    assert len(store.select(Finding, "inspection_id = ?", [amendment.id])) == 2


def test_amending_a_draft_is_refused(tmp_path: Path) -> None:
    store = Store.open(tmp_path / "db.sqlite")
    made = build_site(store, tmp_path, photos=0)
    with pytest.raises(AmendError, match="draft"):
        create_amendment(store, made.current.id, date(2026, 11, 10))
    store.close()


def test_amended_report_references_the_original_and_says_what_changed(amended) -> None:
    store, made, inspector, amendment, folder = amended
    copy = next(
        r for r in store.select(Reading, "inspection_id = ?", [amendment.id]) if r.value == 0.35
    )
    store.save(copy.model_copy(update={"value": 0.15, "note": "re-tested after cleaning"}))
    original = store.get(Inspection, made.current.id)

    content = build_report(store, amendment.id)
    assert content.title == "Amended inspection report"
    assert any("350 mΩ changed to 150 mΩ" in line for line in content.amendment)
    # The corrected continuity now passes (≤ 0.2 Ω in the iec-62305-3 profile), judged
    # by the engine on the amendment's records, with the original's left out.
    dc02 = next(r for r in content.readings if r.tag == "DC-02")
    assert dc02.result == "PASS" and dc02.value == "150 mΩ"
    assert len(content.readings) == len(made.readings)

    out = folder / "amended.pdf"
    export_report(store, amendment.id, out, passphrase=PASSPHRASE, now=NOW)
    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(out).pages)
    assert f"amends the signed report of inspection {made.current.id}" in text
    assert original.report_sha256 in text
    assert "What this amendment changed" in text and "changed to 150 mΩ" in text
    assert "revision 2, signed" in text
    assert verify_pdf(out.read_bytes(), [inspector.certificate_pem]).ok
    signed = store.get(Inspection, amendment.id)
    assert signed.report_sha256 == hashlib.sha256(out.read_bytes()).hexdigest()
    assert store.get(Inspection, made.current.id) == original


def test_unchanged_amendment_says_so(amended) -> None:
    store, _, _, amendment, _ = amended
    assert build_report(store, amendment.id).amendment == (
        "No reading, finding or photo was changed.",
    )


def test_an_amendment_of_an_amendment_replaces_both_earlier_revisions(amended) -> None:
    store, made, _, amendment, folder = amended
    export_report(store, amendment.id, folder / "r2.pdf", passphrase=PASSPHRASE, now=NOW)
    second = create_amendment(store, amendment.id, date(2026, 11, 20))
    assert second.report_revision == 3
    copy = next(
        r for r in store.select(Reading, "inspection_id = ?", [second.id]) if r.value == 0.35
    )
    store.save(copy.model_copy(update={"value": 0.12}))
    content = build_report(store, second.id)
    assert len(content.readings) == len(made.readings)
    assert next(r for r in content.readings if r.tag == "DC-02").result == "PASS"
    assert f"amends the signed report of inspection {amendment.id}" in content.amends
    # The original, rendered again, still shows what it said then.
    original = build_report(store, made.current.id)
    assert next(r for r in original.readings if r.tag == "DC-02").result.startswith("FAIL")
    assert not original.amends
