"""The survey log's tables and their migrations (sqlite-utils ``Migrations``).

The schema version lives in the file twice: ``PRAGMA user_version`` (read before anything else,
so a log written by a newer fieldcheck is refused before we touch it) and the sqlite-utils
``_sqlite_migrations`` table (which migrations ran, and when). ``PRAGMA application_id`` marks
the file as ours.

Every table that holds what an inspector or the office recorded is append-only: BEFORE UPDATE
and BEFORE DELETE triggers abort. Each row carries a UUID made on the device that wrote it, the
device id, a per-device sequence number (ordering and sync never rely on laptop clocks), the
author and the time with its zone. ``meta`` and ``sync_state`` are bookkeeping and may change.

Version history
  1  sites, visits, members, observations, engine_stamps, ratings, attachments, meta
  2  reviews (office notes and sign-offs, synced back to the field), sync_state
  3  proposals (a remedy proposed for one revision of a post, never applied to it) and remedied
     (the revision that records a post as remedied, with the date the work was done)
  4  review records: reviews gain the kinds accept, override (with ``action``, the action set),
     require-remedy and settle; observations gain ``merges``, the second parent of a revision
     that settles a conflict (a head is a revision nobody supersedes or merges)
  5  views for the office to query the file directly (no tables change): current_posts (each
     current post with the fields of its record pulled out and its latest rating), latest_ratings
     and photos
  6  the index of observations by the revision they supersede holds only the revisions that
     supersede one (most revisions are a post's first and supersede none): the head queries ask
     for ``supersedes = <id>`` alone, so they use it as before, and an import of n posts writes n
     index entries fewer (no table changes; the office hub's index was already so)
"""

from __future__ import annotations

from sqlite_utils import Database, Migrations

from fieldcheck.store.connection import APPLICATION_ID

SCHEMA_VERSION = 6
# The schema version a transfer (a bundle) names: the last version that changed the columns of a
# synced table (merge.SYNC_TABLES). A version that changes only indexes or views (6) leaves it,
# so an older fieldcheck whose tables are the same still takes this one's bundles; a migration
# that adds or changes a synced table's columns raises it to its own number.
TRANSFER_SCHEMA_VERSION = 5
MIGRATION_SET = "fieldcheck"
migrations = Migrations(MIGRATION_SET)

# who wrote a row, where and when (time as ISO-8601 with zone, for people only)
_ORIGIN = """
    device_id TEXT NOT NULL,
    device_seq INTEGER NOT NULL CHECK (device_seq > 0),
    author TEXT NOT NULL,
    created_at TEXT NOT NULL CHECK (created_at LIKE '____-__-__T__:__:__%'),
    UNIQUE (device_id, device_seq)"""

APPEND_ONLY_V1 = (
    "sites",
    "visits",
    "members",
    "observations",
    "engine_stamps",
    "ratings",
    "attachments",
)
APPEND_ONLY_V2 = ("reviews",)
APPEND_ONLY_V3 = ("proposals", "remedied")
APPEND_ONLY = APPEND_ONLY_V1 + APPEND_ONLY_V2 + APPEND_ONLY_V3
REVIEW_KINDS = ("note", "sign-off", "accept", "override", "require-remedy", "settle")


def _append_only(db: Database, table: str) -> None:
    for op in ("UPDATE", "DELETE"):
        db.execute(
            f"CREATE TRIGGER IF NOT EXISTS {table}_no_{op.lower()} BEFORE {op} ON {table} "
            f"BEGIN SELECT RAISE(ABORT, '{table} is append-only: record a new revision "
            "instead'); END"
        )


