"""Whom a signed report trusts is this user's choice: no bundle or hand edit can forge a signer."""

from __future__ import annotations

import hashlib
import json
import sqlite3
import stat
import zipfile
from datetime import UTC, datetime, timedelta
from pathlib import Path

import pytest
from reportlab import rl_config
from sync_factories import copy_db, file_hash
from test_report_factory import PASSPHRASE, build_site
from test_report_sign import give_key
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.model import Component, Inspection, Inspector, Reading
from inspectkit.report.keys import new_key
from inspectkit.report.publish import export_report
from inspectkit.store import Store
from inspectkit.store.audit import entry_hash
from inspectkit.store.health import check_health
from inspectkit.store.trust import is_trusted, trust_path
from inspectkit.sync.bundle import export_bundle
from inspectkit.sync.guard import BundleError
from inspectkit.sync.merge import import_bundle

NOW = datetime(2026, 11, 3, 16, 0, tzinfo=UTC)


@pytest.fixture(autouse=True)
def _invariant(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(rl_config, "invariant", 1)


@pytest.fixture
def office(tmp_path: Path) -> tuple[Path, object]:
    """A closed database whose inspector has a key made here, and a draft inspection."""
    db = tmp_path / "office.sqlite"
    with Store.open(db) as store:
        made = build_site(store, tmp_path / "in", photos=0)
        give_key(store, made.inspector)
    return db, made


def _elsewhere(monkeypatch: pytest.MonkeyPatch, tmp_path: Path, name: str) -> None:
    """Work as another computer's user from now on: a config folder (trust list) of its own."""
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / f"{name}-config"))


def _forged_bundle(tmp_path: Path, office_db: Path, made, monkeypatch) -> tuple[Path, Path]:
    """An attacker's copy: a new inspector under the real one's name signs a forged report."""
    home = trust_path().parent.parent
    _elsewhere(monkeypatch, tmp_path, "attacker")
    forger = Store.open(copy_db(office_db, tmp_path / "forger.sqlite"))
    twin = forger.save(Inspector(name=made.inspector.name, organisation="Kestrelmoor"))
    give_key(forger, twin)
    visit = forger.get(Inspection, made.current.id)
    forger.save(visit.model_copy(update={"inspector_id": twin.id}))
    forged = tmp_path / "forged.pdf"
    export_report(forger, made.current.id, forged, passphrase=PASSPHRASE, now=NOW)
    bundle = export_bundle(forger, made.site.id, tmp_path / "forged.zip").path
    forger.close()
    monkeypatch.setenv("XDG_CONFIG_HOME", str(home))
    return bundle, forged


def _rewrite_records(bundle: Path, change) -> Path:  # noqa: ANN001 - a function of the content
    """The bundle with records.json changed and the manifest's hashes made to match."""
    with zipfile.ZipFile(bundle) as archive:
        members = {name: archive.read(name) for name in archive.namelist()}
    content = json.loads(members["records.json"])
    change(content)
    members["records.json"] = json.dumps(content).encode()
    manifest = json.loads(members["manifest.json"])
    manifest["members"]["records.json"] = hashlib.sha256(members["records.json"]).hexdigest()
    members["manifest.json"] = json.dumps(manifest).encode()
    out = bundle.with_name(f"re-{bundle.name}")
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, data in members.items():
            archive.writestr(name, data)
    return out


def test_a_bundle_with_a_forged_signer_is_refused_and_verify_is_not_fooled(
    office, tmp_path, monkeypatch
):
    db, made = office
    bundle, forged = _forged_bundle(tmp_path, db, made, monkeypatch)
    before = file_hash(db)
    with Store.open(db) as store, pytest.raises(BundleError, match="not trusted here"):
        import_bundle(store, bundle)
    assert file_hash(db) == before
    result = CliRunner().invoke(app, ["verify", str(forged), "--db", str(db)])
    assert result.exit_code == 1
    assert "NOT KNOWN" in result.output and "Does NOT match the database" in result.output


def test_a_signed_inspection_without_its_seal_is_refused(office, tmp_path, monkeypatch):
    """The first variant as seen: a signed row naming a forged report's hash, and no seal."""
    db, made = office
    bundle, forged = _forged_bundle(tmp_path, db, made, monkeypatch)

    def strip_seal(content: dict) -> None:
        for row in content["tables"]["inspection"]:
            row["seal"] = ""

    before = file_hash(db)
    cli = CliRunner().invoke(app, ["import", str(_rewrite_records(bundle, strip_seal)),
                                   "--db", str(db)])  # fmt: skip
    assert cli.exit_code == 2 and "carries no seal" in cli.output
    assert file_hash(db) == before


