"""The hub's tables on the PostgreSQL server, their version and migrations, and the
administrator's one-time SQL (least-privilege roles).

Everything lives in one schema, ``fieldcheck``, so a hub shares a database with nothing by
accident. The synced tables have the same names and columns as the survey log's
(``fieldcheck.store.schema``) and are append-only on the server too: grants give inspectors
SELECT and INSERT only, and triggers refuse UPDATE, DELETE and TRUNCATE for every role.
References between tables are checked by each sync over the rows it brings, set-based
(``hub.sync.check_references``), rather than by per-row foreign-key triggers, which cost more than
the rest of a large first sync together; nothing is ever deleted, so a reference checked once
stays good. ``hub_meta`` holds ``schema_version``, ``hub_id`` and ``firm_id``;
``hub_migrations`` lists the migrations applied. A fieldcheck that finds a newer
``schema_version`` refuses the hub.

Version history
  1  sites, visits, members, observations (with ``merges``: the second parent of a revision that
     settles a conflict), engine_stamps, ratings, attachments, reviews (with ``action``: the
     action an override sets), proposals, remedied, hub_meta, hub_migrations, adopt_firm()
"""

from __future__ import annotations

SCHEMA = "fieldcheck"
HUB_SCHEMA_VERSION = 1
# one advisory-lock key for creating or migrating the hub ("fchk" again, as in the log file)
LOCK_KEY = 0x6663686B

_ORIGIN = """
    device_id TEXT NOT NULL,
    device_seq BIGINT NOT NULL CHECK (device_seq > 0),
    author TEXT NOT NULL,
    created_at TEXT NOT NULL,
    UNIQUE (device_id, device_seq)"""

APPEND_ONLY = (
    "sites",
    "visits",
    "members",
    "observations",
    "engine_stamps",
    "ratings",
    "attachments",
    "reviews",
    "proposals",
    "remedied",
)

# tables under row-level security (the administrator's SQL): COPY cannot write them, INSERT does
ROW_SECURITY = ("reviews",)

REVIEW_KINDS = ("note", "sign-off", "accept", "override", "require-remedy", "settle")

_TRIGGERS = "".join(
    f"CREATE TRIGGER {t}_append_only BEFORE UPDATE OR DELETE ON {t} "
    "FOR EACH ROW EXECUTE FUNCTION refuse_change();\n"
    f"CREATE TRIGGER {t}_no_truncate BEFORE TRUNCATE ON {t} "
    "FOR EACH STATEMENT EXECUTE FUNCTION refuse_change();\n"
    for t in APPEND_ONLY
)
_KINDS = ", ".join(f"'{k}'" for k in REVIEW_KINDS)

