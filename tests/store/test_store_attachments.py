"""Photos are recorded by path and sha256; a missing or changed file is reported, never accepted."""

from __future__ import annotations

import hashlib

import pytest

from fieldcheck.cli import main


def test_attach_records_sha256_and_check_reports_missing_and_changed(log, visit, shore, tmp_path):
    obs = log.save_post(visit.id, shore)
    good, changed, gone = (tmp_path / f"{n}.jpg" for n in ("good", "changed", "gone"))
    for p in (good, changed, gone):
        p.write_bytes(b"photo " + p.name.encode())
    atts = [log.attach(obs.id, p, caption="base of post") for p in (good, changed, gone)]
    assert atts[0].sha256 == hashlib.sha256(b"photo good.jpg").hexdigest()
    assert atts[0].size_bytes == len(b"photo good.jpg") and atts[0].member_id == obs.member_id
    assert log.check_attachments() == []
    changed.write_bytes(b"retouched")
    gone.unlink()
    problems = {p.attachment.path: p.problem for p in log.check_attachments()}
    assert problems == {str(changed.resolve()): "changed", str(gone.resolve()): "missing"}
    report = log.integrity()
    assert not report.ok and len(report.attachments) == 2
    assert any("missing" in s for s in report.problems())
    assert any("has changed" in s for s in report.problems())


def test_attach_refuses_a_path_that_is_not_a_file(log, visit, shore, tmp_path):
    obs = log.save_post(visit.id, shore)
    with pytest.raises(ValueError, match="not a file"):
        log.attach(obs.id, tmp_path / "nope.jpg")


def test_check_command_exit_codes(log, visit, shore, tmp_path, capsys):
    obs = log.save_post(visit.id, shore)
    photo = tmp_path / "p.jpg"
    photo.write_bytes(b"x")
    log.attach(obs.id, photo)
    log.close()
    db = str(tmp_path / "survey.db")
    assert main(["check", "--db", db]) == 0
    assert "sound" in capsys.readouterr().out
    photo.write_bytes(b"y")
    assert main(["check", "--db", db]) == 1
    assert "has changed" in capsys.readouterr().out
    assert main(["check", "--db", str(tmp_path / "missing.db")]) == 2
    (tmp_path / "junk.db").write_bytes(b"junk" * 500)
    assert main(["check", "--db", str(tmp_path / "junk.db")]) == 1
    out = capsys.readouterr().out
    assert "cannot be read" in out and "Traceback" not in out
