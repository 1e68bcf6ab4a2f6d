"""Errors that tell the truth: a held lock, a full disk, a read-only log or folder and a damaged
record are each named for what they are, in one sentence, never as a traceback, and never with
the advice to restore from a backup (which would overwrite good data with old)."""

from __future__ import annotations

import os
import shutil
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest

from fieldcheck.cli import main
from fieldcheck.store import Log

ROOT = Path(__file__).resolve().parents[2]
FIELDCHECK = (sys.executable, "-m", "fieldcheck")
HEADER = "tag,size,height,species,grade,load,duration,construction"
ROW = "{tag},4x4,8ft,douglas-fir-larch,no2,3000lbf,seven-days,yes"


def _csv(path: Path, n: int) -> str:
    path.write_text(HEADER + "\n" + "".join(ROW.format(tag=f"P{i}") + "\n" for i in range(n)))
    return str(path)


def _one_sentence(err: str, *words: str) -> None:
    assert "Traceback" not in err, err
    lines = [ln for ln in err.strip().splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert "restore from a backup" not in err, err
    for w in words:
        assert w in err, err


@pytest.fixture
def demo_log(tmp_path, shore):
    path = tmp_path / "survey.db"
    with Log.open(path, author="ann", device="dev-ann") as lg:
        lg.import_rows([dict(shore, tag=f"S{i}") for i in range(3)], "Alder Row", "visit")
    return path


# ----------------------------------------------------------------------------- a held lock


@pytest.fixture
def holder(demo_log):
    """Another process holding the log's write lock (BEGIN IMMEDIATE) until killed."""
    code = (
        "import sqlite3, sys, time\n"
        "c = sqlite3.connect(sys.argv[1], isolation_level=None)\n"
        "c.execute('BEGIN IMMEDIATE')\n"
        "print('held', flush=True)\n"
        "time.sleep(60)\n"
    )
    proc = subprocess.Popen(
        [sys.executable, "-c", code, str(demo_log)], stdout=subprocess.PIPE, text=True
    )
    assert proc.stdout.readline().strip() == "held"
    yield proc
    proc.kill()
    proc.wait()


@pytest.mark.parametrize("command", ["import", "rerate"])
def test_a_held_lock_waits_then_names_the_holder(
    demo_log, holder, tmp_path, capsys, monkeypatch, command
):
    monkeypatch.setenv("FIELDCHECK_LOCK_WAIT_S", "0.3")
    argv = ["rerate", "--db", str(demo_log)]
    if command == "import":
        argv = ["import", "--db", str(demo_log), _csv(tmp_path / "p.csv", 5)]
        argv += ["--site", "A", "--visit", "V"]
    assert main(argv) == 2
    err = capsys.readouterr().err
    _one_sentence(err, "busy", f"pid {holder.pid}", "nothing was changed")


def test_a_released_lock_lets_the_write_through(demo_log, tmp_path, capsys):
    conn = sqlite3.connect(demo_log, isolation_level=None, check_same_thread=False)
    conn.execute("BEGIN IMMEDIATE")
    import threading

    threading.Timer(0.3, lambda: conn.execute("COMMIT")).start()
    argv = ["import", "--db", str(demo_log), _csv(tmp_path / "p.csv", 2), "--site", "A"]
    assert main([*argv, "--visit", "V"]) == 0
    conn.close()


# ----------------------------------------------------------------------------- a full disk


def test_full_disk_on_import_says_so_and_keeps_the_log(demo_log, tmp_path, capsys, monkeypatch):
    from fieldcheck.store import connection, repo

    real = connection.connect

    def small_disk(path, **kw):  # SQLite's own page cap: writes past it fail as SQLITE_FULL
        db = real(path, **kw)
        pages = db.conn.execute("PRAGMA page_count").fetchone()[0]
        db.conn.execute(f"PRAGMA max_page_count = {pages + 2}")
        return db

    monkeypatch.setattr(repo, "connect", small_disk)
    argv = ["import", "--db", str(demo_log), _csv(tmp_path / "p.csv", 3000)]
    assert main([*argv, "--site", "A", "--visit", "V"]) == 2
    _one_sentence(capsys.readouterr().err, "disk is full", "nothing was changed")
    monkeypatch.undo()
    with Log.open(demo_log, readonly=True) as lg:
        assert len(lg.posts()) == 3 and lg.integrity().ok


# ----------------------------------------------------------------------------- read-only


def _immutable(path: Path) -> bool:
    """Make a file or folder unchangeable even for root (chattr +i); False when not possible."""
    if os.geteuid() != 0:
        path.chmod(0o555 if path.is_dir() else 0o444)
        return True
    if shutil.which("chattr") is None:
        return False
    return subprocess.run(["chattr", "+i", str(path)], capture_output=True).returncode == 0


def _mutable(path: Path) -> None:
    if os.geteuid() == 0:
        subprocess.run(["chattr", "-i", str(path)], capture_output=True)
    path.chmod(0o755 if path.is_dir() else 0o644)


@pytest.fixture
def readonly_log(demo_log):
    folder = demo_log.parent / "ro"
    folder.mkdir()
    path = folder / "survey.db"
    shutil.copy(demo_log, path)
    if not (_immutable(path) and _immutable(folder)):
        pytest.skip("cannot make a read-only file here")
    yield path
    _mutable(folder)
    _mutable(path)


def test_read_only_commands_work_on_a_read_only_log(readonly_log, tmp_path, capsys):
    assert main(["check", "--db", str(readonly_log)]) == 0
    assert "sound" in capsys.readouterr().out
    assert main(["export", "--db", str(readonly_log)]) == 0
    assert capsys.readouterr().out.count("\n") == 4  # header and three posts
    out = tmp_path / "r.html"
    assert main(["report", "--db", str(readonly_log), "--out", str(out)]) == 0
    assert out.stat().st_size > 0


def test_writing_a_read_only_log_says_read_only(readonly_log, tmp_path, capsys):
    argv = ["import", "--db", str(readonly_log), _csv(tmp_path / "p.csv", 2)]
    assert main([*argv, "--site", "A", "--visit", "V"]) == 2
    _one_sentence(capsys.readouterr().err, "read-only")
    assert main(["rerate", "--db", str(readonly_log)]) == 2
    _one_sentence(capsys.readouterr().err, "read-only")


def test_export_to_an_unwritable_place_says_why(demo_log, tmp_path, capsys):
    assert main(["export", "--db", str(demo_log), "--out", str(tmp_path / "no" / "x.csv")]) == 2
    _one_sentence(capsys.readouterr().err, "does not exist")


# ----------------------------------------------------------------------------- home folder


def test_rate_works_with_an_unwritable_home_folder(tmp_path):
    env = {k: v for k, v in os.environ.items() if not k.startswith("XDG_")}
    env.update(HOME="/proc/fieldcheck-home", PYTHONPATH=str(ROOT))  # nothing can be made there
    argv = ["rate", "--size", "4x4", "--height", "8ft", "--species", "spf", "--grade", "no2"]
    proc = subprocess.run(
        [sys.executable, "-m", "fieldcheck", *argv, "--load", "1kip", "--json"],
        cwd=tmp_path,
        env=env,
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert proc.returncode == 0, proc.stderr
    assert "Traceback" not in proc.stderr


# ----------------------------------------------------------------------------- damaged records


@pytest.fixture
def bad_record_log(demo_log):
    conn = sqlite3.connect(demo_log, isolation_level=None)
    conn.execute("PRAGMA ignore_check_constraints = ON")  # what a hand edit can do
    oid, mid, vid = conn.execute(
        "SELECT id, member_id, visit_id FROM observations ORDER BY rowid LIMIT 1"
    ).fetchone()
    conn.execute(
        "INSERT INTO observations (id, member_id, visit_id, supersedes, record_json, device_id, "
        "device_seq, author, created_at) VALUES ('bad-rev', ?, ?, ?, '{\"height\": [8', "
        "'dev-hand', 1, 'hand', '2026-01-01T00:00:00+00:00')",
        [mid, vid, oid],
    )
    conn.close()
    return demo_log, mid


@pytest.mark.parametrize("command", ["rerate", "export", "report"])
def test_a_damaged_record_names_the_post_and_the_log(bad_record_log, tmp_path, capsys, command):
    path, member = bad_record_log
    argv = [command, "--db", str(path)]
    if command == "report":
        argv += ["--out", str(tmp_path / "r.html")]
    assert main(argv) == 2
    err = capsys.readouterr().err
    _one_sentence(err, member, "bad-rev", str(path))


# ----------------------------------------------------------------------------- two imports at once


@pytest.mark.slow
def test_two_large_imports_at_once_both_land(tmp_path):
    db = tmp_path / "survey.db"
    Log.open(db).close()
    src = _csv(tmp_path / "p.csv", 60_000)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    procs = [
        subprocess.Popen(
            [*FIELDCHECK, "import", "--db", str(db), src, "--site", f"S{k}", "--visit", "V"],
            cwd=ROOT,
            env=env,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        for k in range(2)
    ]
    outs = [p.communicate(timeout=600) for p in procs]
    assert [p.returncode for p in procs] == [0, 0], outs
    assert all("Traceback" not in e for _, e in outs)
    with Log.open(db, readonly=True) as lg:
        assert len(lg.posts()) == 120_000 and lg.integrity().ok
