"""Hostile or broken bundles are refused with a clear message and change nothing, byte for byte."""

from __future__ import annotations

import hashlib
import io
import json
import stat
import zipfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from sync_factories import build_site, file_hash, photo_files

from inspectkit.model import new_id
from inspectkit.store import Store
from inspectkit.sync.bundle import export_bundle
from inspectkit.sync.guard import BundleError, Limits, read_capped
from inspectkit.sync.merge import import_bundle


@pytest.fixture
def setup(tmp_path: Path) -> tuple[Path, dict[str, bytes]]:
    """A closed database holding a site, and the members of that site's good bundle."""
    db = tmp_path / "target.sqlite"
    with Store.open(db) as store:
        records = build_site(store, tmp_path / "in")
        good = export_bundle(store, records.site.id, tmp_path / "good.zip").path
    with zipfile.ZipFile(good) as archive:
        members = {name: archive.read(name) for name in archive.namelist()}
    return db, members


def _write(
    path: Path,
    members: dict[str, bytes],
    *,
    manifest: dict | None = None,
    attrs: dict[str, int] | None = None,
    rehash: bool = True,
) -> Path:
    """A bundle from members; the manifest's hashes recomputed unless told otherwise."""
    manifest = manifest or json.loads(members["manifest.json"])
    if rehash:
        manifest["members"] = {
            name: hashlib.sha256(data).hexdigest()
            for name, data in members.items()
            if name != "manifest.json"
        }
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("manifest.json", json.dumps(manifest))
        for name, data in members.items():
            if name == "manifest.json":
                continue
            info = zipfile.ZipInfo(name)
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = (attrs or {}).get(name, (stat.S_IFREG | 0o644) << 16)
            archive.writestr(info, data)
    return path


def _records(members: dict[str, bytes]) -> dict:
    return json.loads(members["records.json"])


def _with_records(members: dict[str, bytes], content: dict) -> dict[str, bytes]:
    return {**members, "records.json": json.dumps(content).encode()}


def _photo(members: dict[str, bytes]) -> str:
    return next(name for name in members if name.startswith("photos/"))


def _escape(tmp, members):
    return _write(tmp / "b.zip", {**members, "photos/../../evil": b"x"})


def _absolute(tmp, members):
    return _write(tmp / "b.zip", {**members, "/tmp/evil": b"x"})


def _backslash_escape(tmp, members):
    return _write(tmp / "b.zip", {**members, "photos\\..\\..\\evil": b"x"})


def _link(tmp, members):
    # A Unix symlink's mode sits in the high 16 bits of the external attributes
    # (PKWARE APPNOTE.TXT 4.4.15, host-dependent; Info-ZIP's Unix convention).
    name = _photo(members)
    return _write(
        tmp / "b.zip", {**members, name: b"/etc/passwd"}, attrs={name: (stat.S_IFLNK | 0o777) << 16}
    )


def _wrong_photo_hash(tmp, members):
    return _write(tmp / "b.zip", {**members, _photo(members): b"not the photo"})


def _tampered_records(tmp, members):
    content = _records(members)
    content["tables"]["reading"][0]["value"] = 0.5
    return _write(tmp / "b.zip", _with_records(members, content), rehash=False)


def _zip_bomb(tmp, members):
    bomb = members["records.json"][:-1] + b" " * (40 << 20) + b"}"
    return _write(tmp / "b.zip", {**members, "records.json": bomb})


def _malformed_json(tmp, members):
    return _write(tmp / "b.zip", {**members, "records.json": b'{"tables": {"site": ['})


def _unknown_version(tmp, members):
    manifest = json.loads(members["manifest.json"])
    manifest["version"] = 99
    return _write(tmp / "b.zip", members, manifest=manifest)


def _other_schema(tmp, members):
    manifest = json.loads(members["manifest.json"])
    manifest["schema"] = manifest["schema"] - 1
    return _write(tmp / "b.zip", members, manifest=manifest)


def _missing_site(tmp, members):
    content = _records(members)
    content["tables"]["site"] = []
    manifest = json.loads(members["manifest.json"])
    manifest["counts"]["site"] = 0
    for table in ("component", "inspection"):
        for row in content["tables"][table]:
            row["site_id"] = "5d7b3a40-0c1e-4a8e-bd2c-9e6f1a2b3c4d"
    return _write(tmp / "b.zip", _with_records(members, content), manifest=manifest)


def _invalid_record(tmp, members):
    content = _records(members)
    content["tables"]["reading"][0]["value"] = -3.0
    return _write(tmp / "b.zip", _with_records(members, content))


def _reworded_record(tmp, members):
    content = _records(members)
    content["tables"]["component"][0]["tag"] = "tj-01"
    return _write(tmp / "b.zip", _with_records(members, content))


