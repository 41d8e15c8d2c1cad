"""The keys, report and amend commands end to end, on a database file."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from pypdf import PdfReader
from test_report_factory import build_site
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Inspection, InspectionState, Inspector
from inspectkit.store import Store


@pytest.fixture
def db(tmp_path: Path) -> Path:
    path = tmp_path / "db.sqlite"
    with Store.open(path) as store:
        build_site(store, tmp_path, photos=1)
    return path


def run(*args: str, passphrase: str | None = "s3cret-words", input: str | None = None):
    env = {"INSPECTKIT_PASSPHRASE": passphrase} if passphrase is not None else {}
    return CliRunner().invoke(app, list(args), env=env, input=input)


def test_keys_new_report_sign_verify_and_amend(db: Path, tmp_path: Path) -> None:
    made = run("keys", "new", "--inspector", "zoë", "--db", str(db))
    assert made.exit_code == 0, made.output
    with Store.open(db) as store:
        inspector = store.select(Inspector)[0]
    assert inspector.certificate_pem.startswith("-----BEGIN CERTIFICATE-----")
    assert (db.parent / inspector.signing_key).is_file()

    out = tmp_path / "signed.pdf"
    signed = run(
        "report", "--site", "müllerhof", "-o", str(out), "--sign", "--db", str(db), "--json"
    )
    assert signed.exit_code == 0, signed.output
    summary = json.loads(signed.output)
    assert summary["signed"] and summary["pages"] == len(PdfReader(out).pages)
    assert run("verify", str(out), "--db", str(db)).exit_code == 0

    with Store.open(db) as store:
        original = store.select(Inspection, "state = 'signed'")[0]
    again = run("report", original.id, "-o", str(tmp_path / "x.pdf"), "--sign", "--db", str(db))
    assert again.exit_code == 2 and "amend" in again.output

    amend = run("amend", original.id, "--db", str(db))
    assert amend.exit_code == 0, amend.output
    with Store.open(db) as store:
        draft = store.select(Inspection, "amends_id = ?", [original.id])[0]
    assert draft.state is InspectionState.DRAFT


def test_passphrase_is_prompted_for_without_the_variable(db: Path, tmp_path: Path) -> None:
    made = run(
        "keys",
        "new",
        "--inspector",
        "Zoë Ångström-Müller",
        "--db",
        str(db),
        passphrase=None,
        input="pass-word\npass-word\n",
    )
    assert made.exit_code == 0, made.output
    out = tmp_path / "r.pdf"
    signed = run(
        "report",
        "--site",
        "Müllerhof Granary",
        "-o",
        str(out),
        "--sign",
        "--db",
        str(db),
        passphrase=None,
        input="pass-word\n",
    )
    assert signed.exit_code == 0, signed.output
    assert "pass-word" not in signed.output.replace("Key passphrase", "")


def test_bad_input_exits_2_with_the_field_named(db: Path, tmp_path: Path) -> None:
    nobody = run("keys", "new", "--inspector", "nobody", "--db", str(db))
    assert nobody.exit_code == 2 and "--inspector 'nobody'" in nobody.output
    no_key = run(
        "report", "--site", "Müllerhof", "-o", str(tmp_path / "a.pdf"), "--sign", "--db", str(db)
    )
    assert no_key.exit_code == 2 and "no signing key" in no_key.output
    assert not (tmp_path / "a.pdf").exists()
    neither = run("report", "--db", str(db))
    assert neither.exit_code == 2 and "--site" in neither.output
    site = run("report", "--site", "nowhere", "--db", str(db))
    assert site.exit_code == 2 and "--site 'nowhere'" in site.output


def test_unsigned_report_leaves_the_inspection_a_draft(db: Path, tmp_path: Path) -> None:
    out = tmp_path / "draft.pdf"
    result = run("report", "--site", "Müllerhof", "-o", str(out), "--db", str(db))
    assert result.exit_code == 0, result.output
    text = PdfReader(out).pages[0].extract_text()
    assert "DRAFT (not signed)" in text
    with Store.open(db) as store:
        assert all(i.state is InspectionState.DRAFT for i in store.select(Inspection))