def test_a_bundle_cannot_replace_a_trusted_certificate(office, tmp_path, monkeypatch):
    """The second variant: the real inspector given the forger's certificate, dated ahead."""
    db, made = office
    home = trust_path().parent.parent
    _elsewhere(monkeypatch, tmp_path, "attacker")
    other = new_key(tmp_path / "forger.p12", PASSPHRASE, name=made.inspector.name, now=NOW)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(home))
    with Store.open(db) as store:
        genuine = tmp_path / "genuine.pdf"
        export_report(store, made.current.id, genuine, passphrase=PASSPHRASE, now=NOW)
        bundle = export_bundle(store, made.site.id, tmp_path / "b.zip").path

    def swap(later: timedelta):
        def change(content: dict) -> None:
            for row in content["tables"]["inspector"]:
                row["certificate_pem"] = other.certificate_pem
                row["updated_at"] = (datetime.now(UTC) + later).strftime("%Y-%m-%dT%H:%M:%SZ")

        return change

    before = file_hash(db)
    for later in (timedelta(days=365 * 73), timedelta(minutes=5)):
        with Store.open(db) as store, pytest.raises(BundleError, match="certificate|future"):
            import_bundle(store, _rewrite_records(bundle, swap(later)))
        assert file_hash(db) == before
    result = CliRunner().invoke(app, ["verify", str(genuine), "--db", str(db)])
    assert result.exit_code == 0, result.output
    assert "NOT KNOWN" not in result.output and "Matches the database" in result.output


def test_a_genuine_signed_inspection_travels_and_its_signer_arrives_untrusted(
    office, tmp_path, monkeypatch
):
    db, made = office
    with Store.open(db) as store:
        export_report(store, made.current.id, tmp_path / "r.pdf", passphrase=PASSPHRASE, now=NOW)
        bundle = export_bundle(store, made.site.id, tmp_path / "b.zip").path
    # A laptop that trusts the inspector takes the signed inspection as signed.
    with Store.open(tmp_path / "laptop.sqlite") as laptop:
        report = import_bundle(laptop, bundle)
        assert laptop.get(Inspection, made.current.id).state.value == "signed"
        assert not any("not trusted" in line for line in report.lines())
    # There the report matches too: its records are those signed, its audit log its own.
    there = CliRunner().invoke(
        app, ["verify", str(tmp_path / "r.pdf"), "--db", str(tmp_path / "laptop.sqlite")]
    )
    assert there.exit_code == 0 and "Matches the database" in there.output, there.output
    # A computer that does not: the bundle is refused, and says why.
    _elsewhere(monkeypatch, tmp_path, "stranger")
    with Store.open(tmp_path / "stranger.sqlite") as stranger:
        with pytest.raises(BundleError, match="not trusted here"):
            import_bundle(stranger, bundle)


def test_keys_trust_shows_the_fingerprint_asks_and_keys_list_tells_trusted_from_not(
    office, tmp_path, monkeypatch
):
    db, made = office
    with Store.open(db) as store:
        pem = store.get(Inspector, made.inspector.id).certificate_pem
    cert = tmp_path / "zoe.pem"
    cert.write_text(pem, encoding="ascii")
    _elsewhere(monkeypatch, tmp_path, "client")
    listed = CliRunner().invoke(app, ["keys", "list", "--db", str(db)])
    assert listed.exit_code == 0 and "NOT TRUSTED" in listed.output
    refused = CliRunner().invoke(app, ["keys", "trust", str(cert)], input="n\n")
    assert refused.exit_code == 1 and not is_trusted(pem)
    fp = hashlib.sha256(_der(pem)).hexdigest()
    accepted = CliRunner().invoke(app, ["keys", "trust", str(cert)], input="y\n")
    assert accepted.exit_code == 0, accepted.output
    assert fp[:4] in accepted.output.replace(" ", "")[:400]
    assert is_trusted(pem)
    assert stat.S_IMODE(trust_path().stat().st_mode) == 0o600
    listed = CliRunner().invoke(app, ["keys", "list", "--db", str(db)])
    assert "TRUSTED (trusted by hand)" in listed.output


def _der(pem: str) -> bytes:
    from cryptography import x509
    from cryptography.hazmat.primitives.serialization import Encoding

    return x509.load_pem_x509_certificate(pem.encode()).public_bytes(Encoding.DER)


