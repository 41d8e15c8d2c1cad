"""Signing freezes the inspection; the signature validates; one changed byte makes verify fail."""

from __future__ import annotations

import hashlib
from datetime import UTC, datetime
from pathlib import Path

import pytest
from asn1crypto import pem, x509
from pyhanko.pdf_utils.reader import PdfFileReader
from pyhanko.sign.validation import validate_pdf_signature
from pyhanko_certvalidator import ValidationContext
from reportlab import rl_config
from test_report_factory import PASSPHRASE, build_site
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Inspection, InspectionState, Inspector, Reading
from inspectkit.report.gather import ReportError
from inspectkit.report.keys import (
    KeyProblem,
    key_path,
    keys_dir,
    new_key,
    read_key,
    stored_key_path,
)
from inspectkit.report.publish import export_report
from inspectkit.report.sign import SignError
from inspectkit.report.verify import verify_pdf
from inspectkit.store import FrozenRecordError, Store

NOW = datetime(2026, 11, 3, 16, 0, tzinfo=UTC)


@pytest.fixture(autouse=True)
def _invariant(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(rl_config, "invariant", 1)


def give_key(store: Store, inspector: Inspector) -> Inspector:
    """A fresh key beside the database, recorded on the inspector as `keys new` does."""
    path = keys_dir(store) / f"{inspector.id}.p12"
    made = new_key(
        path,
        PASSPHRASE,
        name=inspector.name,
        organisation=inspector.organisation,
        qualification=inspector.qualification,
        now=NOW,
    )
    return store.save(
        inspector.model_copy(
            update={
                "signing_key": stored_key_path(store, path),
                "certificate_pem": made.certificate_pem,
            }
        )
    )


@pytest.fixture
def signed(tmp_path: Path):
    db = tmp_path / "db.sqlite"
    store = Store.open(db)
    made = build_site(store, tmp_path, photos=1)
    inspector = give_key(store, made.inspector)
    out = tmp_path / "report.pdf"
    export_report(store, made.current.id, out, passphrase=PASSPHRASE, now=NOW)
    yield store, made, inspector, out, db
    store.close()


def test_signature_validates_against_the_inspectors_certificate(signed) -> None:
    _, _, inspector, out, _ = signed
    _, _, der = pem.unarmor(inspector.certificate_pem.encode("ascii"))
    context = ValidationContext(trust_roots=[x509.Certificate.load(der)], allow_fetching=False)
    with out.open("rb") as handle:
        embedded = PdfFileReader(handle).embedded_signatures
        assert len(embedded) == 1
        status = validate_pdf_signature(embedded[0], signer_validation_context=context)
    assert status.intact and status.valid and status.trusted and status.bottom_line
    assert status.signing_cert.subject.native["common_name"] == "Zoë Ångström-Müller"


def test_signing_freezes_the_inspection_and_keeps_the_hash(signed) -> None:
    store, made, _, out, _ = signed
    frozen = store.get(Inspection, made.current.id)
    assert frozen.state is InspectionState.SIGNED and frozen.finished
    assert frozen.signed_at == NOW and frozen.report_revision == 1
    assert frozen.report_sha256 == hashlib.sha256(out.read_bytes()).hexdigest()
    with pytest.raises(FrozenRecordError):
        store.save(frozen.model_copy(update={"weather": "wet"}))
    reading = store.get(Reading, made.readings[0].id)
    with pytest.raises(FrozenRecordError):
        store.save(reading.model_copy(update={"value": 1.0}))
    with pytest.raises(ReportError, match="signed already"):
        export_report(store, made.current.id, out.with_name("again.pdf"), passphrase=PASSPHRASE)


def test_the_signed_report_says_it_is_signed(signed) -> None:
    from pypdf import PdfReader

    _, _, _, out, _ = signed
    text = " ".join(page.extract_text() for page in PdfReader(out).pages)
    assert "revision 1, signed 2026-11-03" in text
    assert "DRAFT" not in text


def test_verify_says_intact_and_matches_the_database(signed) -> None:
    _, made, _, out, db = signed
    result = CliRunner().invoke(app, ["verify", str(out), "--db", str(db)])
    assert result.exit_code == 0, result.output
    assert "INTACT" in result.output
    assert "Signed by Zoë Ångström-Müller" in result.output
    assert f"Matches the database: inspection {made.current.id}" in result.output


def test_one_changed_byte_makes_verify_fail(signed) -> None:
    _, _, _, out, db = signed
    data = bytearray(out.read_bytes())
    at = data.index(b"/Contents <") // 2  # well inside the signed range, in the page content
    data[at] ^= 0x01
    bad = out.with_name("changed.pdf")
    bad.write_bytes(bytes(data))
    result = CliRunner().invoke(app, ["verify", str(bad), "--db", str(db)])
    assert result.exit_code == 1, result.output
    assert "ALTERED" in result.output
    # The signer is known (--db holds the certificate): the news is the alteration.
    assert "NOT KNOWN" not in result.output


def test_a_damaged_signature_is_altered(signed) -> None:
    _, made, inspector, out, _ = signed
    data = bytearray(out.read_bytes())
    start = data.index(b"/Contents <") + len(b"/Contents <") + 200
    data[start] = ord("0") if data[start] != ord("0") else ord("1")
    result = verify_pdf(bytes(data), [inspector.certificate_pem])
    assert not result.intact and not result.ok and result.problem


def _other_machine(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    """A user config folder of its own: a client's computer, which trusts nobody yet."""
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "client-config"))