@migrations(name="0001_initial")
def _v1(db: Database) -> None:
    statements = [
        """CREATE TABLE meta (key TEXT PRIMARY KEY, value TEXT NOT NULL) STRICT""",
        f"""CREATE TABLE sites (
            id TEXT PRIMARY KEY,
            name TEXT NOT NULL CHECK (length(name) > 0),
            address TEXT NOT NULL DEFAULT '',
            notes TEXT NOT NULL DEFAULT '',{_ORIGIN}) STRICT""",
        f"""CREATE TABLE visits (
            id TEXT PRIMARY KEY,
            site_id TEXT NOT NULL REFERENCES sites(id),
            name TEXT NOT NULL CHECK (length(name) > 0),
            inspector TEXT NOT NULL,
            started_at TEXT NOT NULL,
            instruments TEXT NOT NULL DEFAULT '[]' CHECK (json_valid(instruments)),
            level TEXT NOT NULL DEFAULT 'minimum',
            notes TEXT NOT NULL DEFAULT '',{_ORIGIN}) STRICT""",
        f"""CREATE TABLE members (
            id TEXT PRIMARY KEY,
            site_id TEXT NOT NULL REFERENCES sites(id),
            tag TEXT NOT NULL DEFAULT '',{_ORIGIN}) STRICT""",
        f"""CREATE TABLE observations (
            id TEXT PRIMARY KEY,
            member_id TEXT NOT NULL REFERENCES members(id),
            visit_id TEXT NOT NULL REFERENCES visits(id),
            supersedes TEXT REFERENCES observations(id),
            withdrawn INTEGER NOT NULL DEFAULT 0 CHECK (withdrawn IN (0, 1)),
            reason TEXT NOT NULL DEFAULT '',
            record_json TEXT NOT NULL CHECK (json_valid(record_json)),{_ORIGIN}) STRICT""",
        # engine version + reference-data editions, content-addressed (the same id on every
        # device), so 100,000 ratings share one row instead of repeating the editions
        """CREATE TABLE engine_stamps (
            id TEXT PRIMARY KEY,
            engine_version TEXT NOT NULL,
            data_editions TEXT NOT NULL CHECK (json_valid(data_editions)),
            created_at TEXT NOT NULL) STRICT""",
        f"""CREATE TABLE ratings (
            id TEXT PRIMARY KEY,
            observation_id TEXT NOT NULL REFERENCES observations(id),
            engine_version TEXT NOT NULL,
            stamp_id TEXT NOT NULL REFERENCES engine_stamps(id),
            capacity_n REAL,
            demand_n REAL,
            ratio REAL,
            action INTEGER,
            governing TEXT NOT NULL DEFAULT '',
            flags INTEGER NOT NULL DEFAULT 0,
            summary_json TEXT CHECK (summary_json IS NULL
                OR json_valid(summary_json)),{_ORIGIN}) STRICT""",
        f"""CREATE TABLE attachments (
            id TEXT PRIMARY KEY,
            observation_id TEXT REFERENCES observations(id),
            member_id TEXT NOT NULL REFERENCES members(id),
            path TEXT NOT NULL,
            sha256 TEXT NOT NULL CHECK (length(sha256) = 64),
            size_bytes INTEGER NOT NULL,
            caption TEXT NOT NULL DEFAULT '',{_ORIGIN}) STRICT""",
        "CREATE INDEX visits_site ON visits(site_id)",
        "CREATE INDEX members_site ON members(site_id)",
        "CREATE INDEX observations_member ON observations(member_id)",
        "CREATE INDEX observations_visit ON observations(visit_id)",
        "CREATE INDEX observations_supersedes ON observations(supersedes)",
        "CREATE INDEX ratings_observation ON ratings(observation_id)",
        "CREATE INDEX attachments_observation ON attachments(observation_id)",
        "CREATE INDEX attachments_member ON attachments(member_id)",
    ]
    for sql in statements:
        db.execute(sql)
    for table in APPEND_ONLY_V1:
        _append_only(db, table)
    db.execute(f"PRAGMA application_id = {APPLICATION_ID}")
    db.execute("PRAGMA user_version = 1")