def _recompute_chain(db: Path, table: str, row_id: str, column: str, value: object) -> int:
    """What a person with sqlite3 and the source can do: edit a row and rebuild the audit chain."""
    conn = sqlite3.connect(db)
    conn.execute(f"UPDATE [{table}] SET [{column}] = ? WHERE id = ?", [value, row_id])
    seq, after = conn.execute(
        "SELECT seq, after FROM audit WHERE table_name = ? AND row_id = ? AND after IS NOT NULL "
        "ORDER BY seq DESC LIMIT 1",
        [table, row_id],
    ).fetchone()
    row = json.loads(after)
    row[column] = value
    conn.execute(
        "UPDATE audit SET after = ? WHERE seq = ?",
        [json.dumps(row, sort_keys=True, ensure_ascii=False, separators=(",", ":")), seq],
    )
    cursor = conn.execute("SELECT * FROM audit ORDER BY seq")
    names = [d[0] for d in cursor.description]
    prev = "0" * 64
    for values in cursor.fetchall():
        entry = dict(zip(names, values, strict=True))
        entry["prev_hash"] = prev
        entry["hash"] = prev = entry_hash(entry)
        conn.execute(
            "UPDATE audit SET prev_hash = ?, hash = ? WHERE seq = ?",
            [entry["prev_hash"], entry["hash"], entry["seq"]],
        )
    conn.commit()
    conn.close()
    return seq


def test_a_signed_reading_changed_with_the_chain_recomputed_is_found(office, tmp_path):
    db, made = office
    report = tmp_path / "r.pdf"
    with Store.open(db) as store:
        export_report(store, made.current.id, report, passphrase=PASSPHRASE, now=NOW)
        reading = store.select(Reading, "inspection_id = ?", [made.current.id])[0]
    seq = _recompute_chain(db, "reading", reading.id, "value", 0.5)
    with Store.open(db) as store:
        assert store.verify_audit() == []  # the plain chain is fooled
        problems = check_health(store, hash_photos=False)
    keyed = [p for p in problems if p.check == "audit key"]
    # The first row the key cannot vouch for is the one rewritten, and the doctor says so.
    assert keyed[0].subject == f"audit {seq}" and "fails its keyed check" in keyed[0].message
    assert "can no longer vouch for the records it names" in keyed[0].message
    assert any("head of the log when inspection" in p.message for p in keyed)
    (sealed,) = [p for p in problems if p.check == "signature"]
    assert f"reading {reading.id} differs from what was signed" in sealed.message
    doctor = CliRunner().invoke(app, ["doctor", "--db", str(db)])
    assert doctor.exit_code == 1 and reading.id in doctor.output
    verify = CliRunner().invoke(app, ["verify", str(report), "--db", str(db)])
    assert verify.exit_code == 1, verify.output
    with Store.open(db) as store:
        tag = store.get(Component, reading.component_id).tag
    assert f"reading {reading.id} ({tag} {reading.quantity.value}) differs from" in verify.output
    assert "no longer holds the row that was its head at signing" in verify.output


def test_a_signing_undone_by_hand_with_the_audit_tail_deleted_is_found(office, tmp_path):
    """Back to draft, and every audit row from the signing on deleted: a valid shorter chain."""
    db, made = office
    with Store.open(db) as store:
        export_report(store, made.current.id, tmp_path / "r.pdf", passphrase=PASSPHRASE, now=NOW)
    conn = sqlite3.connect(db)
    (first,) = conn.execute(
        "SELECT MIN(seq) FROM audit WHERE table_name = 'inspection' AND row_id = ? "
        "AND after LIKE '%\"state\":\"signed\"%'",
        [made.current.id],
    ).fetchone()
    (draft,) = conn.execute(
        "SELECT after FROM audit WHERE row_id = ? AND seq < ? ORDER BY seq DESC LIMIT 1",
        [made.current.id, first],
    ).fetchone()
    row = json.loads(draft)
    conn.execute(
        f"UPDATE inspection SET {', '.join(f'[{k}] = ?' for k in row)} WHERE id = ?",
        [*row.values(), made.current.id],
    )
    conn.execute("DELETE FROM audit WHERE seq >= ?", [first])
    conn.commit()
    conn.close()
    with Store.open(db) as store:
        assert store.get(Inspection, made.current.id).state.value == "draft"
        assert store.verify_audit() == []  # the shorter chain is sound in itself
        problems = check_health(store, hash_photos=False)
    assert [p.check for p in problems] == ["audit key"]
    assert f"when inspection {made.current.id} was signed, is missing" in problems[0].message


def test_the_audit_key_is_private_and_outside_the_database(office):
    from inspectkit.paths import user_config_dir

    key = user_config_dir() / "audit.key"
    assert stat.S_IMODE(key.stat().st_mode) == 0o600
    assert stat.S_IMODE(key.parent.stat().st_mode) == 0o700