def _extra_member(tmp, members):
    return _write(tmp / "b.zip", {**members, "notes.txt": b"hello"})


def _not_a_zip(tmp, members):
    path = tmp / "b.zip"
    path.write_bytes(b"PK\x03\x04 this is not really a zip file")
    return path


def _unlisted_photo(tmp, members):
    manifest = json.loads(members["manifest.json"])
    extra = b"another photo"
    name = f"photos/{hashlib.sha256(extra).hexdigest()}"
    path = _write(tmp / "b.zip", members, manifest=manifest)
    with zipfile.ZipFile(path, "a") as archive:
        archive.writestr(name, extra)
    return path


def _photo_file_missing(tmp, members):
    content = _records(members)
    photos = content["tables"]["photo"]
    photos.append({**photos[0], "id": new_id(), "sha256": "ab" * 32})
    manifest = json.loads(members["manifest.json"])
    manifest["counts"]["photo"] = len(photos)
    return _write(tmp / "b.zip", _with_records(members, content), manifest=manifest)


def _duplicate_member(tmp, members):
    path = _write(tmp / "b.zip", members)
    with pytest.warns(UserWarning, match="Duplicate name"), zipfile.ZipFile(path, "a") as archive:
        archive.writestr("records.json", b'{"tables": {}, "history": {}}')
    return path


def _unknown_table(tmp, members):
    content = _records(members)
    content["tables"]["invoice"] = []
    return _write(tmp / "b.zip", _with_records(members, content))


def _deleted_site(tmp, members):
    content = _records(members)
    content["deleted"] = {"site": {content["tables"]["site"][0]["id"]: ["ab" * 32]}}
    return _write(tmp / "b.zip", _with_records(members, content))


def _deleted_and_present(tmp, members):
    content = _records(members)
    content["deleted"] = {"reading": {content["tables"]["reading"][0]["id"]: ["ab" * 32]}}
    return _write(tmp / "b.zip", _with_records(members, content))


#: A time no clock reaches yet: rows dated so would win every comparison.
_FAR = "2099-01-01T00:00:00Z"


def _future_edit(tmp, members):
    content = _records(members)
    content["tables"]["reading"][0].update(note="later than anything", updated_at=_FAR)
    return _write(tmp / "b.zip", _with_records(members, content))


def _future_reading(tmp, members):
    content = _records(members)
    content["tables"]["reading"][0]["taken_at"] = _FAR
    return _write(tmp / "b.zip", _with_records(members, content))


def _future_visit(tmp, members):
    content = _records(members)
    content["tables"]["inspection"][0].update(date="2099-01-01", finished=1)
    return _write(tmp / "b.zip", _with_records(members, content))


def _unnamed_photos(tmp, members):
    """Photo files that no record names, each a valid member with its hash listed."""
    extra = {}
    for n in range(8):
        data = hashlib.sha256(str(n).encode()).digest() * 2048  # 64 KiB, packs 1 to 1
        extra[f"photos/{hashlib.sha256(data).hexdigest()}"] = data
    return _write(tmp / "b.zip", {**members, **extra})


def _huge_site_name(tmp, members):
    manifest = json.loads(members["manifest.json"])
    manifest["site_name"] = "M" * 1_000_000
    return _write(tmp / "b.zip", members, manifest=manifest)


CASES = {
    "path with ..": (_escape, "leads out of the bundle"),
    "absolute path": (_absolute, "absolute path"),
    "backslash ..": (_backslash_escape, "leads out of the bundle"),
    "symlink": (_link, "is a link"),
    "photo hash": (_wrong_photo_hash, "does not match its hash"),
    "records altered": (_tampered_records, "does not match the hash in the manifest"),
    "zip bomb": (_zip_bomb, "possible zip bomb"),
    "malformed JSON": (_malformed_json, r"records.json is not valid JSON \(line 1"),
    "unknown version": (_unknown_version, "format version 99 is unknown"),
    "other schema": (_other_schema, "records are in schema .* this database is in schema"),
    "missing site": (_missing_site, "refers to site .* neither in the bundle nor in this"),
    "invalid record": (_invalid_record, "(?s)reading record 1 .* value -3 Ω is negative"),
    "reworded record": (_reworded_record, "not in the stored form"),
    "unexpected member": (_extra_member, "'notes.txt' is not one a bundle holds"),
    "not a zip": (_not_a_zip, "not a bundle"),
    "unlisted member": (_unlisted_photo, "not in the manifest"),
    "photo file nowhere": (_photo_file_missing, "neither in the bundle nor in"),
    "duplicate member": (_duplicate_member, "appears twice"),
    "unknown table": (_unknown_table, "unknown table 'invoice'"),
    "site deleted": (_deleted_site, "deleted for unknown table 'site'"),
    "deleted yet present": (_deleted_and_present, "is both in the bundle and deleted"),
    "edit dated 2099": (_future_edit, "reading record 1 .*updated_at 2099-01-01.* in the future"),
    "reading taken 2099": (_future_reading, "(?s)reading record 1 .*taken_at: 2099-01-01"),
    "visit dated 2099": (_future_visit, "(?s)inspection record 1 .*date: 2099-01-01 is in the"),
    "unnamed photo files": (_unnamed_photos, "a photo file no record of the bundle names"),
    "huge site name": (_huge_site_name, "'site_name' is 1,000,000 characters; .* at most 200"),
}


