"""What people expect of a well-kept command line: --version with the engine and reference-data
editions, --json on check/sync/import/rerate, rate --fail-on for scripts, the valid values in
--help, defaults from the config file and FIELDCHECK_UNITS, '-' for standard input and output,
progress bars on a terminal and none in a pipe."""

from __future__ import annotations

import io
import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from fieldcheck.cli import main
from fieldcheck.commands.progress import counted, progress_bar
from fieldcheck.engine.refdata import editions
from fieldcheck.store import Log, seed_demo

ROOT = Path(__file__).resolve().parent.parent
POSTS = (
    "tag,size,height,species,grade,load\n"
    "P1,4x4,8ft,douglas-fir-larch,no2,3000lbf\n"
    "P2,6x6,9ft,southern-pine,no1,30000lbf\n"
)
LIGHT = ["rate", "--size", "6x6", "--height", "8ft", "--species", "douglas-fir-larch"]
LIGHT += ["--grade", "no1", "--top", "pinned", "--bottom", "pinned", "--load", "1000lbf"]


def _run(argv, stdin: str = "", env: dict | None = None) -> subprocess.CompletedProcess:
    e = {**os.environ, "PYTHONPATH": str(ROOT), **(env or {})}
    return subprocess.run(
        [sys.executable, "-m", "fieldcheck", *argv],
        input=stdin,
        capture_output=True,
        text=True,
        env=e,
        timeout=120,
        check=False,
    )


@pytest.fixture
def demo_db(tmp_path):
    path = tmp_path / "demo.db"
    with Log.open(path, author="tester") as log:
        seed_demo(log)
    return path