@migrations(name="0002_reviews_sync")
def _v2(db: Database) -> None:
    db.execute(
        f"""CREATE TABLE reviews (
            id TEXT PRIMARY KEY,
            member_id TEXT REFERENCES members(id),
            observation_id TEXT REFERENCES observations(id),
            visit_id TEXT REFERENCES visits(id),
            kind TEXT NOT NULL CHECK (kind IN ('note', 'sign-off')),
            text TEXT NOT NULL DEFAULT '',{_ORIGIN}) STRICT"""
    )
    db.execute("CREATE INDEX reviews_member ON reviews(member_id)")
    db.execute("CREATE INDEX reviews_observation ON reviews(observation_id)")
    # bookkeeping for sync: what we last sent to / took from each peer (mutable on purpose)
    db.execute(
        """CREATE TABLE sync_state (
            peer_id TEXT NOT NULL,
            direction TEXT NOT NULL CHECK (direction IN ('sent', 'received')),
            device_id TEXT NOT NULL,
            high_water_seq INTEGER NOT NULL DEFAULT 0,
            updated_at TEXT NOT NULL,
            PRIMARY KEY (peer_id, direction, device_id)) STRICT"""
    )
    for table in APPEND_ONLY_V2:
        _append_only(db, table)
    db.execute("PRAGMA user_version = 2")


@migrations(name="0003_remedies")
def _v3(db: Database) -> None:
    # A remedy is a proposal linked to the revision it was proposed for (the post as found); the
    # post stays rated as found. When the work is done, a new revision records the post as
    # remedied and a ``remedied`` row ties it to the date (and the proposal it carried out).
    db.execute(
        f"""CREATE TABLE proposals (
            id TEXT PRIMARY KEY,
            member_id TEXT NOT NULL REFERENCES members(id),
            observation_id TEXT NOT NULL REFERENCES observations(id),
            visit_id TEXT NOT NULL REFERENCES visits(id),
            kind TEXT NOT NULL CHECK (length(kind) > 0),
            description TEXT NOT NULL CHECK (length(description) > 0),
            changes_json TEXT NOT NULL CHECK (json_valid(changes_json)),
            ratio REAL,{_ORIGIN}) STRICT"""
    )
    db.execute(
        f"""CREATE TABLE remedied (
            id TEXT PRIMARY KEY,
            member_id TEXT NOT NULL REFERENCES members(id),
            observation_id TEXT NOT NULL REFERENCES observations(id),
            proposal_id TEXT REFERENCES proposals(id),
            done_on TEXT NOT NULL CHECK (done_on LIKE '____-__-__'),{_ORIGIN}) STRICT"""
    )
    db.execute("CREATE INDEX proposals_member ON proposals(member_id)")
    db.execute("CREATE INDEX proposals_observation ON proposals(observation_id)")
    db.execute("CREATE INDEX remedied_member ON remedied(member_id)")
    db.execute("CREATE INDEX remedied_observation ON remedied(observation_id)")
    for table in APPEND_ONLY_V3:
        _append_only(db, table)
    db.execute("PRAGMA user_version = 3")


@migrations(name="0004_review_records")
def _v4(db: Database) -> None:
    # a revision that settles a conflict supersedes one head and merges the other
    db.execute("ALTER TABLE observations ADD COLUMN merges TEXT REFERENCES observations(id)")
    db.execute("CREATE INDEX observations_merges ON observations(merges) WHERE merges IS NOT NULL")
    # reviews: wider kinds and the action an override sets (SQLite cannot change a CHECK in
    # place: a new table, the rows copied, the old one dropped; nothing refers to reviews)
    kinds = ", ".join(f"'{k}'" for k in REVIEW_KINDS)
    db.execute(
        f"""CREATE TABLE reviews_v4 (
            id TEXT PRIMARY KEY,
            member_id TEXT REFERENCES members(id),
            observation_id TEXT REFERENCES observations(id),
            visit_id TEXT REFERENCES visits(id),
            kind TEXT NOT NULL CHECK (kind IN ({kinds})),
            text TEXT NOT NULL DEFAULT '',
            action INTEGER CHECK (action IS NULL OR action BETWEEN 0 AND 3),{_ORIGIN}) STRICT"""
    )
    cols = "id, member_id, observation_id, visit_id, kind, text, device_id, device_seq, author, "
    cols += "created_at"
    db.execute(f"INSERT INTO reviews_v4 ({cols}) SELECT {cols} FROM reviews ORDER BY rowid")
    db.execute("DROP TABLE reviews")
    db.execute("ALTER TABLE reviews_v4 RENAME TO reviews")
    db.execute("CREATE INDEX reviews_member ON reviews(member_id)")
    db.execute("CREATE INDEX reviews_observation ON reviews(observation_id)")
    db.execute("CREATE INDEX reviews_visit ON reviews(visit_id)")
    _append_only(db, "reviews")
    db.execute("PRAGMA user_version = 4")


