"""`fieldcheck check` checks content: a rating changed by hand, a record that breaks the JSON
constraint, an engine stamp edited and any sealed row altered are each reported, by post."""

from __future__ import annotations

import sqlite3

import pytest

from fieldcheck.cli import main
from fieldcheck.store import Log


@pytest.fixture
def survey(tmp_path, shore):
    path = tmp_path / "survey.db"
    with Log.open(path, author="ann") as lg:
        lg.import_rows([dict(shore, tag=f"S{i}") for i in range(1, 6)], "Alder Row", "visit")
        site = lg.find_site("Alder Row")
        lg.save_post(lg.find_visit(site.id, "visit").id, dict(shore, tag="S9"))
    return path


def _edit(path, *sql, triggers=()):
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("PRAGMA ignore_check_constraints = ON")
    for t in triggers:
        conn.execute(f"DROP TRIGGER IF EXISTS {t}")
    for s in sql:
        conn.execute(s)
    conn.close()


def _check(path, capsys) -> tuple[int, str]:
    rc = main(["check", "--db", str(path)])
    out = capsys.readouterr()
    assert "Traceback" not in out.err
    return rc, out.out


def test_a_sound_log_is_sound(survey, capsys):
    rc, out = _check(survey, capsys)
    assert rc == 0 and "sound" in out


def test_a_rating_changed_by_hand_is_reported_by_post(survey, capsys):
    _edit(
        survey,
        "UPDATE ratings SET action = 3, ratio = 0.05 WHERE observation_id IN "
        "(SELECT o.id FROM observations o JOIN members m ON m.id = o.member_id WHERE m.tag = 'S3')",
        triggers=("ratings_no_update",),
    )
    rc, out = _check(survey, capsys)
    assert rc == 1
    assert "post S3: stored rating" in out and "ratio, action differ" in out
    assert "post S1: " not in out  # only the altered post is named as altered


def test_a_record_breaking_the_json_constraint_is_reported(survey, capsys):
    _edit(
        survey,
        "UPDATE observations SET record_json = '{\"height\": [8' WHERE member_id IN "
        "(SELECT id FROM members WHERE tag = 'S2')",
        triggers=("observations_no_update",),
    )
    rc, out = _check(survey, capsys)
    assert rc == 1 and "post S2" in out and "not valid JSON" in out


def test_a_sealed_row_altered_is_reported_by_post(survey, capsys):
    _edit(
        survey,
        "UPDATE members SET tag = 'S4' WHERE tag = 'S5'",
        triggers=("members_no_update",),
    )
    rc, out = _check(survey, capsys)
    assert rc == 1 and "members rows" in out and "changed after they were written" in out


def test_an_engine_stamp_edited_is_reported(survey, capsys):
    _edit(
        survey,
        "UPDATE engine_stamps SET data_editions = '{}'",
        triggers=("engine_stamps_no_update",),
    )
    rc, out = _check(survey, capsys)
    assert rc == 1 and "engine stamp" in out


def test_every_device_s_rows_are_sealed(survey, tmp_path, shore, capsys):
    # a copy of the log writes as a new device: the close seals both devices' rows (the
    # devices found by index seeks, as SELECT DISTINCT finds them)
    copy = tmp_path / "copy.db"
    copy.write_bytes(survey.read_bytes())
    with Log.open(copy, author="bob") as lg:
        site = lg.find_site("Alder Row")
        lg.save_post(lg.find_visit(site.id, "visit").id, dict(shore, tag="S10"))
    conn = sqlite3.connect(copy)
    for table in ("members", "observations", "ratings"):
        wrote = conn.execute(f"SELECT DISTINCT device_id FROM {table}").fetchall()
        sealed = conn.execute(
            "SELECT DISTINCT device_id FROM seals WHERE tbl = ? ORDER BY device_id", [table]
        ).fetchall()
        assert len(wrote) == 2 and sealed == wrote, table
    conn.close()
    assert _check(copy, capsys)[0] == 0
