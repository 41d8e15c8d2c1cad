"""Key files and signatures that hold: private from the first byte, a passphrase worth the name,
no library traceback, and a signature container that cannot be changed unnoticed."""

from __future__ import annotations

import stat
from pathlib import Path

import pytest
from reportlab import rl_config
from test_report_factory import PASSPHRASE, build_site
from test_report_sign import NOW, give_key
from typer.testing import CliRunner

from inspectkit.cli import app
from inspectkit.report.keys import MIN_PASSPHRASE, KeyProblem, new_key
from inspectkit.report.publish import export_report
from inspectkit.report.verify import verify_pdf
from inspectkit.store import Store


@pytest.fixture(autouse=True)
def _invariant(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(rl_config, "invariant", 1)


def _mode(path: Path) -> int:
    return stat.S_IMODE(path.stat().st_mode)


def test_a_key_file_is_private_from_its_first_byte_in_a_private_folder(tmp_path, monkeypatch):
    created = []
    real_open = __import__("os").open

    def watching_open(path, flags, mode=0o777, *args, **kwargs):  # noqa: ANN001, ANN002, ANN003, ANN202
        created.append((str(path), mode))
        return real_open(path, flags, mode, *args, **kwargs)

    monkeypatch.setattr("os.open", watching_open)
    path = tmp_path / "keys" / "zoe.p12"
    new_key(path, PASSPHRASE, name="Zoë Ångström-Müller", now=NOW)
    assert (str(path), 0o600) in created
    assert _mode(path) == 0o600 and _mode(path.parent) == 0o700


def test_keys_new_writes_the_default_key_folder_private(tmp_path):
    db = tmp_path / "db.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path, photos=0)
    env = {"INSPECTKIT_PASSPHRASE": "long enough words"}
    made = CliRunner().invoke(app, ["keys", "new", "--inspector", "zoë", "--db", str(db)], env=env)
    assert made.exit_code == 0, made.output
    folder = tmp_path / "db-keys"
    (key,) = folder.iterdir()
    assert _mode(folder) == 0o700 and _mode(key) == 0o600


@pytest.mark.parametrize("secret", [b"", b"abc", "ñandú7".encode()])
def test_a_new_key_needs_a_passphrase_of_eight_characters(tmp_path, secret):
    """NIST SP 800-63B §5.1.1.2: at least 8 characters for a secret a person chooses."""
    with pytest.raises(KeyProblem, match=f"needs at least {MIN_PASSPHRASE}"):
        new_key(tmp_path / "k.p12", secret, name="A. Inspector")
    assert not (tmp_path / "k.p12").exists()
    new_key(tmp_path / "k.p12", "ñandú-78".encode(), name="A. Inspector")  # 8 characters


def test_the_cli_refuses_a_short_passphrase_for_a_new_key(tmp_path):
    db = tmp_path / "db.sqlite"
    with Store.open(db) as store:
        build_site(store, tmp_path, photos=0)
    args = ["keys", "new", "--inspector", "zoë", "--db", str(db)]
    result = CliRunner().invoke(app, args, env={"INSPECTKIT_PASSPHRASE": "abc"})
    assert result.exit_code == 2 and "at least 8" in result.output
    assert not (tmp_path / "db-keys").exists() or not list((tmp_path / "db-keys").iterdir())


def test_a_wrong_passphrase_prints_the_message_and_no_traceback(tmp_path):
    db = tmp_path / "db.sqlite"
    with Store.open(db) as store:
        made = build_site(store, tmp_path, photos=0)
        give_key(store, made.inspector)
    result = CliRunner().invoke(
        app,
        ["report", made.current.id, "-o", str(tmp_path / "r.pdf"), "--sign", "--db", str(db)],
        env={"INSPECTKIT_PASSPHRASE": "not the passphrase"},
    )
    assert result.exit_code == 2 and "wrong passphrase" in result.output
    assert "Traceback" not in result.output


def test_a_change_in_the_signature_padding_reads_as_altered(tmp_path):
    db = tmp_path / "db.sqlite"
    with Store.open(db) as store:
        made = build_site(store, tmp_path, photos=0)
        inspector = give_key(store, made.inspector)
        out = tmp_path / "r.pdf"
        export_report(store, made.current.id, out, passphrase=PASSPHRASE, now=NOW)
    data = bytearray(out.read_bytes())
    start = data.rindex(b"/Contents <") + len(b"/Contents <")
    end = data.index(b">", start)
    assert data[end - 40 : end] == b"0" * 40  # the zero padding signing leaves
    data[end - 20] = ord("7")
    assert verify_pdf(out.read_bytes(), [inspector.certificate_pem]).ok
    changed = verify_pdf(bytes(data), [inspector.certificate_pem])
    assert not changed.ok and not changed.intact
    assert "container" in changed.problem
