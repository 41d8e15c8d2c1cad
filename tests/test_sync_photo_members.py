"""Photo members checked on worker threads behave as a check in bundle order would."""

from __future__ import annotations

import hashlib
import threading
import time
import zipfile
from pathlib import Path

import pytest

from inspectkit.model import Site
from inspectkit.store import Store
from inspectkit.sync import photo_members
from inspectkit.sync.guard import DEFAULT_LIMITS, BundleError
from inspectkit.sync.photo_members import PhotoChecks


def _bundle(path: Path, count: int, broken: set[int] = frozenset()) -> dict[str, str]:
    """A zip of `count` photo members; those numbered in `broken` do not match their names."""
    members = {}
    with zipfile.ZipFile(path, "w") as archive:
        for n in range(count):
            content = f"photo {n} ".encode() * 5000
            sha = hashlib.sha256(content).hexdigest()
            name = f"photos/{sha}"
            members[name] = sha
            archive.writestr(name, b"altered" + content if n in broken else content)
    return members


def _checks(path: Path, members: dict[str, str], staging: Path | None) -> PhotoChecks:
    with zipfile.ZipFile(path) as archive:
        infos = archive.infolist()
    return PhotoChecks(path, infos, members, DEFAULT_LIMITS, staging, set())


@pytest.mark.parametrize("workers", [1, 2, 3])
def test_every_photo_is_staged_under_its_hash_in_bundle_order(tmp_path, monkeypatch, workers):
    monkeypatch.setattr(photo_members, "WORKERS", workers)
    members = _bundle(tmp_path / "b.zip", 7)
    with _checks(tmp_path / "b.zip", members, tmp_path / "staging") as checks:
        staged = checks.result()
    assert list(staged) == list(members.values())
    for sha, path in staged.items():
        assert path == tmp_path / "staging" / sha[:2] / sha
        assert hashlib.sha256(path.read_bytes()).hexdigest() == sha


@pytest.mark.parametrize("workers", [1, 2, 3])
def test_the_refusal_is_for_the_first_bad_photo_whichever_thread_meets_it(
    tmp_path, monkeypatch, workers
):
    monkeypatch.setattr(photo_members, "WORKERS", workers)
    members = _bundle(tmp_path / "b.zip", 8, broken={3, 6})
    first_bad = list(members.values())[3]
    for _ in range(5):
        with (
            _checks(tmp_path / "b.zip", members, None) as checks,
            pytest.raises(BundleError, match=f"photo {first_bad} does not match its hash"),
        ):
            checks.result()


def test_leaving_early_stops_the_workers_before_the_caller_moves_on(tmp_path, monkeypatch):
    """A refused record ends the import: no thread may go on filling the staging folder."""
    monkeypatch.setattr(photo_members, "WORKERS", 2)
    checked = []
    real = PhotoChecks._check

    def slow_check(self, archive, info, sha):
        time.sleep(0.01)
        checked.append(sha)
        return real(self, archive, info, sha)

    monkeypatch.setattr(PhotoChecks, "_check", slow_check)
    members = _bundle(tmp_path / "b.zip", 60)
    staging = tmp_path / "staging"
    with pytest.raises(RuntimeError), _checks(tmp_path / "b.zip", members, staging):
        raise RuntimeError("a record was refused")
    assert not [t for t in threading.enumerate() if t.name.startswith("photo-check")]
    staged = sorted(p.name for p in staging.rglob("*") if p.is_file()) if staging.exists() else []
    assert staged == sorted(checked) and len(checked) < len(members)


def test_a_snapshot_does_not_see_what_another_connection_saves_meanwhile(tmp_path):
    path = tmp_path / "office.sqlite"
    with Store.open(path) as reader, Store.open(path) as writer:
        writer.save(Site(name="Quarry Lane Depot", protection_level="III"))
        with reader.snapshot():
            before = reader.db.execute("SELECT COUNT(*) FROM site").fetchone()[0]
            writer.save(Site(name="Fenwick Cold Store", protection_level="II"))
            during = reader.db.execute("SELECT COUNT(*) FROM site").fetchone()[0]
        after = reader.db.execute("SELECT COUNT(*) FROM site").fetchone()[0]
    assert (before, during, after) == (1, 1, 2)