def _tree(folder: Path) -> set[Path]:
    """Every file and folder under `folder`: an empty folder left behind shows too."""
    return set(folder.rglob("*")) if folder.exists() else set()


@pytest.mark.parametrize("case", list(CASES))
def test_hostile_bundle_is_refused_and_the_database_is_unchanged(setup, tmp_path, case):
    db, members = setup
    make, message = CASES[case]
    bundle = make(tmp_path, members)
    before = file_hash(db)
    with Store.open(db) as store:
        photos = photo_files(store)
        tree = _tree(store.photos_dir)
        with pytest.raises(BundleError, match=message):
            import_bundle(store, bundle)
        assert photo_files(store) == photos and _tree(store.photos_dir) == tree
    assert file_hash(db) == before
    assert not list(tmp_path.glob(".bundle-*")), "staging folder left behind"
    assert not (tmp_path / "evil").exists() and not Path("/tmp/evil").exists()


def test_an_oversized_member_is_refused_before_it_is_read(setup, tmp_path):
    db, members = setup
    bundle = _write(tmp_path / "b.zip", members)
    before = file_hash(db)
    with Store.open(db) as store, pytest.raises(BundleError, match="more than the 100 allowed"):
        import_bundle(store, bundle, limits=Limits(member_bytes=100))
    assert file_hash(db) == before


def test_one_import_writes_no_more_than_its_cap_and_says_so(setup, tmp_path):
    db, members = setup
    content = _records(members)
    photos = content["tables"]["photo"]
    # A photo this database does not hold yet: the import would have to write it.
    data = b"a photo not held here " * 100
    new = hashlib.sha256(data).hexdigest()
    photos.append({**photos[0], "id": new_id(), "sha256": new})
    manifest = json.loads(members["manifest.json"])
    manifest["counts"]["photo"] = len(photos)
    bundle = _write(tmp_path / "b.zip", {**_with_records(members, content), f"photos/{new}": data},
                    manifest=manifest)  # fmt: skip
    before = file_hash(db)
    with Store.open(db) as store, pytest.raises(BundleError, match="more than the 1,000 bytes one"):
        import_bundle(store, bundle, limits=Limits(write_bytes=1000))
    assert file_hash(db) == before


def test_a_member_larger_than_its_header_says_is_stopped_while_reading():
    with pytest.raises(BundleError, match="more than the 10 bytes"):
        b"".join(read_capped(io.BytesIO(b"x" * 11), "photos/x", 10))


def test_a_good_bundle_from_the_same_members_is_accepted(setup, tmp_path):
    """The crafting helper itself makes bundles the importer takes, so refusals mean something."""
    db, members = setup
    with Store.open(db) as store:
        report = import_bundle(store, _write(tmp_path / "b.zip", members))
    assert not report.changed


_JSON = st.recursive(
    st.none() | st.booleans() | st.integers() | st.floats(allow_nan=False) | st.text(max_size=8),
    lambda inner: (
        st.lists(inner, max_size=3) | st.dictionaries(st.text(max_size=4), inner, max_size=3)
    ),
    max_leaves=6,
)


@settings(
    max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(data=st.data())
def test_fuzz_a_bundle_with_any_field_changed_is_taken_or_refused_cleanly(setup, tmp_path, data):
    """Any one value of any row replaced by any JSON value: a refusal, or a clean import."""
    db, members = setup
    content = _records(members)
    tables = [t for t, rows in content["tables"].items() if rows]
    table = data.draw(st.sampled_from(tables))
    row = data.draw(st.sampled_from(content["tables"][table]))
    field = data.draw(st.sampled_from(sorted(row)))
    row[field] = data.draw(_JSON)
    bundle = _write(tmp_path / "fuzz.zip", _with_records(members, content))
    before = file_hash(db)
    with Store.open(db) as store:
        try:
            import_bundle(store, bundle)
        except BundleError:
            refused = True
        else:
            refused = False
    if refused:
        assert file_hash(db) == before
