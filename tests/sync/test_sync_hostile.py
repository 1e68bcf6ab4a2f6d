"""Bundles are authenticated (office-key HMAC) and hostile bundles cannot hang or crash the
receiver: each is refused in one sentence with the receiver unchanged; a junk file in a shared
folder is skipped with a warning and the sync goes on."""

from __future__ import annotations

import hashlib
import json
import sqlite3

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from fieldcheck.cli import main
from fieldcheck.store import Log, signing
from fieldcheck.store.merge import TransferRefused
from fieldcheck.store.sync import export_bundle, import_bundle, sync


@pytest.fixture
def setup(make_log, shore, tmp_path):
    """A field bundle of two posts, and an empty office log."""
    a = make_log("ann")
    site = a.add_site("Alder Row")
    visit = a.add_visit(site.id, "ann")
    a.save_post(visit.id, shore)
    a.save_post(visit.id, dict(shore, tag="S2"))
    bundle = export_bundle(a, tmp_path / "a.fcbundle")
    office = tmp_path / "office.db"
    Log.open(office, author="office").close()
    return a, office, bundle


def _manifest(bundle):
    return json.loads((bundle.parent / (bundle.name + ".json")).read_text())


def _write_manifest(bundle, m, *, text: str | None = None):
    (bundle.parent / (bundle.name + ".json")).write_text(
        text if text is not None else json.dumps(m)
    )


def _rechecksum(bundle, m):
    m["snapshot_sha256"] = hashlib.sha256(bundle.read_bytes()).hexdigest()
    m["snapshot_bytes"] = bundle.stat().st_size
    return m


def _refused(office, bundle, state, match):
    before = state(office)
    with Log.open(office) as off, pytest.raises(TransferRefused, match=match) as exc:
        import_bundle(off, bundle)
    assert state(office) == before
    assert "\n" not in str(exc.value)


# ----------------------------------------------------------------------------- signatures


def test_unsigned_bundle_refused(setup, state):
    _, office, bundle = setup
    m = _manifest(bundle)
    del m["signature"]
    _write_manifest(bundle, m)
    _refused(office, bundle, state, "not signed")


def test_forged_no_action_bundle_refused(setup, state):
    # every rating set to "no action", the checksums recomputed: what anyone could do before
    _, office, bundle = setup
    conn = sqlite3.connect(bundle)
    conn.execute("DROP TRIGGER IF EXISTS ratings_no_update")
    conn.execute("UPDATE ratings SET action = 0, ratio = 0.1")
    conn.commit()
    conn.close()
    _write_manifest(bundle, _rechecksum(bundle, _manifest(bundle)))
    _refused(office, bundle, state, "signature")


def test_bundle_of_another_office_refused(setup, state, tmp_path, monkeypatch):
    _, office, bundle = setup
    other = signing.write_keys([signing.new_key_line()], tmp_path / "other.key")
    monkeypatch.setenv("FIELDCHECK_OFFICE_KEY_FILE", str(other))
    _refused(office, bundle, state, "does not hold")


def test_no_office_key_says_how_to_set_one_up(setup, tmp_path, monkeypatch, capsys):
    _a, office, bundle = setup
    monkeypatch.setenv("FIELDCHECK_OFFICE_KEY_FILE", str(tmp_path / "none.key"))
    assert main(["import", "--db", str(office), "--bundle", str(bundle)]) == 2
    err = capsys.readouterr().err
    assert "office-key new" in err and err.count("\n") == 1


def test_rows_claiming_the_receivers_own_device_refused(setup, state, tmp_path, shore):
    _, office, _ = setup
    with Log.open(office, readonly=True) as off:
        office_device = off.device_id
    with Log.open(tmp_path / "forger.db", author="x", device=office_device) as forger:
        forger.add_site("Claimed")
        b = export_bundle(forger, tmp_path / "forged.fcbundle")
    _refused(office, b, state, "own device")


def test_office_key_command_new_show_rotate_retire(tmp_path, capsys):
    key = str(tmp_path / "k" / "office.key")
    assert main(["office-key", "new", "--key-file", key]) == 0
    first = capsys.readouterr().out.strip()
    assert main(["office-key", "new", "--key-file", key]) == 2  # already there
    capsys.readouterr()
    assert main(["office-key", "rotate", "--key-file", key]) == 0
    second = capsys.readouterr().out.strip()
    assert main(["office-key", "show", "--key-file", key]) == 0
    assert capsys.readouterr().out.split("\n")[:2] == [second, first]
    laptop = str(tmp_path / "laptop.key")
    assert main(["office-key", "add", *second.split(), "--key-file", laptop]) == 0
    assert main(["office-key", "retire", "--key-file", key]) == 0
    capsys.readouterr()
    assert main(["office-key", "show", "--key-file", key]) == 0
    assert capsys.readouterr().out.strip() == second
    assert main(["office-key", "add", "nonsense", "--key-file", laptop]) == 2


