"""Where the log lives without --db (XDG data folder; FIELDCHECK_DB wins)."""

from __future__ import annotations

from pathlib import Path

from fieldcheck.cli import main
from fieldcheck.store import default_log_path


def test_default_log_path_follows_xdg_and_env(monkeypatch, tmp_path):
    monkeypatch.delenv("FIELDCHECK_DB", raising=False)
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path / "xdg"))
    assert default_log_path() == tmp_path / "xdg" / "fieldcheck" / "survey.db"
    monkeypatch.delenv("XDG_DATA_HOME")
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    assert default_log_path() == Path(tmp_path / "home/.local/share/fieldcheck/survey.db")
    monkeypatch.setenv("FIELDCHECK_DB", str(tmp_path / "mine.db"))
    assert default_log_path() == tmp_path / "mine.db"


def test_demo_without_db_writes_its_own_file_beside_the_log(monkeypatch, tmp_path, capsys):
    monkeypatch.setenv("FIELDCHECK_DB", str(tmp_path / "deep" / "folder" / "survey.db"))
    assert main(["demo"]) == 0
    demo = tmp_path / "deep" / "folder" / "demo-invented.fieldcheck"
    assert demo.is_file()
    assert not (tmp_path / "deep" / "folder" / "survey.db").exists()  # the user's log untouched
    assert main(["check", "--db", str(demo)]) == 0


def test_default_log_path_is_the_platforms_user_data_folder(monkeypatch):
    from platformdirs import user_data_dir

    monkeypatch.delenv("FIELDCHECK_DB", raising=False)
    assert default_log_path() == Path(user_data_dir("fieldcheck", appauthor=False)) / "survey.db"