def test_version_names_the_engine_and_every_reference_table(capsys):
    assert main(["--version"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("fieldcheck ") and "\nengine " in out
    for name, edition in editions().items():
        assert f"  {name}: {edition or 'edition not recorded'}" in out


def test_help_lists_the_valid_values(capsys):
    assert main(["rate", "--help"]) == 0
    text = " ".join(capsys.readouterr().out.split())
    assert "douglas-fir-larch, hem-fir" in text and "southern- pine" not in text.replace(
        "southern- pine", "southern-pine"
    )
    assert "select- structural" in text or "select-structural" in text
    assert "one of asd, lrfd, ec5" in text
    assert "C24" in text and "D40" in text  # EN 338 classes for --class


def test_rate_fail_on(capsys):
    assert main([*LIGHT, "--fail-on", "monitor"]) == 0
    heavy = [*LIGHT[:-1], "40000lbf"]
    assert main([*heavy, "--fail-on", "make-safe-now"]) == 3
    assert main([*heavy, "--fail-on", "make-safe-now", "--json"]) == 3
    assert main(heavy) == 0  # without --fail-on the rating alone never fails the command
    no_load = LIGHT[:-2]
    assert main([*no_load, "--fail-on", "make-safe-now"]) == 3  # not rated is not a pass
    assert main([*LIGHT, "--fail-on", "nonsense"]) == 2
    capsys.readouterr()


def test_a_post_with_no_load_is_not_rated_even_when_its_condition_calls_for_repair(capsys):
    # judgement: decay alone calls for repair, but with the load not known the post may well be
    # one to make safe now; "not rated: load missing" is the more urgent state (the report's
    # order), the decay stays said in its warning, and --fail-on counts it as worse than any
    decayed = [*LIGHT[:-2], "--decay-wide", "40 mm", "--decay-at", "bottom"]
    assert main([*decayed, "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["action"] == "not-rated" and out["state"] == "not rated: load missing"
    assert out.get("due_days") is None
    assert any("decay" in w.lower() for w in out["warnings"])
    assert main([*decayed, "--fail-on", "make-safe-now"]) == 3
    capsys.readouterr()
    assert main([*decayed, "--load", "1000lbf", "--json"]) == 0  # with its load: rated
    assert json.loads(capsys.readouterr().out)["action"] == "repair-or-brace"


def test_batch_from_standard_input_to_standard_output_with_fail_on():
    p = _run(["rate", "--batch", "-", "--out", "-", "--fail-on", "repair-or-brace"], POSTS)
    assert p.returncode == 3, p.stderr
    assert p.stdout.splitlines()[0].startswith("tag,size") and len(p.stdout.splitlines()) == 3
    assert "--fail-on repair-or-brace: at least one post fails" in p.stderr
    assert (
        _run(
            ["rate", "--batch", "-", "--fail-on", "make-safe-now"],
            POSTS.replace("30000lbf", "3000lbf"),
        ).returncode
        == 0
    )


def test_import_from_standard_input_with_json(tmp_path):
    db = tmp_path / "in.db"
    p = _run(["import", "--db", str(db), "-", "--site", "S", "--visit", "V", "--json"], POSTS)
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    assert (out["imported"], out["read"], out["errors"], out["site"]) == (2, 2, [], "S")
    assert "\x1b[" not in p.stderr  # no progress bar or escape codes in a pipe


def test_import_names_the_rows_left_out_in_plain_words(tmp_path, capsys):
    """One bad row: 'row' and 'it', not '1 rows ... those rows'; the bad cell is named by row
    and column on standard error, and the exit code says not everything went in."""
    src = tmp_path / "posts.csv"
    src.write_text(POSTS.replace("P2,6x6,9ft", "P2,6x6,abc"), encoding="utf-8")
    db = tmp_path / "in.db"
    argv = ["import", "--db", str(db), str(src), "--site", "S", "--visit", "V", "--quiet"]
    assert main(argv) == 1
    out, err = capsys.readouterr()
    assert "Imported 1 of 2 posts" in out
    assert "1 row left out: correct it and import a file of the header and that row alone" in out
    assert "row 2: height:" in err
    src.write_text(POSTS.replace("9ft", "abc").replace("8ft", "x"), encoding="utf-8")
    assert main([*argv[:2], str(tmp_path / "in2.db"), *argv[3:]]) == 1
    assert "2 rows left out: correct them and import a file of the header and those rows alone" in (
        capsys.readouterr().out
    )
    # the whole file again, corrected, into the same visit: the tags now held twice are named
    src.write_text(POSTS, encoding="utf-8")
    assert main(argv) == 0
    err = capsys.readouterr().err
    assert "1 tag is now held by more than one post" in err and "(e.g. P1)" in err


def test_check_and_rerate_json(demo_db, capsys):
    assert main(["check", "--db", str(demo_db), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["sound"] is True and out["problems"] == [] and out["schema_version"] >= 5
    assert out["older_ratings"] == 0  # the demo was rated by this engine
    assert main(["rerate", "--db", str(demo_db), "--json", "--quiet"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["rated"] == 9 and out["unrated"] == 0 and out["errors"] == []


def test_check_says_when_ratings_came_from_an_older_engine(tmp_path, capsys, older_engine):
    # judgement: a stored action of another engine version is said, not a problem (exit 0)
    older_engine(True)
    db = tmp_path / "old.db"
    with Log.open(db, author="tester") as log:
        log.import_rows([{"size": "4x4", "height": "8ft", "load": "1kip"}], "S", "V")
    older_engine(False)
    assert main(["check", "--db", str(db)]) == 0
    assert "1 post rated by an older engine" in capsys.readouterr().out
    assert main(["rerate", "--db", str(db), "--quiet"]) == 0
    capsys.readouterr()
    assert main(["check", "--db", str(db), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["older_ratings"] == 0


def test_sync_json(tmp_path, capsys):
    field, office = tmp_path / "field.db", tmp_path / "office.db"
    with Log.open(field, author="tester") as log:
        log.import_rows(
            [
                dict(zip(POSTS.splitlines()[0].split(","), r.split(","), strict=True))
                for r in POSTS.splitlines()[1:]
            ],
            "S",
            "V",
        )
    assert main(["sync", "--db", str(field), str(office), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["mode"] == "file" and out["sent"]["observations"] == 2 and out["refused"] == []
    assert main(["sync", "--db", str(field), str(office), "--json"]) == 0
    again = json.loads(capsys.readouterr().out)
    assert sum(again["sent"].values()) == 0  # a repeated sync moves nothing


def test_units_and_inspector_defaults_from_config_and_environment(tmp_path, monkeypatch, capsys):
    cfg = tmp_path / "config.toml"
    cfg.write_text('units = "metric"\ninspector = "R. Okafor"\n', encoding="utf-8")
    monkeypatch.setenv("FIELDCHECK_CONFIG", str(cfg))
    assert main(LIGHT) == 0
    assert " kN" in capsys.readouterr().out
    monkeypatch.setenv("FIELDCHECK_UNITS", "us")
    assert main(LIGHT) == 0
    assert " lbf" in capsys.readouterr().out
    csv = tmp_path / "p.csv"
    csv.write_text(POSTS, encoding="utf-8")
    db = tmp_path / "i.db"
    assert main(["import", "--db", str(db), str(csv), "--site", "S", "--visit", "V"]) == 0
    with Log.open(db, readonly=True) as log:
        assert log.visits()[0].inspector == "R. Okafor"


class _Tty(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_progress_bar_on_a_terminal_and_none_in_a_pipe():
    with progress_bar(stream=io.StringIO()) as bar:
        assert bar is None  # a pipe: no bar
    with progress_bar(quiet=True, stream=_Tty()) as bar:
        assert bar is None
    tty = _Tty()
    with progress_bar(stream=tty) as bar:
        assert callable(bar)
        assert list(counted(range(1200), bar, "importing")) == list(range(1200))
        bar(5, 10, "writing")
    assert list(counted([1, 2], None, "x")) == [1, 2]