def test_a_component_with_signed_readings_keeps_its_tag_and_kind(office, tmp_path):
    from inspectkit.model import ComponentKind
    from inspectkit.store import FrozenRecordError

    db, made = office
    with Store.open(db) as store:
        export_report(store, made.current.id, tmp_path / "r.pdf", passphrase=PASSPHRASE, now=NOW)
        reading = store.select(Reading, "inspection_id = ?", [made.current.id])[0]
        joint = store.get(Component, reading.component_id)
        before = store.rows_by_id("component", [joint.id])
        for change in ({"tag": "TJ-99"}, {"kind": ComponentKind.AIR_TERMINAL}):
            with pytest.raises(FrozenRecordError, match="tag and kind stay as signed"):
                store.save(joint.model_copy(update=change))
        assert store.rows_by_id("component", [joint.id]) == before
        store.save(joint.model_copy(update={"location": "north wall, behind the downpipe"}))


def test_an_inspector_arriving_with_a_certificate_arrives_untrusted_and_import_says_so(
    tmp_path, monkeypatch
):
    """A bundle may carry inspectors and their certificates; trusting them stays the user's."""
    home = trust_path().parent.parent
    _elsewhere(monkeypatch, tmp_path, "colleague")
    theirs = Store.open(tmp_path / "theirs.sqlite")
    made = build_site(theirs, tmp_path / "in", photos=0)
    pem = give_key(theirs, made.inspector).certificate_pem
    bundle = export_bundle(theirs, made.site.id, tmp_path / "b.zip").path
    theirs.close()
    monkeypatch.setenv("XDG_CONFIG_HOME", str(home))
    db = tmp_path / "ours.sqlite"
    result = CliRunner().invoke(app, ["import", str(bundle), "--db", str(db), "--json"])
    assert result.exit_code == 0, result.output
    (notice,) = json.loads(result.output)["notices"]
    assert made.inspector.name in notice and "not trusted here" in notice
    assert "keys trust" in notice and not is_trusted(pem)


def test_a_restored_backup_is_not_taken_for_a_log_cut_short(office, tmp_path):
    db, made = office
    backup = tmp_path / "monday.bak"
    with Store.open(db) as store:
        store.backup(backup)
        export_report(store, made.current.id, tmp_path / "r.pdf", passphrase=PASSPHRASE, now=NOW)
        store.restore(backup)
        assert store.get(Inspection, made.current.id).state.value == "draft"
        assert check_health(store, hash_photos=False) == []


def test_model_caps_name_the_limit():
    from pydantic import ValidationError

    from inspectkit.model import NOTES_MAX, Site

    with pytest.raises(ValidationError, match=f"at most {NOTES_MAX} characters"):
        Site(name="Harbour Mill", protection_level="III", notes="x" * (NOTES_MAX + 1))
    with pytest.raises(ValidationError, match="at most 200 characters"):
        Site(name="M" * 50_000, protection_level="III")


def test_a_key_imported_with_keys_import_is_trusted_here(office, tmp_path, monkeypatch):
    """A key the user holds and chose to use is theirs to trust (one from a CA, say)."""
    db, made = office
    home = trust_path().parent.parent
    _elsewhere(monkeypatch, tmp_path, "ca")
    issued = new_key(tmp_path / "issued.p12", PASSPHRASE, name=made.inspector.name, now=NOW)
    monkeypatch.setenv("XDG_CONFIG_HOME", str(home))
    assert not is_trusted(issued.certificate_pem)
    args = ["keys", "import", str(issued.path), "--inspector", made.inspector.id, "--db", str(db)]
    result = CliRunner().invoke(app, args, env={"INSPECTKIT_PASSPHRASE": PASSPHRASE.decode()})
    assert result.exit_code == 0, result.output
    assert is_trusted(issued.certificate_pem)
    bad = tmp_path / "not.pem"
    bad.write_text("hello", encoding="ascii")
    refused = CliRunner().invoke(app, ["keys", "trust", str(bad), "--yes"])
    assert refused.exit_code == 2 and "not a PEM certificate" in refused.output


@pytest.mark.parametrize(
    "seal",
    ["[" * 100_000, '{"payload": "{}", "signature": "AA==", "certificate": "x"}', "7", "\udcff"],
)
def test_a_seal_that_is_not_one_is_refused_with_a_message(office, tmp_path, seal):
    db, made = office
    with Store.open(db) as store:
        export_report(store, made.current.id, tmp_path / "r.pdf", passphrase=PASSPHRASE, now=NOW)
        bundle = export_bundle(store, made.site.id, tmp_path / "b.zip").path

    def replace_seal(content: dict) -> None:
        for row in content["tables"]["inspection"]:
            if row["state"] == "signed":
                row["seal"] = seal

    hostile = _rewrite_records(bundle, replace_seal)
    with Store.open(tmp_path / "laptop.sqlite") as laptop:
        with pytest.raises(BundleError, match="arrives signed, but its seal|seal: Input should"):
            import_bundle(laptop, hostile)
