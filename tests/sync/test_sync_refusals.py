"""Refused transfers: one sentence, and the receiving log left byte for byte unchanged."""

from __future__ import annotations

import json
import shutil
import sqlite3

import pytest

from fieldcheck.store import Log
from fieldcheck.store.merge import TransferRefused
from fieldcheck.store.sync import export_bundle, import_bundle, sync


@pytest.fixture
def setup(make_log, shore, tmp_path):
    """A field bundle, and an office log (closed, checkpointed) that already took one post."""
    a = make_log("ann")
    site = a.add_site("Alder Row")
    visit = a.add_visit(site.id, "ann")
    a.save_post(visit.id, shore)
    office = tmp_path / "office.db"
    sync(a, office)
    a.save_post(visit.id, dict(shore, tag="S2"))
    bundle = export_bundle(a, tmp_path / "a.fcbundle")
    return a, office, bundle


def _resigned(m: dict) -> dict:
    """Signed again with the office key: what only someone holding the key can do, so the
    checks behind the signature are tested too."""
    from fieldcheck.store import signing

    return signing.sign(m, signing.required())


def _refused(office, bundle, state, match):
    before = state(office)
    with Log.open(office) as off, pytest.raises(TransferRefused, match=match) as exc:
        import_bundle(off, bundle)
    assert state(office) == before  # byte for byte, -wal included (common practice, no source)
    assert "\n" not in str(exc.value)


def test_truncated_snapshot(setup, state):
    _, office, bundle = setup
    data = bundle.read_bytes()
    bundle.write_bytes(data[: len(data) // 2])
    _refused(office, bundle, state, "truncated")


def test_tampered_snapshot(setup, state):
    _, office, bundle = setup
    data = bytearray(bundle.read_bytes())
    i = data.find(b"S2")
    data[i : i + 2] = b"S9"
    bundle.write_bytes(bytes(data))
    _refused(office, bundle, state, "checksum")


def test_tampered_rows_with_checksum_rewritten(setup, state, tmp_path):
    # a row added to the snapshot and the file checksum recomputed: the ids digest catches it
    _, office, bundle = setup
    conn = sqlite3.connect(bundle)
    conn.execute(
        "INSERT INTO sites SELECT 'forged-' || id, name, address, notes, device_id, "
        "device_seq + 1000, author, created_at FROM sites LIMIT 1"
    )
    conn.commit()
    conn.close()
    import hashlib

    m = json.loads((tmp_path / "a.fcbundle.json").read_text())
    m["snapshot_sha256"] = hashlib.sha256(bundle.read_bytes()).hexdigest()
    m["snapshot_bytes"] = bundle.stat().st_size
    (tmp_path / "a.fcbundle.json").write_text(json.dumps(_resigned(m)))
    _refused(office, bundle, state, "does not match its manifest|outside the device ranges")


def test_same_id_other_content(setup, state, tmp_path):
    # the office already holds the first post; a bundle claiming it with other content is refused
    a, office, _ = setup
    full = export_bundle(a, tmp_path / "full.fcbundle")
    conn = sqlite3.connect(full)
    conn.execute("DROP TRIGGER IF EXISTS observations_no_update")
    conn.execute("UPDATE observations SET record_json = replace(record_json, '3000lbf', '300lbf')")
    conn.commit()
    conn.close()
    import hashlib

    mp = tmp_path / "full.fcbundle.json"
    m = json.loads(mp.read_text())
    m["snapshot_sha256"] = hashlib.sha256(full.read_bytes()).hexdigest()
    m["snapshot_bytes"] = full.stat().st_size
    mp.write_text(json.dumps(_resigned(m)))
    _refused(office, full, state, "other content")


def test_foreign_firm(setup, state, tmp_path):
    _, office, _ = setup
    with Log.open(tmp_path / "other.db", author="x", device="dev-x") as other:
        other.set_firm("another-firm")
        other.add_site("Elsewhere")
        b = export_bundle(other, tmp_path / "other.fcbundle")
    _refused(office, b, state, "another firm")


def test_foreign_field_log_sync_refused(setup, state, tmp_path, shore):
    _, office, _ = setup
    before = state(office)
    with Log.open(tmp_path / "other.db", author="x", device="dev-x") as other:
        other.set_firm("another-firm")
        other.add_site("Elsewhere")
        with pytest.raises(TransferRefused, match="another firm"):
            sync(other, office)
    assert state(office) == before


def test_newer_schema(setup, state, tmp_path):
    _, office, bundle = setup
    mp = tmp_path / "a.fcbundle.json"
    m = json.loads(mp.read_text())
    m["schema_version"] = 99
    mp.write_text(json.dumps(_resigned(m)))
    _refused(office, bundle, state, "newer fieldcheck")


def test_missing_or_damaged_manifest(setup, state, tmp_path):
    _, office, bundle = setup
    mp = tmp_path / "a.fcbundle.json"
    mp.write_text(mp.read_text()[:40])
    _refused(office, bundle, state, "damaged or truncated")
    mp.unlink()
    _refused(office, bundle, state, "no manifest")


def test_bundle_out_of_order_refused(make_log, shore, state, tmp_path):
    # the second bundle needs rows of the first: refused, not half-taken
    a = make_log("ann")
    site = a.add_site("Alder Row")
    visit = a.add_visit(site.id, "ann")
    first = export_bundle(a, tmp_path / "1.fcbundle")
    from fieldcheck.store import bundle as bf

    have = json.loads((tmp_path / "1.fcbundle.json").read_text())["vector"]
    a.save_post(visit.id, shore)
    second = tmp_path / "2.fcbundle"
    bf.write_bundle(a.path, second, base=have)
    office = tmp_path / "office.db"
    Log.open(office).close()
    _refused(office, second, state, "earlier bundle is missing")
    with Log.open(office) as off:
        import_bundle(off, first)
        assert import_bundle(off, second).rows >= 2
    shutil.rmtree(tmp_path / "nothing", ignore_errors=True)
