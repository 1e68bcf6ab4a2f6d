"""Photos for real: attached with a caption and a SHA-256 (copied into the log's photo folder),
carried by sync and verified by hash on arrival, embedded in the report as a reduced copy."""

from __future__ import annotations

import base64
import hashlib
import io
import re

import pytest
from PIL import Image

from fieldcheck.cli import main
from fieldcheck.report.html import render_report
from fieldcheck.store import Log
from fieldcheck.store.photos import photo_dir, sync_photos


def _photo(path, size=(1600, 1200), colour=(120, 90, 60)):
    Image.new("RGB", size, colour).save(path, "JPEG", quality=90)
    return path


def test_attach_command_copies_records_and_the_report_embeds_a_reduced_copy(
    demo_log, tmp_path, capsys
):
    src = _photo(tmp_path / "P1040231.JPG")
    digest = hashlib.sha256(src.read_bytes()).hexdigest()
    db = str(demo_log.path)
    argv = ["attach", "--db", db, "--post", "S4", str(src), "--caption", "crushing at the cap"]
    assert main(argv) == 0
    assert "Attached" in capsys.readouterr().err
    (a,) = demo_log.attachments()
    assert (a.sha256, a.caption, a.size_bytes) == (
        digest,
        "crushing at the cap",
        src.stat().st_size,
    )
    kept = photo_dir(demo_log.path) / f"{digest}.jpg"
    assert kept.is_file() and a.path == str(kept)
    assert src.is_file()  # the original is left as it is
    out = render_report(demo_log)
    m = re.search(
        r'<img src="data:image/jpeg;base64,([A-Za-z0-9+/=]+)" alt="crushing at the cap">', out
    )
    assert m, "no embedded photo"
    with Image.open(io.BytesIO(base64.b64decode(m.group(1)))) as im:
        assert max(im.size) <= 640 and im.size[0] > im.size[1]  # reduced, proportions kept
    assert digest in out


def test_a_changed_photo_is_not_shown(demo_log, tmp_path):
    post = next(p for p in demo_log.posts() if p.tag == "B1")
    a = demo_log.attach_photo(post.observation_id, _photo(tmp_path / "b1.jpg"), "split")
    _photo(__import__("pathlib").Path(a.path), colour=(0, 0, 0))  # changed after attaching
    (tmp_path / "b1.jpg").unlink()
    out = render_report(demo_log)
    assert "<img" not in out and "its sha256 differs" in out


def test_attach_errors_are_one_sentence(demo_log, tmp_path, capsys):
    db = str(demo_log.path)
    assert main(["attach", "--db", db, "--post", "Z9", str(_photo(tmp_path / "x.jpg"))]) == 2
    assert "--post: no current post tagged 'Z9'" in capsys.readouterr().err
    assert main(["attach", "--db", db, "--post", "S4", str(tmp_path / "none.jpg")]) == 2
    assert "is not a file" in capsys.readouterr().err


def test_sync_carries_photo_files_verified_by_hash(survey_log, tmp_path):
    post = next(p for p in survey_log.posts() if p.tag == "S4")
    a = survey_log.attach_photo(post.observation_id, _photo(tmp_path / "s4.jpg"), "cap")
    office = tmp_path / "office.db"
    assert main(["sync", "--db", str(survey_log.path), str(office), "--quiet"]) == 0
    got = photo_dir(office) / f"{a.sha256}.jpg"
    assert got.is_file() and hashlib.sha256(got.read_bytes()).hexdigest() == a.sha256
    with Log.open(office) as off:
        (b,) = off.attachments()
        assert off.photo_file(b) == got
    # a second inspector takes it back from the office
    other = tmp_path / "other.db"
    Log.open(other, author="second").close()
    assert main(["sync", "--db", str(other), str(office), "--quiet"]) == 0
    assert (photo_dir(other) / f"{a.sha256}.jpg").is_file()


def test_a_photo_that_arrives_different_is_refused(demo_log, tmp_path):
    post = next(p for p in demo_log.posts() if p.tag == "S4")
    a = demo_log.attach_photo(post.observation_id, _photo(tmp_path / "s4.jpg"), "cap")
    folder = tmp_path / "shared"
    folder.mkdir()
    # the copy in the log's own folder is damaged: it must not travel as if it were the photo
    _photo(__import__("pathlib").Path(a.path), colour=(1, 2, 3))
    res = sync_photos(demo_log, folder)
    assert res.sent == 0 and len(res.refused) == 1 and "differs" in res.refused[0]
    assert not list((folder / "photos").glob("*.jpg"))


@pytest.mark.parametrize("url", ["postgresql://h/db"])
def test_a_hub_carries_no_files(demo_log, url):
    assert sync_photos(demo_log, url).sent == 0
