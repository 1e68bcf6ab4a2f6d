"""The posts of one visit as a table SQLite sorts, filters and pages (for the interface).

A visit of 100,000 posts cannot live in widgets: ``VisitTable`` copies the visit's current posts
once into a TEMP table of its own read-only connection (one INSERT ... SELECT, inside SQLite),
with a sort key per order and an index on each, and the interface asks for one page at a time:
``page(sort, text, offset, limit)`` and ``count(text)``. A later write is taken in by
``refresh()``, which re-reads only the members whose revisions were written since (rowid above
the mark taken at the last read), so coming back from a post never re-reads the visit.

The connection is the caller's alone (the interface's thread), separate from the log's writer:
write-ahead logging lets it read while the log writes.
"""

from __future__ import annotations

import contextlib
import json
import sqlite3
import urllib.parse
from pathlib import Path

from fieldcheck.store.rated import ACTION_LABELS, action_label, urgency_sql
from fieldcheck.store.repo import PostView
from fieldcheck.store.rows import REF_DIGITS

REF_MIN = 6  # characters of a filter word that may find a post by its reference
# the action words of a post not rated because its load is missing (the list shows them so)
LOAD_MISSING = "not rated: load missing"

SORTS = ("worst", "tag", "location", "action", "height", "added")
# the order an inspector works in: worst action first; "not rated" (NULL) after the rest
_ACTION_RANK = {"make-safe-now": 0, "repair-or-brace": 1, "monitor": 2, "no-action": 3}
# worst first: the report's order of urgency (rated.URGENCY), then the larger ratio. The action
# in force decides, whatever set it: a post at repair because of decay, at a ratio of 0.02, comes
# before every post at monitor or no action, whatever their ratios
_ORDER_BY = {
    "worst": "urgency, worst DESC, rank",
    "tag": "k.k, k.r",  # the sorts by a key read from the record join its own table (_KEYS)
    "location": "k.k, k.r",
    "action": "action_key, worst DESC, rank",
    "height": "k.k, k.r",
    "added": "rank",
}
_INDEXES = {  # made when first needed (building one costs about a fifth of the table's copy)
    "worst": "urgency, worst DESC, rank",
    "action": "action_key, worst DESC, rank",
}


def _action_rank_sql() -> str:
    whens = " ".join(
        f"WHEN {i} THEN {_ACTION_RANK.get(label, 9)}" for i, label in enumerate(ACTION_LABELS)
    )
    return f"CASE r.action {whens} ELSE {len(_ACTION_RANK)} END"


def _action_words_sql(words: dict[str, str]) -> str:
    """The action's label and its words as the interface shows them (for the filter)."""
    whens = " ".join(
        f"WHEN {i} THEN '{label} {_q(words.get(label, ''))}'"
        for i, label in enumerate(ACTION_LABELS)
    )
    unrated = action_label(None)
    return f"CASE r.action {whens} ELSE '{unrated} {_q(words.get(unrated, ''))}' END"


def _q(text: str) -> str:
    return text.replace("'", "''")


# which members a read takes: every member seen on the visit, or those of a JSON list that were
_VISIT_MEMBERS = "m.id IN (SELECT member_id FROM observations WHERE visit_id = ?)"
_THESE_MEMBERS = (
    "m.id IN (SELECT value FROM json_each(?)) AND EXISTS (SELECT 1 FROM observations s "
    "WHERE s.member_id = m.id AND +s.visit_id = ?)"  # +: by the member's few rows, not the visit's
)


