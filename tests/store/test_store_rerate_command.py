"""`fieldcheck rerate` re-rates a whole log in one pass and keeps the earlier ratings."""

from fieldcheck.cli import main
from fieldcheck.store import Log, seed_demo


def test_rerate_adds_ratings_and_keeps_old(tmp_path, capsys):
    path = tmp_path / "log.db"
    with Log.open(path) as log:
        seed_demo(log)
        post = log.posts()[0]
        before = len(log.ratings_for(log.head(post.member_id).id))
    assert main(["rerate", "--db", str(path)]) == 0
    assert "Re-rated" in capsys.readouterr().out
    with Log.open(path) as log:
        assert len(log.ratings_for(log.head(post.member_id).id)) == before + 1


def test_rerate_missing_log_is_exit_2(tmp_path, capsys):
    assert main(["rerate", "--db", str(tmp_path / "none.db")]) == 2
    assert "does not exist" in capsys.readouterr().err
