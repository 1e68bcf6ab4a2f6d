"""Sync with a PostgreSQL hub: same meaning as the folder sync (append-only, idempotent,
conflicts kept both ways, one transaction), and a URL is never a folder."""

from __future__ import annotations

import pytest

from fieldcheck.store import Log
from fieldcheck.store.hub.url import is_hub_url, redact
from fieldcheck.store.sync import TransferRefused, sync


def _field(tmp_path, name: str, shore, n: int = 3):
    log = Log.open(tmp_path / f"{name}.db", author=name, device=f"dev-{name}")
    site = log.add_site(f"site of {name}")
    visit = log.add_visit(site.id, name)
    for i in range(n):
        log.save_post(visit.id, dict(shore, tag=f"{name}-{i}"))
    return log, visit


def test_url_forms_and_redaction():
    assert is_hub_url("postgresql://a@h/db") and is_hub_url("postgres://h/db")
    assert not is_hub_url("/srv/office") and not is_hub_url("postgresql-folder")
    assert redact("postgresql://ann:s3cret@h:5432/db") == "postgresql://ann:***@h:5432/db"
    assert "s3cret" not in redact("postgresql://h/db?user=ann&password=s3cret&sslmode=require")


def test_other_url_is_refused_not_made_a_folder(tmp_path, monkeypatch, shore):
    monkeypatch.chdir(tmp_path)
    log, _ = _field(tmp_path, "ann", shore, 1)
    with pytest.raises(TransferRefused, match="cannot sync with"):
        sync(log, "https://office.example/hub")
    log.close()
    assert not (tmp_path / "https:").exists()


def test_first_sync_creates_hub_then_repeat_moves_nothing(tmp_path, shore, hub_url):
    log, _ = _field(tmp_path, "ann", shore)
    s = sync(log, hub_url)
    assert s.mode == "hub"
    assert s.sent["observations"] == 3 and s.sent["members"] == 3
    assert log.meta()["firm_id"]  # the field log adopted the firm the hub minted
    again = sync(log, hub_url)
    assert again.moved == 0 and "Already in step" in again.sentence()
    assert "***" in again.office or "@" not in again.office
    log.close()


@pytest.mark.slow
def test_two_inspectors_meet_through_the_hub(tmp_path, shore, hub_url):
    ann, _ = _field(tmp_path, "ann", shore, 2)
    ben, _ = _field(tmp_path, "ben", shore, 3)
    sync(ann, hub_url)
    assert sync(ben, hub_url).received["observations"] == 2  # ann's, already on the hub
    s = sync(ann, hub_url)
    assert s.received["observations"] == 3 and not s.sent
    assert {p.tag for p in ann.posts()} == {"ann-0", "ann-1", "ben-0", "ben-1", "ben-2"}
    assert sync(ben, hub_url).moved == 0
    for lg in (ann, ben):
        lg.close()


@pytest.mark.slow
def test_conflicting_edits_kept_both_ways(tmp_path, shore, hub_url):
    ann, visit = _field(tmp_path, "ann", shore, 1)
    sync(ann, hub_url)
    ben = Log.open(tmp_path / "ben.db", author="ben", device="dev-ben")
    sync(ben, hub_url)
    mid = ann.posts()[0].member_id
    bvisit = ben.visits()[0]
    ann.save_post(visit.id, dict(shore, tag="ann-0", height="9ft"), member_id=mid)
    ben.save_post(bvisit.id, dict(shore, tag="ann-0", height="7ft"), member_id=mid)
    sync(ann, hub_url)
    s = sync(ben, hub_url)
    assert s.conflicts == [mid] and mid in s.new_conflicts
    assert len(ben.history(mid)) == 3  # both revisions kept, none chosen
    assert sync(ann, hub_url).conflicts == [mid]
    for lg in (ann, ben):
        lg.close()


@pytest.mark.slow
def test_hub_rows_cannot_be_rewritten(tmp_path, shore, hub_url, pg_cluster):
    import psycopg

    log, _ = _field(tmp_path, "ann", shore, 1)
    sync(log, hub_url)
    log.close()
    with psycopg.connect(hub_url, autocommit=True) as conn:
        with pytest.raises(psycopg.Error, match="append-only"):
            conn.execute("UPDATE fieldcheck.observations SET reason = 'x'")
        with pytest.raises(psycopg.Error, match="append-only"):
            conn.execute("DELETE FROM fieldcheck.observations")


@pytest.mark.slow
def test_libpq_forms_env_and_password_file(tmp_path, shore, pg_cluster, hub_url, monkeypatch):
    """PG* environment variables and a password file, as libpq reads them."""
    db = hub_url.rsplit("/", 1)[1]
    log, _ = _field(tmp_path, "ann", shore, 1)
    monkeypatch.setenv("PGHOST", "127.0.0.1")
    monkeypatch.setenv("PGPORT", str(pg_cluster.port))
    monkeypatch.setenv("PGUSER", pg_cluster.user)
    monkeypatch.setenv("PGPASSWORD", pg_cluster.password)
    assert sync(log, f"postgresql:///{db}").sent["observations"] == 1
    monkeypatch.delenv("PGPASSWORD")
    pgpass = tmp_path / "pgpass"
    pgpass.write_text(f"127.0.0.1:{pg_cluster.port}:*:{pg_cluster.user}:{pg_cluster.password}\n")
    pgpass.chmod(0o600)
    monkeypatch.setenv("PGPASSFILE", str(pgpass))
    again = sync(log, f"postgres://{pg_cluster.user}@127.0.0.1:{pg_cluster.port}/{db}")
    assert again.moved == 0 and pg_cluster.password not in again.sentence()
    log.close()


def test_a_killed_syncs_scratch_folder_is_removed(tmp_path, shore, hub_url):
    stale = tmp_path / ".fieldcheck-hub-999999999-abc"  # no such process
    stale.mkdir()
    log, _ = _field(tmp_path, "ann", shore, 1)
    sync(log, hub_url)
    other, _ = _field(tmp_path, "ben", shore, 1)
    sync(other, hub_url)  # takes ann's post back through a scratch file
    assert not stale.exists()
    assert not list(tmp_path.glob(".fieldcheck-hub-*"))
    log.close()
    other.close()