def _build_sql(words: dict[str, str]) -> str:
    from fieldcheck.store.repo import HEAD_ROWID_OF

    # The filter's text (hay) is what the list shows of a post: the record as stored, the
    # action's words ("load missing" for a post not rated for want of its load) and "untagged"
    # for a post without a tag, folded by Python's casefold (SQLite's lower() folds ASCII
    # letters only: "ÉTÉ" never found "été"; a record of ASCII alone, as most are, as many
    # characters as bytes, takes lower(), the same for it and cheaper). The names of the
    # record's fields are in it, but a filter word of three letters or more never matches them
    # (_word_sql). The action in force (an office override that raises the rating's, else the
    # rating's: {office} is OFFICE_ACTION, or NULL when the log holds no override) sorts,
    # filters and counts; the
    # rating's own action is kept beside it. The sort keys read from the record's JSON (tag,
    # location, height) are made when that sort is first asked for (_KEYS): a third of the
    # copy's time, for sorts most visits never use. NOT MATERIALIZED: each row goes straight into
    # the table (copying the rows first cost a fifth of the build at 100,000 posts); OFFICE_ACTION
    # may then be worked out up to three times for a post rated below make-safe-now, a few index
    # seeks each, and only when the log holds an override.
    in_force = "coalesce(office, action)"
    return f"""
WITH base AS NOT MATERIALIZED (
    SELECT m.rowid AS rank, o.rowid AS obs_rowid, o.member_id, o.id, o.visit_id, m.site_id,
        o.record_json, r.ratio, r.action, r.capacity_n, r.demand_n,
        coalesce(r.governing, '') AS governing, r.engine_version, o.created_at, o.author,
        {{office}} AS office, {{older}} AS older
    FROM members m
    JOIN observations o ON o.rowid = {HEAD_ROWID_OF}
    LEFT JOIN ratings r ON r.rowid = (SELECT max(rowid) FROM ratings WHERE observation_id = o.id)
    WHERE o.withdrawn = 0 AND {{members}}
)
INSERT INTO temp.visit_posts (rank, obs_rowid, member_id, observation_id, visit_id, site_id,
    record_json, ratio, action, capacity_n, demand_n, governing, engine_version, revised_at,
    revised_by, conflict, worst, urgency, action_key, hay, office_action, older)
SELECT rank, obs_rowid, member_id, id, visit_id, site_id, record_json,
    ratio, action, capacity_n, demand_n, governing, engine_version, created_at, author,
    member_id IN (SELECT value FROM json_each(?)), coalesce(ratio, 9e999),
    {urgency_sql(in_force)},
    {_action_rank_sql().replace("r.action", in_force)},
    CASE WHEN length(record_json) = length(CAST(record_json AS BLOB)) THEN lower(record_json)
        ELSE fold(record_json) END
        || ' ' || lower({_action_words_sql(words).replace("r.action", in_force)}
        || CASE WHEN coalesce({in_force}, {len(ACTION_LABELS)}) >= {len(ACTION_LABELS)}
            AND capacity_n IS NOT NULL AND demand_n IS NULL
            THEN ' {_q(words.get(LOAD_MISSING, LOAD_MISSING))}' ELSE '' END)
        || CASE WHEN instr(record_json, '"tag":') = 0 THEN ' untagged' ELSE '' END,
    office, older
FROM base
"""


# the sort keys taken from the record, made for the rows without one when the sort is first
# asked for, and again for the rows a refresh read: tag and location in natural order, any case
# (P2 before P10); height by its length however it was written, one that does not parse last.
# Each is kept in a narrow table of its own, visit_key_<sort> (r: the post's rank, k: its key,
# indexed together): an UPDATE of the posts' table rewrote every wide row (about 45 ms for
# 10,000 posts before a key was worked out).
_KEYS = {"tag": "tag", "location": "location", "height": "height"}  # sort -> record field
_UNKNOWN_MM = 1e300  # a height that does not parse sorts after every other


def _natural_sql(field: str) -> str:
    """A sort key in natural order for the number a text ends with, any case: P2 before P10,
    bay 9 before bay 10 (the trailing digits padded to 18; digits inside sort as text)."""
    head = f"rtrim(coalesce({field}, ''), '0123456789')"
    tail = f"substr(coalesce({field}, ''), length({head}) + 1)"
    return f"lower({head}) || printf('%018d', CAST({tail} AS INTEGER))"


def _heights_mm(texts: list) -> dict[object, float]:
    """Each distinct height as written (8ft 4in, 2540 mm) in mm, for sorting, parsed at once by
    the records' own parser (units.parse_many: the numbers of its cell parser); one that does
    not parse (or none) sorts last."""
    from fieldcheck.records.columns import COLUMNS

    distinct = list(dict.fromkeys(texts))
    out: dict[object, float] = dict.fromkeys(distinct, _UNKNOWN_MM)
    given = [t for t in distinct if isinstance(t, str) and t.strip()]
    if not given:
        return out
    parse = COLUMNS["height"].parse
    many = getattr(parse, "many", None)
    if many is not None:
        vals, done = many(given)
        ok = zip(given, vals.tolist(), done.tolist(), strict=True)
        out.update((t, float(v)) for t, v, d in ok if d and v > 0)
    for t in given:  # the texts parse_many leaves to the cell parser
        if out[t] == _UNKNOWN_MM:
            with contextlib.suppress(ValueError, TypeError):
                out[t] = float(parse(t))
    return out


