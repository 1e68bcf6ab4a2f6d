"""--out naming a device or a pipe (/dev/null, a FIFO) is written as it is: the finished file is
never renamed over it (as root that replaced /dev/null with a plain file)."""

from __future__ import annotations

import os
import stat
import threading

import pytest

from fieldcheck.cli import main

ROWS = "tag,size,height,top,bottom,species,grade,load\nA,4x4,8ft,pinned,pinned,dfl,no2,4kip\n"


def _through_fifo(tmp_path, args: list[str]) -> tuple[int, str]:
    fifo = tmp_path / "out.fifo"
    os.mkfifo(fifo)
    got: list[bytes] = []
    reader = threading.Thread(target=lambda: got.append(fifo.read_bytes()), daemon=True)
    reader.start()
    rc = main([*args, "--out", str(fifo)])
    reader.join(timeout=60)
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)  # still the pipe, not a file put in its place
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".part")]
    return rc, b"".join(got).decode()


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_batch_out_to_a_pipe_writes_through_it(tmp_path, capsys):
    # common practice, no source: `> /dev/null`-style targets are written, never replaced
    src = tmp_path / "in.csv"
    src.write_text(ROWS)
    rc, text = _through_fifo(tmp_path, ["rate", "--batch", str(src)])
    assert rc == 0 and text.startswith("tag,size") and "no-action" in text


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_export_and_report_to_a_pipe_write_through_it(tmp_path, capsys):
    # common practice, no source
    src = tmp_path / "in.csv"
    src.write_text(ROWS)
    db = tmp_path / "log.db"
    assert main(["import", "--db", str(db), str(src), "--site", "S", "--visit", "V"]) == 0
    rc, text = _through_fifo(tmp_path, ["export", "--db", str(db)])
    assert rc == 0 and text.startswith("tag,")
    os.unlink(tmp_path / "out.fifo")
    rc, text = _through_fifo(tmp_path, ["report", "--db", str(db), "--quiet", "--draft"])
    assert rc == 0 and "<html" in text[:200].lower()