_V1 = f"""
CREATE SCHEMA IF NOT EXISTS {SCHEMA};
SET LOCAL search_path = {SCHEMA}, pg_temp;
CREATE TABLE hub_meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE hub_migrations (
    version INTEGER PRIMARY KEY,
    name TEXT NOT NULL,
    applied_at TIMESTAMPTZ NOT NULL DEFAULT now());
CREATE TABLE sites (
    id TEXT PRIMARY KEY,
    name TEXT NOT NULL CHECK (length(name) > 0),
    address TEXT NOT NULL DEFAULT '',
    notes TEXT NOT NULL DEFAULT '',{_ORIGIN});
CREATE TABLE visits (
    id TEXT PRIMARY KEY,
    site_id TEXT NOT NULL,
    name TEXT NOT NULL CHECK (length(name) > 0),
    inspector TEXT NOT NULL,
    started_at TEXT NOT NULL,
    instruments TEXT NOT NULL DEFAULT '[]',
    level TEXT NOT NULL DEFAULT 'minimum',
    notes TEXT NOT NULL DEFAULT '',{_ORIGIN});
CREATE TABLE members (
    id TEXT PRIMARY KEY,
    site_id TEXT NOT NULL,
    tag TEXT NOT NULL DEFAULT '',{_ORIGIN});
CREATE TABLE observations (
    id TEXT PRIMARY KEY,
    member_id TEXT NOT NULL,
    visit_id TEXT NOT NULL,
    supersedes TEXT,
    merges TEXT,
    withdrawn BIGINT NOT NULL DEFAULT 0 CHECK (withdrawn IN (0, 1)),
    reason TEXT NOT NULL DEFAULT '',
    record_json TEXT NOT NULL,{_ORIGIN});
CREATE TABLE engine_stamps (
    id TEXT PRIMARY KEY,
    engine_version TEXT NOT NULL,
    data_editions TEXT NOT NULL,
    created_at TEXT NOT NULL);
CREATE TABLE ratings (
    id TEXT PRIMARY KEY,
    observation_id TEXT NOT NULL,
    engine_version TEXT NOT NULL,
    stamp_id TEXT NOT NULL,
    capacity_n DOUBLE PRECISION,
    demand_n DOUBLE PRECISION,
    ratio DOUBLE PRECISION,
    action BIGINT,
    governing TEXT NOT NULL DEFAULT '',
    flags BIGINT NOT NULL DEFAULT 0,
    summary_json TEXT,{_ORIGIN});
CREATE TABLE attachments (
    id TEXT PRIMARY KEY,
    observation_id TEXT,
    member_id TEXT NOT NULL,
    path TEXT NOT NULL,
    sha256 TEXT NOT NULL CHECK (length(sha256) = 64),
    size_bytes BIGINT NOT NULL,
    caption TEXT NOT NULL DEFAULT '',{_ORIGIN});
CREATE TABLE reviews (
    id TEXT PRIMARY KEY,
    member_id TEXT,
    observation_id TEXT,
    visit_id TEXT,
    kind TEXT NOT NULL CHECK (kind IN ({_KINDS})),
    text TEXT NOT NULL DEFAULT '',
    action BIGINT CHECK (action IS NULL OR action BETWEEN 0 AND 3),{_ORIGIN});
CREATE TABLE proposals (
    id TEXT PRIMARY KEY,
    member_id TEXT NOT NULL,
    observation_id TEXT NOT NULL,
    visit_id TEXT NOT NULL,
    kind TEXT NOT NULL CHECK (length(kind) > 0),
    description TEXT NOT NULL CHECK (length(description) > 0),
    changes_json TEXT NOT NULL,
    ratio DOUBLE PRECISION,{_ORIGIN});
CREATE TABLE remedied (
    id TEXT PRIMARY KEY,
    member_id TEXT NOT NULL,
    observation_id TEXT NOT NULL,
    proposal_id TEXT,
    done_on TEXT NOT NULL,{_ORIGIN});
-- only the indexes sync reads through (each one costs every large first sync): heads and
-- conflicts by member, by parent and by second parent
CREATE INDEX observations_member ON observations(member_id);
CREATE INDEX observations_supersedes ON observations(supersedes) WHERE supersedes IS NOT NULL;
CREATE INDEX observations_merges ON observations(merges) WHERE merges IS NOT NULL;
CREATE FUNCTION refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION '% is append-only: record a new revision instead', TG_TABLE_NAME
        USING ERRCODE = 'restrict_violation';
END $$;
{_TRIGGERS}
-- the firm is set once, by the first sync that brings one; inspectors may not write hub_meta
CREATE FUNCTION adopt_firm(firm TEXT) RETURNS TEXT LANGUAGE sql SECURITY DEFINER
    SET search_path = {SCHEMA}, pg_temp AS $$
    UPDATE hub_meta SET value = firm WHERE key = 'firm_id' AND value = '';
    SELECT value FROM hub_meta WHERE key = 'firm_id';
$$;
REVOKE ALL ON FUNCTION adopt_firm(TEXT) FROM PUBLIC;
INSERT INTO hub_meta (key, value) VALUES
    ('hub_id', gen_random_uuid()::text), ('firm_id', ''), ('created_at', now()::text);
"""

# version -> (name, SQL); each runs in one transaction with the advisory lock held
MIGRATIONS: dict[int, tuple[str, str]] = {1: ("0001_initial", _V1)}


def migration_sql(version: int) -> str:
    """The SQL of one migration, ending by recording itself."""
    name, sql = MIGRATIONS[version]
    return (
        sql
        + f"\nINSERT INTO {SCHEMA}.hub_migrations (version, name) VALUES ({version}, '{name}');\n"
        + f"INSERT INTO {SCHEMA}.hub_meta (key, value) VALUES ('schema_version', '{version}') "
        + "ON CONFLICT (key) DO UPDATE SET value = excluded.value;\n"
    )


