"""How the invented demo's rows are recognised in a log that holds them without the demo's mark.

Older versions of fieldcheck wrote the demo survey into the user's own log and synced it, so a
user's log, an office log or a hub may hold it beside real surveys. Every version seeded it the
same way: a site whose address is "14 Alder Row, Millbrook (invented)" and whose notes begin
"Invented demo:". Everything recorded under that site (visits, posts, revisions, ratings, photos,
office notes, remedies) is the demo's. Nothing here deletes or changes a row: the log is
append-only; callers leave the rows out of what they send, list, count and export.
"""

from __future__ import annotations

DEMO_META = "demo"  # meta key: the log is the invented demo's own file (the demo is its survey)

# the demo's site as seeded by every version (SITE_ADDRESS and the notes below never change)
DEMO_SITES = (
    "SELECT id FROM {s}.sites WHERE address = '14 Alder Row, Millbrook (invented)' "
    "OR notes LIKE 'Invented demo:%'"
)
_DEMO_MEMBERS = "SELECT id FROM {s}.members WHERE site_id IN (" + DEMO_SITES + ")"
_DEMO_VISITS = "SELECT id FROM {s}.visits WHERE site_id IN (" + DEMO_SITES + ")"
_DEMO_OBS = "SELECT id FROM {s}.observations WHERE member_id IN (" + _DEMO_MEMBERS + ")"
# per synced table: the condition a row meets when it belongs to the demo's site
_DEMO_ROWS = {
    "sites": "id IN (" + DEMO_SITES + ")",
    "visits": "site_id IN (" + DEMO_SITES + ")",
    "members": "site_id IN (" + DEMO_SITES + ")",
    "observations": "member_id IN (" + _DEMO_MEMBERS + ")",
    "ratings": "observation_id IN (" + _DEMO_OBS + ")",
    "attachments": "member_id IN (" + _DEMO_MEMBERS + ")",
    "reviews": "coalesce(member_id, '') IN (" + _DEMO_MEMBERS + ") "
    "OR coalesce(visit_id, '') IN (" + _DEMO_VISITS + ")",
    "proposals": "member_id IN (" + _DEMO_MEMBERS + ")",
    "remedied": "member_id IN (" + _DEMO_MEMBERS + ")",
}


def kept_out(table: str, schema: str = "main") -> str:
    """SQL (`` AND ...``, or "" for a table with nothing of the demo) keeping the rows of
    ``table`` that are not the demo's, for a query on ``schema``'s tables."""
    cond = _DEMO_ROWS.get(table)
    return "" if cond is None else f" AND NOT ({cond.format(s=schema)})"


def demo_site_ids(conn, schema: str = "main") -> list[str]:
    """The demo's sites held in a log (none in most logs)."""
    return [r[0] for r in conn.execute(DEMO_SITES.format(s=schema))]


DEMO_TOLD = "demo_kept_out_told"  # meta key: the user was told (DEMO_KEPT_OUT is said once)
DEMO_KEPT_OUT = (
    "This log also holds the invented demo survey (14 Alder Row), written into it by an older "
    "version of fieldcheck. It stays in the file, but it is left out of your lists, exports, "
    "reports and syncs; the demo itself now has a file of its own."
)