_COLUMNS = (
    "rank INTEGER PRIMARY KEY, obs_rowid INTEGER, member_id TEXT, observation_id TEXT, "
    "visit_id TEXT, site_id TEXT, record_json TEXT, ratio REAL, "
    "action INTEGER, capacity_n REAL, demand_n REAL, governing TEXT, engine_version TEXT, "
    "revised_at TEXT, revised_by TEXT, conflict INTEGER, worst REAL, urgency INTEGER, "
    "action_key INTEGER, hay TEXT, office_action INTEGER, "
    "older INTEGER"
)
_VIEW_COLS = (
    "member_id, observation_id, visit_id, site_id, record_json, ratio, action, "
    "capacity_n, demand_n, governing, engine_version, revised_at, revised_by, conflict, "
    "office_action, older"
)


class VisitTable:
    """One visit's current posts, sorted, filtered and paged in SQLite (see module doc)."""

    def __init__(self, path: Path | str, visit_id: str, action_words: dict[str, str]):
        uri = f"file:{urllib.parse.quote(str(Path(path).resolve()))}?mode=ro"
        self.conn = sqlite3.connect(uri, uri=True, check_same_thread=False)
        self.visit_id = visit_id
        self._sql = _build_sql(action_words)
        self.mark = 0  # observations.rowid read up to
        self.review_mark = 0  # reviews.rowid read up to (an override changes the action shown)
        self.conn.execute("PRAGMA temp_store = MEMORY")
        self.conn.create_function("fold", 1, _fold, deterministic=True)
        self.conn.execute(f"CREATE TEMP TABLE visit_posts ({_COLUMNS})")
        self.conn.execute("CREATE TEMP TABLE visit_hits (r INTEGER PRIMARY KEY)")
        for sort in _KEYS:
            self.conn.execute(f"CREATE TEMP TABLE visit_key_{sort} (r INTEGER PRIMARY KEY, k)")
        self._indexed: set[str] = set()
        self._keyed: set[str] = set()  # sorts whose key tables hold every row (_KEYS)
        self._any_older = False  # a rating of another stamp was seen (else older() is 0)
        self._hits_for: str | None = None  # the filter text visit_hits holds
        self._hits_n = 0
        self._take(None)

    def _keys(self, sort: str) -> None:
        """Fill the sort's key table for the rows without a key: the record's field read in one
        pass, the keys worked out here (each distinct height parsed once, at once)."""
        if sort not in _KEYS or sort in self._keyed:
            return
        field = f"json_extract(record_json, '$.{_KEYS[sort]}')"
        missing = f"FROM visit_posts WHERE rank NOT IN (SELECT r FROM visit_key_{sort})"
        with self.conn:
            if sort == "height":
                rows = self.conn.execute(f"SELECT rank, {field} {missing}").fetchall()
                mm = _heights_mm([t for _, t in rows])
                self.conn.executemany(
                    f"INSERT INTO visit_key_{sort} VALUES (?, ?)", [(r, mm[t]) for r, t in rows]
                )
            else:  # in SQLite itself: no row goes through Python
                self.conn.execute(
                    f"INSERT INTO visit_key_{sort} SELECT rank, {_natural_sql(field)} {missing}"
                )
            # indexed once filled (faster than an index kept while the rows go in), then kept
            self.conn.execute(
                f"CREATE INDEX IF NOT EXISTS temp.visit_key_{sort}_k ON visit_key_{sort} (k, r)"
            )
        self._keyed.add(sort)

    def _index(self, name: str) -> None:
        if name in _INDEXES and name not in self._indexed:
            self.conn.execute(
                f"CREATE INDEX IF NOT EXISTS temp.visit_posts_{name} ON visit_posts "
                f"({_INDEXES[name]})"
            )
            self._indexed.add(name)

    def close(self) -> None:
        self.conn.close()

    def _top(self) -> tuple[int, int]:
        row = self.conn.execute(
            "SELECT (SELECT max(rowid) FROM observations), (SELECT max(rowid) FROM reviews)"
        ).fetchone()
        return int(row[0] or 0), int(row[1] or 0)

    def _take(self, members: list[str] | None) -> None:
        """(Re)read the given members (None: the whole visit) into the table, in one
        transaction of this connection (a consistent snapshot of the log)."""
        with self.conn:
            top = self._top()
            from fieldcheck.store.conflicts import among, open_conflicts
            from fieldcheck.store.repo import office_action_sql, older_stamp_sql

            office = office_action_sql(self.conn)
            older = older_stamp_sql(self.conn) or "0"
            self._any_older = older != "0" or self._any_older
            if members is None:  # the whole visit: its members listed once, in one pass
                conflicted = json.dumps(open_conflicts(self.conn))
                self.conn.execute(
                    self._sql.format(members=_VISIT_MEMBERS, office=office, older=older),
                    [self.visit_id, conflicted],
                )
            else:  # a few members: each looked up by id (never a list of the whole visit)
                arg = json.dumps(members)
                conflicted = json.dumps(sorted(among(self.conn, members)))
                for table in ("visit_posts", *(f"visit_key_{k}" for k in _KEYS)):
                    key = "rank" if table == "visit_posts" else "r"
                    self.conn.execute(  # by rank, the member's rowid: the table's own key
                        f"DELETE FROM temp.{table} WHERE {key} IN (SELECT rowid FROM "
                        "main.members WHERE id IN (SELECT value FROM json_each(?)))",
                        [arg],
                    )
                self.conn.execute(
                    self._sql.format(members=_THESE_MEMBERS, office=office, older=older),
                    [arg, self.visit_id, conflicted],
                )
            self.mark, self.review_mark = top
            self._hits_for = None
            self._keyed.clear()  # the rows read now have no sort keys yet
            self.total_rows = self.conn.execute("SELECT count(*) FROM visit_posts").fetchone()[0]

    def refresh(self) -> list[str]:
        """Take in what was written since the last read: only the members those revisions (or
        reviews, synced from the office) belong to are read again. Returns their ids."""
        if self._top() == (self.mark, self.review_mark):
            return []
        # the rowid ranges, deduplicated here (DISTINCT in SQL would walk the member index)
        members = list(
            dict.fromkeys(
                r[0]
                for r in self.conn.execute(
                    "SELECT member_id FROM observations WHERE rowid > ? UNION ALL "
                    "SELECT member_id FROM reviews WHERE rowid > ? AND member_id IS NOT NULL",
                    [self.mark, self.review_mark],
                )
            )
        )
        self._take(members)
        return members

    def _hits(self, text: str) -> tuple[str, int]:
        """SQL keeping the posts whose text holds every word of ``text`` (any case), and how
        many: one scan per new filter text, kept for the pages and counts that follow. A word of
        REF_MIN characters or more also finds the post whose reference holds it (the end of its
        id, rows.short_ref: what the list and the report name an untagged post by); a shorter
        one would find stray posts among the hex digits ("b3" for the tag B3)."""
        words = [w for w in _fold(text).split() if w]
        if not words:
            return "", -1
        key = " ".join(words)
        if self._hits_for != key:
            esc = [w.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_") for w in words]
            with self.conn:
                self.conn.execute("DELETE FROM visit_hits")
                ref = f"substr(member_id, -{REF_DIGITS})"

                def match(w: str) -> str:
                    one = f"{_word_sql(w)} LIKE ? ESCAPE '\\'"
                    return f"({one} OR {ref} LIKE ? ESCAPE '\\')" if len(w) >= REF_MIN else one

                self.conn.execute(
                    "INSERT INTO visit_hits SELECT rowid FROM visit_posts WHERE "
                    + " AND ".join(match(w) for w in words),
                    [
                        f"%{e}%"
                        for w, e in zip(words, esc, strict=True)
                        for _ in range(2 if len(w) >= REF_MIN else 1)
                    ],
                )
            self._hits_for = key
            self._hits_n = self.conn.execute("SELECT count(*) FROM visit_hits").fetchone()[0]
        return " WHERE visit_posts.rank IN (SELECT r FROM visit_hits)", self._hits_n

    def count(self, text: str = "") -> int:
        n = self._hits(text)[1]
        return n if n >= 0 else self.total_rows

    def total(self) -> int:
        return self.total_rows

    def older(self, text: str = "") -> int:
        """Posts (of those the filter ``text`` keeps) whose stored rating was made by another
        engine version or other reference data (store.repo.older_stamp_sql)."""
        if not self._any_older:
            return 0
        where, _ = self._hits(text)
        cond = " AND older" if where else " WHERE older"
        return int(
            self.conn.execute(f"SELECT count(*) FROM visit_posts{where}{cond}").fetchone()[0]
        )

    def counts_by_action(self, text: str = "") -> dict[str, int]:
        """{action label: posts}, of those the filter ``text`` keeps. A post not rated because
        its load is missing (action 4) and one with no rating (field errors) share the label
        "not rated": both are counted under it."""
        where, _ = self._hits(text)
        out: dict[str, int] = {}
        for a, n in self.conn.execute(  # under the action in force
            f"SELECT coalesce(office_action, action), count(*) FROM visit_posts{where} GROUP BY 1"
        ):
            label = action_label(a)
            out[label] = out.get(label, 0) + n
        return out

    def _order(self, sort: str, hits: int) -> str:
        """ORDER BY for ``sort``: along its index, unless a filter keeps few posts (then
        sorting those few beats walking the index past the others)."""
        self._keys(sort)
        if hits >= 0 and hits * 8 < self.total_rows:
            return ", ".join("+" + t for t in _ORDER_BY[sort].split(", "))
        self._index(sort)
        return _ORDER_BY[sort]

    @staticmethod
    def _from(sort: str) -> str:
        """The posts' table, joined to the sort's key table when it has one."""
        if sort in _KEYS:
            return f"visit_posts JOIN visit_key_{sort} k ON k.r = visit_posts.rank"
        return "visit_posts"

    def page(self, sort: str, text: str, offset: int, limit: int) -> list[PostView]:
        """Posts ``offset`` .. ``offset + limit`` in the order ``sort``, keeping those whose
        text holds every word of ``text`` (any case)."""
        where, hits = self._hits(text)
        order = self._order(sort, hits)
        rows = self.conn.execute(
            f"SELECT {_VIEW_COLS} FROM {self._from(sort)}{where} ORDER BY {order} LIMIT ? OFFSET ?",
            [int(limit), max(0, int(offset))],
        ).fetchall()
        return [_view(r) for r in rows]

    def position(self, sort: str, text: str, member_id: str) -> int | None:
        """Where a member stands in the order ``sort`` (filtered by ``text``), or None."""
        where, _ = self._hits(text)
        self._keys(sort)
        row = self.conn.execute(
            f"SELECT n FROM (SELECT member_id, row_number() OVER (ORDER BY {_ORDER_BY[sort]}) - 1 "
            f"AS n FROM {self._from(sort)}{where}) WHERE member_id = ?",
            [member_id],
        ).fetchone()
        return None if row is None else int(row[0])

    def tags(self) -> set[str]:
        sql = "SELECT coalesce(json_extract(record_json, '$.tag'), '') FROM visit_posts"
        return {r[0] for r in self.conn.execute(sql)}

    def last_added(self) -> PostView | None:
        rows = self.conn.execute(
            f"SELECT {_VIEW_COLS} FROM visit_posts ORDER BY rank DESC LIMIT 1"
        ).fetchall()
        return _view(rows[0]) if rows else None


KEY_MASK_MIN = 3  # characters of a filter word from which field names are masked


def _word_sql(word: str) -> str:
    """The text a filter word is looked for in: ``hay``, with the record's field names that
    hold the word masked ("top" found every post by its field "top", "load" every post with a
    load); plain ``hay`` for the many words no field name holds, and for a word of one or two
    letters (the first keys of a word being typed: masking every name holding a "g" would cost
    a keystroke ten times what it finds)."""
    sql = "hay"
    if len(word) < KEY_MASK_MIN:
        return sql
    from fieldcheck.records.columns import COLUMNS

    for name in COLUMNS:
        if word in name:
            sql = f"replace({sql}, '\"{name}\":', ':')"
    return sql


def _fold(text: object) -> str | None:
    """Any case alike, in any script (the filter's words and the text they are looked for in)."""
    return None if text is None else str(text).casefold()


def _view(r: tuple) -> PostView:
    rec = json.loads(r[4])
    return PostView(
        r[0],
        r[1],
        r[2],
        r[3],
        rec.get("tag", ""),
        rec.get("location", ""),
        rec,
        r[5],
        r[6],
        action_label(r[6]),
        r[7],
        r[8],
        r[9],
        r[10],
        r[11],
        r[12],
        bool(r[13]),
        r[14],
        bool(r[15]),
    )
