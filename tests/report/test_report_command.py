"""`fieldcheck report`: options, scopes, and one-sentence errors with exit code 2."""

from __future__ import annotations

from fieldcheck.cli import main


def test_report_command_writes_the_file(demo_log, tmp_path, capsys):
    out = tmp_path / "r.html"
    assert main(["report", "--db", str(demo_log.path), "--out", str(out)]) == 0
    assert out.read_text(encoding="utf-8").count('class="post"') == 9
    assert "Wrote the report of 9 posts" in capsys.readouterr().err


def test_report_command_visit_site_and_units(demo_log, tmp_path):
    out = tmp_path / "b.html"
    db = str(demo_log.path)
    assert (
        main(
            [
                "--units",
                "metric",
                "report",
                "--db",
                db,
                "--site",
                "14 Alder Row",
                "--visit",
                "Basement survey",
                "--out",
                str(out),
            ]
        )
        == 0
    )
    text = out.read_text(encoding="utf-8")
    assert text.count('class="post"') == 4 and "capacity (kN)" in text
    site = demo_log.sites()[0]
    assert main(["report", "--db", db, "--site", site.id, "--units", "us", "--out", str(out)]) == 0
    assert "capacity (lbf)" in out.read_text(encoding="utf-8")


def test_report_command_errors(demo_log, tmp_path, capsys):
    db = str(demo_log.path)
    assert main(["report", "--db", db, "--visit", "nope", "--out", str(tmp_path / "x.html")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--visit: no visit named" in err and "Basement survey" in err
    assert main(["report", "--db", db, "--site", "nowhere", "--out", str(tmp_path / "x.html")]) == 2
    assert "--site: no site named" in capsys.readouterr().err
    assert (
        main(["report", "--db", str(tmp_path / "missing.db"), "--out", str(tmp_path / "x.html")])
        == 2
    )
    assert "does not exist" in capsys.readouterr().err
    assert main(["report", "--db", db, "--out", str(tmp_path / "no" / "dir" / "x.html")]) == 2
    assert "cannot write" in capsys.readouterr().err
    assert not (tmp_path / "x.html").exists()