# ----------------------------------------------------------------------------- hostile shapes


def test_row_at_rowid_ten_to_the_twelfth_is_work_for_one_row(setup, state, monkeypatch):
    _, office, bundle = setup
    conn = sqlite3.connect(bundle)
    conn.execute("DROP TRIGGER IF EXISTS sites_no_update")
    conn.execute("UPDATE sites SET rowid = 1000000000000")
    conn.commit()
    conn.close()
    m = signing.sign(_rechecksum(bundle, _manifest(bundle)), signing.required())
    _write_manifest(bundle, m)
    calls = []

    def progress(done, total, stage):
        calls.append(done)
        if len(calls) > 1000:  # stepping through the rowid range: stop the test, not the machine
            raise AssertionError("the insert steps through the rowid range")

    with Log.open(office) as off:
        summary = import_bundle(off, bundle, progress=progress)
    assert summary.inserted["sites"] == 1


@pytest.mark.parametrize(
    "change, words",
    [
        (lambda m: m.update(tables="x"), "tables"),
        (lambda m: m.update(vector={"d": "x"}), "vector"),
        (lambda m: m.update(format_version="1.5"), "format_version"),
        (lambda m: m.update(format_version=1.5), "format_version"),
        (lambda m: m.update(schema_version=[2]), "schema_version"),
        (lambda m: m.update(ranges={"d": [5, 1]}), "range"),
        (lambda m: m.update(snapshot_sha256=7), "sha256"),
        (lambda m: m.update(signature="x"), "signature"),
        (lambda m: m.clear(), "not a fieldcheck bundle"),
    ],
)
def test_wrong_typed_fields_are_one_sentence(setup, state, change, words):
    _, office, bundle = setup
    m = _manifest(bundle)
    change(m)
    _write_manifest(bundle, m)
    _refused(office, bundle, state, words)


def test_deeply_nested_manifest_is_one_sentence(setup, state):
    _, office, bundle = setup
    _write_manifest(bundle, None, text='{"format": ' + "[" * 200_000 + "]" * 200_000 + "}")
    _refused(office, bundle, state, "nested too deeply|damaged")


def test_junk_in_a_shared_folder_is_skipped_with_a_warning(make_log, shore, tmp_path, capsys):
    folder = tmp_path / "share"
    folder.mkdir()
    (folder / "junk.fcbundle.json").write_text("{not json")
    (folder / "junk.fcbundle").write_bytes(b"\x00" * 100)
    (folder / "typed.fcbundle.json").write_text(
        json.dumps({"format": "fieldcheck-bundle", "vector": {"x": "y"}})
    )
    (folder / "deep.fcbundle.json").write_text("[" * 100_000)
    a = make_log("ann")
    site = a.add_site("Alder Row")
    a.save_post(a.add_visit(site.id, "ann").id, shore)
    path = a.path
    a.close()
    assert main(["sync", "--db", str(path), str(folder), "--quiet"]) == 0
    captured = capsys.readouterr()
    assert "Traceback" not in captured.err
    assert captured.err.count("warning:") == 3
    assert "Sent" in captured.out
    with Log.open(tmp_path / "office.db") as off:
        assert sync(off, folder).received  # the office still takes the post


# ----------------------------------------------------------------------------- fuzz


_json = st.recursive(
    st.none() | st.booleans() | st.integers() | st.floats() | st.text(max_size=20),
    lambda kids: (
        st.lists(kids, max_size=4) | st.dictionaries(st.text(max_size=8), kids, max_size=4)
    ),
    max_leaves=12,
)
_KEYS = (
    "format",
    "format_version",
    "firm_id",
    "sender_device",
    "schema_version",
    "snapshot_bytes",
    "snapshot_sha256",
    "tables",
    "ranges",
    "base",
    "vector",
    "signature",
    "created_at",
)


@settings(
    max_examples=60,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)
@given(
    edits=st.lists(st.tuples(st.sampled_from(_KEYS), _json), min_size=1, max_size=3),
    junk=st.none() | st.binary(max_size=200),
)
def test_fuzz_bundle_reader_exit_2_one_sentence(setup, capsys, edits, junk):
    _, office, bundle = setup
    mpath = bundle.parent / (bundle.name + ".json")
    original = mpath.read_bytes()
    try:
        if junk is not None:
            mpath.write_bytes(junk)
        else:
            m = json.loads(original)
            for k, v in edits:
                m[k] = v
            same = json.dumps(m, sort_keys=True) == json.dumps(json.loads(original), sort_keys=True)
            assume(not same)  # an unchanged manifest is a sound bundle
            mpath.write_text(json.dumps(m))
        capsys.readouterr()
        rc = main(["import", "--db", str(office), "--bundle", str(bundle)])
        err = capsys.readouterr().err
        assert rc == 2, err
        assert "Traceback" not in err
        assert err.count("\n") == 1 and err.startswith("fieldcheck: "), err
    finally:
        mpath.write_bytes(original)
