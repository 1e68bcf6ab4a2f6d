"""A log restored from a backup, or copied to a second laptop, keeps syncing: it takes a new
device id before it writes (one sentence says so), and catches up on its own earlier rows."""

from __future__ import annotations

import shutil

import pytest

from fieldcheck.cli import main
from fieldcheck.store import Log
from fieldcheck.store.sync import sync


def _add(path, shore, tag):
    with Log.open(path) as lg:
        site = lg.find_site("Alder Row") or lg.add_site("Alder Row")
        visit = lg.find_visit(site.id, "visit") or lg.add_visit(site.id, name="visit")
        lg.save_post(visit.id, dict(shore, tag=tag))
        return lg.notices


def _sync(path, office):
    with Log.open(path) as lg:
        return sync(lg, office), lg.notices


def _tags(path):
    with Log.open(path, readonly=True) as lg:
        return sorted(p.tag for p in lg.posts())


@pytest.fixture(params=["file", "folder"])
def office(request, tmp_path):
    if request.param == "file":
        return tmp_path / "office.db"
    folder = tmp_path / "share"
    folder.mkdir()
    return folder


def _office_tags(office, tmp_path):
    if office.is_dir():  # the office's own log takes what the folder holds
        off = tmp_path / "office.db"
        _sync(off, office)
        return _tags(off)
    return _tags(office)


def test_restored_log_catches_up_and_keeps_syncing(tmp_path, shore, office):
    field, backup = tmp_path / "field.db", tmp_path / "backup.db"
    assert _add(field, shore, "P1") == []
    _sync(field, office)
    shutil.copy(field, backup)  # sync, back up
    _add(field, shore, "P2")
    _sync(field, office)  # add, sync
    shutil.copy(backup, field)  # restore
    notices = _add(field, shore, "P3")  # add
    assert len(notices) == 1 and "new device" in notices[0] and "backup" in notices[0]
    summary, _ = _sync(field, office)  # sync
    assert not summary.refused
    if office.is_dir():
        _office_tags(office, tmp_path)  # the office takes P3 and drops P1..P3 back
        _sync(field, office)
    assert _office_tags(office, tmp_path) == ["P1", "P2", "P3"]
    assert _tags(field) == ["P1", "P2", "P3"]  # caught up on its own P2
    assert _sync(field, office)[1] == []  # one new id, once


def test_copied_log_takes_a_new_device_id(tmp_path, shore, office, capsys):
    first, second = tmp_path / "first.db", tmp_path / "second.db"
    _add(first, shore, "A1")
    _sync(first, office)
    shutil.copy(first, second)
    assert main(["sync", "--db", str(second), str(office), "--quiet"]) == 0
    err = capsys.readouterr().err
    assert "new device" in err and "copy of" in err and err.count("\n") == 1
    _add(first, shore, "A2")
    _add(second, shore, "B2")  # both number their next rows: no clash
    for _ in range(2):
        for p in (first, second):
            assert not _sync(p, office)[0].refused
    assert _office_tags(office, tmp_path) == ["A1", "A2", "B2"]


def test_log_from_another_computer_takes_a_new_device_id(tmp_path, shore, monkeypatch):
    field = tmp_path / "field.db"
    _add(field, shore, "A1")
    monkeypatch.setenv("FIELDCHECK_STATE_DIR", str(tmp_path / "other-computer"))
    notices = _add(field, shore, "A2")
    assert len(notices) == 1 and "another computer" in notices[0]
    assert _add(field, shore, "A3") == []


def test_reopening_and_moving_keep_the_device(tmp_path, shore):
    field = tmp_path / "field.db"
    _add(field, shore, "A1")
    assert _add(field, shore, "A2") == []
    moved = tmp_path / "moved.db"
    shutil.move(field, moved)
    assert _add(moved, shore, "A3") == []