def test_unknown_signer_exits_1_and_a_given_certificate_is_trusted(
    signed, tmp_path, monkeypatch
) -> None:
    _, _, inspector, out, _ = signed
    _other_machine(monkeypatch, tmp_path)
    alone = CliRunner().invoke(app, ["verify", str(out)])
    assert alone.exit_code == 1 and "NOT KNOWN" in alone.output
    cert = tmp_path / "inspector.pem"
    cert.write_text(inspector.certificate_pem, encoding="ascii")
    trusted = CliRunner().invoke(app, ["verify", str(out), "--cert", str(cert)])
    assert trusted.exit_code == 0, trusted.output


def test_a_stranger_with_a_key_is_not_trusted(signed, tmp_path) -> None:
    store, made, _, out, db = signed
    other = new_key(tmp_path / "other.p12", PASSPHRASE, name="Zoë Ångström-Müller", now=NOW)
    result = verify_pdf(out.read_bytes(), [other.certificate_pem])
    assert result.intact and not result.trusted and not result.ok


def test_a_file_the_database_does_not_know_exits_1(signed, tmp_path) -> None:
    _, _, _, out, _ = signed
    other_db = tmp_path / "other.sqlite"
    Store.open(other_db).close()
    result = CliRunner().invoke(app, ["verify", str(out), "--db", str(other_db)])
    assert result.exit_code == 1
    assert "Does NOT match the database" in result.output


def test_key_files_refuse_wrong_passphrases_and_overwrites(tmp_path: Path) -> None:
    path = tmp_path / "k.p12"
    new_key(path, PASSPHRASE, name="A. Inspector", now=NOW)
    assert read_key(path, PASSPHRASE).subject == "A. Inspector"
    with pytest.raises(KeyProblem, match="wrong passphrase"):
        read_key(path, b"nope")
    with pytest.raises(KeyProblem, match="exists already"):
        new_key(path, PASSPHRASE, name="A. Inspector")
    with pytest.raises(KeyProblem, match="at least 8"):
        new_key(tmp_path / "e.p12", b"", name="A. Inspector")


def test_signing_with_a_wrong_passphrase_changes_nothing(tmp_path: Path) -> None:
    store = Store.open(tmp_path / "db.sqlite")
    made = build_site(store, tmp_path, photos=0)
    give_key(store, made.inspector)
    out = tmp_path / "r.pdf"
    with pytest.raises(SignError, match="wrong passphrase"):
        export_report(store, made.current.id, out, passphrase=b"wrong")
    assert not out.exists()
    assert store.get(Inspection, made.current.id).state is InspectionState.DRAFT
    store.close()


def test_key_path_is_relative_to_the_database(signed) -> None:
    store, _, inspector, _, db = signed
    assert not Path(inspector.signing_key).is_absolute()
    assert key_path(store, inspector) == db.parent / inspector.signing_key


def test_an_unsigned_report_is_not_verified(tmp_path: Path) -> None:
    store = Store.open(tmp_path / "db.sqlite")
    made = build_site(store, tmp_path, photos=0)
    out = tmp_path / "draft.pdf"
    export_report(store, made.current.id, out)
    store.close()
    result = CliRunner().invoke(app, ["verify", str(out)])
    assert result.exit_code == 1 and "NOT SIGNED" in result.output
