"""`fieldcheck rate`: the --json contract, one-sentence errors with exit code 2, batches."""

import csv
import json

import pytest

from fieldcheck.cli import main

LBF = 4.4482216152605
EXAMPLE_A = [
    "rate",
    "--size",
    "4x4",
    "--height",
    "10ft",
    "--species",
    "douglas-fir-larch",
    "--grade",
    "no2",
    "--top",
    "pinned",
    "--bottom",
    "pinned",
]


def test_example_a_json(capsys):
    # no load: the capacity at the duration stated, here ten years (CD 1.0, NDS 2018 Table 2.3.2)
    assert main([*EXAMPLE_A, "--duration", "ten-years", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    # NDS 2018 §3.7.1, 4x4 No.2 DF-L pinned, computed by hand at 10 ft (NDS 2018 §3.7.1): 4,665.07
    # lb, Cp 0.245296
    assert out["allowable_load_lbf"] == pytest.approx(4665.1, abs=0.05)
    assert out["allowable_load_kN"] == pytest.approx(4665.07 * LBF / 1000, rel=1e-5)
    assert out["stability_factor"] == pytest.approx(0.245296, abs=1e-6)
    assert out["slenderness_ratio"] == pytest.approx(34.286, abs=1e-3)
    assert out["effective_length_factor"] == 1.0
    assert out["within_slenderness_limit"] is True
    assert out["demand_capacity_ratio"] is None
    assert out["governing_check"] == "column"
    for key in ("action", "checks", "warnings"):
        assert key in out
    assert all({"name", "capacity_kN", "ratio", "clause"} <= set(c) for c in out["checks"])


def test_ratio_with_load(capsys):
    # worked example A is at CD 1.0 (NDS 2018 Table 2.3.2, ten years)
    assert main([*EXAMPLE_A, "--load", "4000lbf", "--duration", "ten-years", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["demand_capacity_ratio"] == pytest.approx(4000 / 4665.07, abs=1e-4)


def test_text_output_shows_cautions_and_working(capsys):
    assert main([*EXAMPLE_A, "--load", "4 kip", "--working"]) == 0
    out = capsys.readouterr().out
    assert "screening aid" in out and "licensed engineer" in out and "clear the area" in out
    assert "NDS 2018 §3.7.1" in out and "Working:" in out


@pytest.mark.parametrize(
    ("option", "value"),
    [
        ("--height", "ten feet"),
        ("--height", "-3 ft"),
        ("--height", "3,5 m"),
        ("--size", "4by4"),
        ("--section", "89mm"),
        ("--diameter", "-7in"),
        ("--load", "4 kg"),
        ("--top", "wobbly"),
        ("--bottom", "nailed"),
        ("--species", "balsa"),
        ("--grade", "premium"),
        ("--moisture", "-3%"),
        ("--duration", "a while"),
        ("--method", "csa"),
        ("--brace-weak", "40ft"),
        ("--plies", "x"),
        ("--temperature", "90 C"),
        ("--end-contact", "0%"),
        ("--construction", "maybe"),
        ("--incised", "perhaps"),
        ("--cap-species", "teak"),
        ("--cap-bearing", "-1in"),
    ],
)
def test_bad_input_is_one_sentence_and_exit_2(capsys, option, value):
    argv = list(EXAMPLE_A)
    if option in argv:
        i = argv.index(option)
        del argv[i : i + 2]
    argv.append(f"{option}={value}")  # the = form, so a value may start with a minus sign
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith("fieldcheck: ")
    assert len(err.splitlines()) == 1
    assert "Traceback" not in err


def test_unknown_option_is_exit_2(capsys):
    assert main([*EXAMPLE_A, "--heigth", "3m"]) == 2
    assert "Traceback" not in capsys.readouterr().err


def test_batch_rates_good_rows_and_names_bad_ones(tmp_path, capsys):
    src = tmp_path / "in.csv"
    with src.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["tag", "size", "height", "species", "grade", "load", "duration"])
        w.writerow(["P1", "4x4", "10ft", "douglas-fir-larch", "no2", "4000lbf", "ten-years"])
        w.writerow(["P2", "4x4", "ten feet", "douglas-fir-larch", "no2", "4000lbf", ""])
        w.writerow(["P3", "6x6", "10 ft", "douglas-fir-larch", "no1", "12 kip", "ten-years"])
    out = tmp_path / "out.csv"
    assert main(["rate", "--batch", str(src), "--out", str(out)]) == 1
    err = capsys.readouterr().err
    assert "row 2: height: " in err and "height: height" not in err
    rows = list(csv.DictReader(out.open()))
    assert [r["tag"] for r in rows] == ["P1", "P2", "P3"]
    assert float(rows[0]["allowable_load_lbf"]) == pytest.approx(
        4665.1, abs=0.05
    )  # worked example A
    assert rows[1]["error"].startswith("height:") and rows[1]["allowable_load_lbf"] == ""
    # judgement: a row not read is not rated, never a blank action
    assert rows[1]["action"] == "not-rated" and rows[1]["demand_capacity_ratio"] == ""
    assert float(rows[2]["allowable_load_lbf"]) == pytest.approx(
        20918.2, abs=0.1
    )  # worked example B


def test_batch_output_is_the_same_in_engine_blocks(tmp_path, monkeypatch):
    # a batch above one engine block keeps only the columns the CSV asks for (rate(keep=...))
    from fieldcheck.engine import rating as rating_mod

    src = tmp_path / "in.csv"
    with src.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["tag", "size", "height", "species", "grade", "load", "top", "construction"])
        for i, (size, h, top) in enumerate(
            [
                ("4x4", "10ft", "pinned"),
                ("6x6", "10 ft", "fixed"),
                ("2x4", "12ft", "pinned"),
                ("4x6", "8ft", "guided"),
            ]
            * 3
        ):
            w.writerow(
                [
                    f"P{i}",
                    size,
                    h,
                    "douglas-fir-larch",
                    "no2",
                    "4000lbf",
                    top,
                    "yes" if i % 2 else "",
                ]
            )
    outs = []
    for block in (1 << 16, 3):
        monkeypatch.setattr(rating_mod, "BLOCK", block)
        out = tmp_path / f"out{block}.csv"
        assert main(["rate", "--batch", str(src), "--out", str(out)]) == 0
        outs.append(out.read_text())
    assert outs[0] == outs[1]


def test_bare_fieldcheck_help_never_a_traceback(capsys):
    assert main(["--help"]) == 0
    assert main(["rate", "--help"]) == 0
    assert "Traceback" not in capsys.readouterr().err


def test_ignored_columns_are_carried_through_to_the_results(tmp_path, capsys):
    # judgement: --ignore-unknown-columns leaves a column out of the rating, never out of what
    # the user keeps: the results carry it unread, so even written over its input nothing is lost
    src = tmp_path / "in.csv"
    src.write_text(
        "tag,Photo Ref,size,height,species,grade,load,top,bottom\n"
        "A,IMG_0042,4x4,8ft,dfl,no2,4kip,pinned,pinned\n"
        "B,IMG_0043,4x4,tall,dfl,no2,4kip,pinned,pinned\n"
    )
    args = ["rate", "--batch", str(src), "--ignore-unknown-columns"]
    assert main([*args, "--out", str(src)]) == 1  # row B has a field error
    assert "carried through" in capsys.readouterr().err
    rows = list(csv.DictReader(src.open()))
    assert [r["Photo Ref"] for r in rows] == ["IMG_0042", "IMG_0043"]
    assert rows[0]["action"] == "no-action" and rows[1]["action"] == "not-rated"
    # read again, the carried column is ignored again (and carried again), the old results
    # left out and written anew
    assert main([*args, "--out", str(tmp_path / "again.csv")]) == 1
    again = list(csv.DictReader((tmp_path / "again.csv").open()))
    assert [r["Photo Ref"] for r in again] == ["IMG_0042", "IMG_0043"]
    assert list(again[0]).count("action") == 1


def test_working_gives_the_users_units_first_as_the_interface_and_report_do(capsys):
    # common practice, no source: a US customary user reads inches and psi first (the report and
    # the interface write '3.5 in (88.9 mm)'); metric reads mm first; EC5 speaks kN and mm first
    post = ["rate", "--size", "4x4", "--height", "10ft", "--species", "dfl", "--grade", "no2"]
    post += ["--top", "pinned", "--bottom", "pinned", "--load", "4000lbf", "--working"]
    assert main(post) == 0
    out = capsys.readouterr().out
    assert "Section d1 x d2 (measured or dressed): 3.5 in (88.9 mm) x 3.5 in (88.9 mm)" in out
    assert "Reference Fc: 1,350 psi (9.308 MPa)" in out  # NDS Supplement Table 4A, DF-L No.2
    assert "lu = 120 in (3048 mm)" in out and "3998.959" not in out  # four figures, as shown
    assert main(["--units", "metric", *post]) == 0
    out = capsys.readouterr().out
    assert "88.9 mm (3.5 in) x 88.9 mm (3.5 in)" in out
    ec5 = ["rate", "--method", "ec5", "--class", "C24", "--section", "100mmx100mm", "--load"]
    assert main([*ec5, "20kN", "--height", "2.5m", "--top", "pinned", "--working"]) == 0
    out = capsys.readouterr().out
    assert "100 mm (3.937 in) x 100 mm (3.937 in)" in out, out


def test_remedies_give_the_users_units_first_in_the_text_and_the_report(capsys, tmp_path):
    # common practice, no source: a US customary user reads '60 in (1524 mm)', as the working
    post = ["rate", "--size", "4x4", "--height", "10ft", "--species", "dfl", "--grade", "no2"]
    post += ["--top", "pinned", "--bottom", "pinned", "--load", "5000lbf"]
    assert main(post) in (0, 1)
    out = capsys.readouterr().out
    assert "Brace at mid-height, 60.0 in (1524 mm) from the bottom" in out, out
    assert main(["--units", "metric", *post]) in (0, 1)
    assert "1524 mm (60.0 in)" in capsys.readouterr().out
    from fieldcheck.report.html import render_report
    from fieldcheck.store import Log

    with Log.open(tmp_path / "s.db", author="t", device="d") as log:
        v = log.add_visit(log.add_site("S").id, "V")
        rec = dict(zip(post[1::2], post[2::2], strict=True))
        log.save_post(v.id, {k.lstrip("-"): val for k, val in rec.items()})
        html = render_report(log)
    assert "Brace at mid-height, 60.0 in (1524 mm) from the bottom" in html


def test_batch_summary_counts_a_post_with_no_load_as_not_rated(tmp_path, capsys):
    # judgement: not rated is one state on every surface (DEVELOPERS.md); the import says
    # '1 not rated (load missing: give it)', so the batch summary must not call it rated
    src = tmp_path / "in.csv"
    src.write_text(
        "tag,size,height,top,bottom,species,grade,load\n"
        "A,4x4,8ft,pinned,pinned,dfl,no2,2kip\n"
        "B,4x4,8ft,pinned,pinned,dfl,no2,\n"
        "C,4x4,tall,pinned,pinned,dfl,no2,2kip\n"
    )
    assert main(["rate", "--batch", str(src), "--out", str(tmp_path / "o.csv")]) == 1
    err = capsys.readouterr().err
    assert "rated 1 of 3 posts; 1 not rated (load missing: give it)" in err, err
    assert "1 row needs correcting" in err, err