ROLES_SQL = """
-- Roles: fieldcheck_owner owns the tables; people log in as their own roles and are granted
-- fieldcheck_inspector (add observations, never change or delete a row) or fieldcheck_reviewer
-- (an inspector who may also record reviews: accept, override, require a remedy, settle, sign
-- off). Inspectors may record review notes only.
DO $$ BEGIN
    IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'fieldcheck_owner') THEN
        CREATE ROLE fieldcheck_owner NOLOGIN; END IF;
    IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'fieldcheck_inspector') THEN
        CREATE ROLE fieldcheck_inspector NOLOGIN; END IF;
    IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'fieldcheck_reviewer') THEN
        CREATE ROLE fieldcheck_reviewer NOLOGIN IN ROLE fieldcheck_inspector; END IF;
END $$;
GRANT fieldcheck_owner TO CURRENT_USER;
"""

GRANTS_SQL = f"""
ALTER SCHEMA {SCHEMA} OWNER TO fieldcheck_owner;
DO $$ DECLARE t TEXT; BEGIN
    FOR t IN SELECT tablename FROM pg_tables WHERE schemaname = '{SCHEMA}' LOOP
        EXECUTE format('ALTER TABLE {SCHEMA}.%I OWNER TO fieldcheck_owner', t);
    END LOOP;
END $$;
ALTER FUNCTION {SCHEMA}.adopt_firm(TEXT) OWNER TO fieldcheck_owner;
ALTER FUNCTION {SCHEMA}.refuse_change() OWNER TO fieldcheck_owner;
REVOKE ALL ON SCHEMA {SCHEMA} FROM PUBLIC;
GRANT USAGE ON SCHEMA {SCHEMA} TO fieldcheck_inspector;
GRANT SELECT ON ALL TABLES IN SCHEMA {SCHEMA} TO fieldcheck_inspector;
GRANT INSERT ON {SCHEMA}.sites, {SCHEMA}.visits, {SCHEMA}.members, {SCHEMA}.observations,
    {SCHEMA}.engine_stamps, {SCHEMA}.ratings, {SCHEMA}.attachments, {SCHEMA}.reviews,
    {SCHEMA}.proposals, {SCHEMA}.remedied TO fieldcheck_inspector;
GRANT EXECUTE ON FUNCTION {SCHEMA}.adopt_firm(TEXT) TO fieldcheck_inspector;
-- reviews: an inspector's rows may only be notes; a reviewer's may be any kind
ALTER TABLE {SCHEMA}.reviews ENABLE ROW LEVEL SECURITY;
DROP POLICY IF EXISTS reviews_read ON {SCHEMA}.reviews;
DROP POLICY IF EXISTS reviews_notes ON {SCHEMA}.reviews;
DROP POLICY IF EXISTS reviews_reviewer ON {SCHEMA}.reviews;
CREATE POLICY reviews_read ON {SCHEMA}.reviews FOR SELECT USING (true);
CREATE POLICY reviews_notes ON {SCHEMA}.reviews FOR INSERT TO fieldcheck_inspector
    WITH CHECK (kind = 'note');
CREATE POLICY reviews_reviewer ON {SCHEMA}.reviews FOR INSERT TO fieldcheck_reviewer
    WITH CHECK (true);
"""


def admin_sql() -> str:
    """What an office administrator runs once (as the database owner or a superuser), e.g.
    ``fieldcheck hub-sql | psql -v ON_ERROR_STOP=1 -d survey``: roles, the hub schema owned by
    fieldcheck_owner, grants. Then one login role per person."""
    body = "".join(migration_sql(v) for v in sorted(MIGRATIONS))
    return (
        f"-- fieldcheck hub, schema version {HUB_SCHEMA_VERSION}: run once as the database owner "
        "or a superuser,\n-- e.g. fieldcheck hub-sql | psql -v ON_ERROR_STOP=1 -d survey\n"
        "BEGIN;\n" + ROLES_SQL + body + GRANTS_SQL + "COMMIT;\n"
        "-- Then one login role per person (the password goes in their ~/.pgpass, never in a "
        "URL):\n"
        "--   CREATE ROLE ann LOGIN PASSWORD '...' IN ROLE fieldcheck_inspector;\n"
        "--   CREATE ROLE ben LOGIN PASSWORD '...' IN ROLE fieldcheck_reviewer;\n"
        "-- Schema upgrades of a later fieldcheck run as fieldcheck_owner: "
        "GRANT fieldcheck_owner TO <administrator>.\n"
    )