# the record fields current_posts pulls out of record_json (as typed, text)
VIEW_FIELDS = (
    "size",
    "section",
    "diameter",
    "height",
    "top",
    "bottom",
    "species",
    "grade",
    "method",
    "duration",
    "moisture",
    "load",
    "notes",
)


@migrations(name="0005_office_views")
def _v5(db: Database) -> None:
    head = (
        "(SELECT h.id FROM observations h WHERE h.member_id = m.id"
        " AND NOT EXISTS (SELECT 1 FROM observations c WHERE c.supersedes = h.id)"
        " AND NOT EXISTS (SELECT 1 FROM observations c WHERE c.merges = h.id)"
        " ORDER BY h.device_seq DESC, h.id DESC LIMIT 1)"
    )
    db.execute(
        """CREATE VIEW latest_ratings AS
        SELECT r.* FROM ratings r
        WHERE r.rowid = (SELECT max(rowid) FROM ratings x
                         WHERE x.observation_id = r.observation_id)"""
    )
    fields = ",\n        ".join(f"json_extract(o.record_json, '$.{f}') AS {f}" for f in VIEW_FIELDS)
    db.execute(
        f"""CREATE VIEW current_posts AS
        SELECT m.id AS member_id, o.id AS observation_id, s.name AS site, v.name AS visit,
        substr(v.started_at, 1, 10) AS visit_date,
        json_extract(o.record_json, '$.tag') AS tag,
        json_extract(o.record_json, '$.location') AS location,
        {fields},
        r.ratio, r.action,
        CASE r.action WHEN 0 THEN 'no-action' WHEN 1 THEN 'monitor'
            WHEN 2 THEN 'repair-or-brace' WHEN 3 THEN 'make-safe-now'
            WHEN 4 THEN 'not-rated' ELSE 'not rated' END AS action_label,
        r.capacity_n / 1000.0 AS capacity_kN, r.demand_n / 1000.0 AS demand_kN, r.governing,
        r.engine_version, r.created_at AS rated_at, o.created_at AS revised_at, o.record_json
        FROM members m
        JOIN observations o ON o.id = {head}
        LEFT JOIN sites s ON s.id = m.site_id
        LEFT JOIN visits v ON v.id = o.visit_id
        LEFT JOIN latest_ratings r ON r.observation_id = o.id
        WHERE o.withdrawn = 0"""
    )
    db.execute(
        """CREATE VIEW photos AS
        SELECT a.id, a.member_id, a.observation_id,
        json_extract(o.record_json, '$.tag') AS tag, a.caption, a.path, a.sha256, a.size_bytes,
        a.created_at FROM attachments a LEFT JOIN observations o ON o.id = a.observation_id"""
    )
    db.execute("PRAGMA user_version = 5")


@migrations(name="0006_lean_indexes")
def _v6(db: Database) -> None:
    # a head is a revision nobody supersedes: NOT EXISTS (... WHERE c.supersedes = o.id) implies
    # supersedes IS NOT NULL, so SQLite uses a partial index for it (as observations_merges)
    db.execute("DROP INDEX IF EXISTS observations_supersedes")  # a log edited by hand may lack it
    db.execute(
        "CREATE INDEX observations_supersedes ON observations(supersedes) "
        "WHERE supersedes IS NOT NULL"
    )
    db.execute("PRAGMA user_version = 6")


MIGRATION_NAMES = (
    "0001_initial",
    "0002_reviews_sync",
    "0003_remedies",
    "0004_review_records",
    "0005_office_views",
    "0006_lean_indexes",
)  # index + 1 = the version it makes
