"""Remedies as proposals: what was found stays what a post is rated as.

A remedy chosen in the interface is never written over the post. The post as found is saved
first (a revision like any other); the remedy is stored as a *proposal* linked to that revision,
in the inspector's words, with the record changes it stands for and the ratio the engine expected.
When the work is done (on a later visit or at once), the post is recorded *as remedied*: a new
revision with the changes, plus a ``remedied`` row giving the date and the proposal it carried
out. Lists, counts, sync and reports can then tell three states apart:

- ``as found``: the current revision was recorded as found (no open proposal);
- ``proposed``: as found, with a remedy proposed and not yet recorded as done;
- ``as remedied``: the current revision records the post after the remedy (with its date).

Both tables are append-only and synced like every other revision table.
"""

from __future__ import annotations

import datetime as _dt
import json
from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING

from fieldcheck.store.rows import Observation, clean_record, new_id, now

if TYPE_CHECKING:
    from fieldcheck.store.repo import Log

AS_FOUND, PROPOSED, AS_REMEDIED = "as found", "proposed", "as remedied"
STATES = (AS_FOUND, PROPOSED, AS_REMEDIED)

_PROPOSAL_COLS = (
    "id",
    "member_id",
    "observation_id",
    "visit_id",
    "kind",
    "description",
    "changes_json",
    "ratio",
    "device_id",
    "device_seq",
    "author",
    "created_at",
)
_REMEDIED_COLS = (
    "id",
    "member_id",
    "observation_id",
    "proposal_id",
    "done_on",
    "device_id",
    "device_seq",
    "author",
    "created_at",
)


@dataclass(frozen=True)
class Proposal:
    """A remedy proposed for one revision of a post (the post as found)."""

    id: str
    member_id: str
    observation_id: str  # the revision (as found) it was proposed for
    visit_id: str
    kind: str
    description: str  # in the inspector's words
    changes: dict[str, str]  # record column -> new text ("" clears it)
    ratio: float | None  # the ratio the engine expected with the remedy, when proposed
    author: str
    created_at: str
    done_on: str | None  # the date it was recorded as done, or None while open


@dataclass(frozen=True)
class RemedyState:
    """Where a post stands: as found, proposed or as remedied (one per current post)."""

    member_id: str
    state: str  # AS_FOUND, PROPOSED or AS_REMEDIED
    proposals: tuple[Proposal, ...]  # open proposals (state PROPOSED), newest first
    done_on: str | None = None  # AS_REMEDIED: the date the work was done
    remedy: str = ""  # AS_REMEDIED: what was done, in the inspector's words (if proposed first)


def _check_date(done_on: str | None) -> str:
    if done_on is None or not str(done_on).strip():
        return _dt.date.today().isoformat()
    text = str(done_on).strip()
    try:
        return _dt.date.fromisoformat(text).isoformat()
    except ValueError:
        raise ValueError(
            f"date the remedy was done: {text!r} is not a date; give it as year-month-day, "
            "e.g. 2026-03-14"
        ) from None


def _proposal(r: dict) -> Proposal:
    return Proposal(
        r["id"],
        r["member_id"],
        r["observation_id"],
        r["visit_id"],
        r["kind"],
        r["description"],
        json.loads(r["changes_json"]),
        r["ratio"],
        r["author"],
        r["created_at"],
        r.get("done_on"),
    )


# ids passed to SQLite as one JSON array (any number, one parameter)
_IN_JSON = "IN (SELECT value FROM json_each(?))"
_PROPOSALS_SQL = (
    "SELECT p.*, (SELECT min(d.done_on) FROM remedied d WHERE d.proposal_id = p.id) AS done_on "
    "FROM proposals p"
)


def propose(
    log: Log,
    observation_id: str,
    *,
    kind: str,
    description: str,
    changes: Mapping[str, object],
    ratio: float | None = None,
    visit_id: str | None = None,
) -> Proposal:
    """Store a remedy as a proposal for the revision ``observation_id`` (the post as found).
    The post itself is not changed: it stays rated as found."""
    if not str(description).strip():
        raise ValueError("a remedy needs a description in words (what to do on site)")
    with log._write():
        obs = log.observation(observation_id)
        visit = visit_id or obs.visit_id
        log.visit(visit)
        (seq,) = log._seqs(1)
        created = now()
        ch = {str(k): "" if v is None else str(v) for k, v in changes.items()}
        p = Proposal(
            new_id(),
            obs.member_id,
            obs.id,
            visit,
            str(kind) or "remedy",
            str(description).strip(),
            ch,
            None if ratio is None else float(ratio),
            log.author,
            created,
            None,
        )
        log._insert(
            "proposals",
            _PROPOSAL_COLS,
            [
                (
                    p.id,
                    p.member_id,
                    p.observation_id,
                    p.visit_id,
                    p.kind,
                    p.description,
                    json.dumps(ch, sort_keys=True),
                    p.ratio,
                    *log._origin(seq, created),
                )
            ],
        )
    return p


def proposals(log: Log, member_id: str | None = None, *, open_only: bool = False) -> list[Proposal]:
    """Proposals (of one post, or all), oldest first, with the date each was done (or None)."""
    sql, params = _PROPOSALS_SQL, []
    if member_id is not None:
        sql += " WHERE p.member_id = ?"
        params.append(member_id)
    out = [_proposal(r) for r in log.db.query(sql + " ORDER BY p.rowid", params)]
    return [p for p in out if p.done_on is None] if open_only else out


def record_remedied(
    log: Log,
    member_id: str,
    visit_id: str,
    *,
    proposal_id: str | None = None,
    record: Mapping[str, object] | None = None,
    done_on: str | None = None,
    allow_errors: bool = False,
) -> Observation:
    """Record a post as remedied on ``done_on`` (a date; default today): a new revision holding
    ``record`` (default: the current revision with the proposal's changes), tied to the proposal
    it carries out. One transaction: the revision and its ``remedied`` row, or neither."""
    day = _check_date(done_on)
    with log._write():
        head = log.head(member_id)
        if head is None:
            raise ValueError(f"post {member_id} is not in this log")
        prop = None
        if proposal_id is not None:
            prop = next((p for p in proposals(log, member_id) if p.id == proposal_id), None)
            if prop is None:
                raise ValueError(f"remedy proposal {proposal_id} is not one of this post's")
            if prop.done_on is not None:
                raise ValueError(f"this remedy was already recorded as done on {prop.done_on}")
        if record is None:
            rec = dict(head.record)
            for k, v in (prop.changes if prop else {}).items():
                if v:
                    rec[k] = v
                else:
                    rec.pop(k, None)
        else:
            rec = clean_record(record)
        obs = log.save_post(visit_id, rec, member_id, allow_errors=allow_errors)
        (seq,) = log._seqs(1)
        created = now()
        log._insert(
            "remedied",
            _REMEDIED_COLS,
            [(new_id(), member_id, obs.id, proposal_id, day, *log._origin(seq, created))],
        )
    return obs


def states(
    log: Log, visit_id: str | None = None, *, marked_only: bool = False
) -> dict[str, RemedyState]:
    """member id -> RemedyState for every current post (of ``visit_id``, or all).
    ``marked_only``: only the posts with a proposal or a remedy recorded (any other is as
    found), so a large visit is not read post by post."""
    if marked_only:
        heads = _marked_heads(log, visit_id)
    else:
        heads = {p.member_id: p.observation_id for p in log.posts(visit_id)}
    done: dict[str, tuple[str, str | None]] = {}  # observation id -> (date, proposal id)
    for r in log.db.query("SELECT observation_id, done_on, proposal_id FROM remedied"):
        done[r["observation_id"]] = (r["done_on"], r["proposal_id"])
    by_member: dict[str, list[Proposal]] = {}
    every: dict[str, Proposal] = {}
    for p in proposals(log):
        every[p.id] = p
        by_member.setdefault(p.member_id, []).append(p)
    return _states(heads, done, by_member, every)


def states_of(log: Log, views) -> dict[str, RemedyState]:
    """``states`` for some posts only (``views``: their PostViews, current revisions): a reader
    of the log a chunk at a time (the report). Three queries, whatever the size of the log."""
    heads = {p.member_id: p.observation_id for p in views}
    ids = json.dumps(list(heads))
    done: dict[str, tuple[str, str | None]] = {}  # observation id -> (date, proposal id)
    for oid, day, pid in log.db.conn.execute(
        f"SELECT observation_id, done_on, proposal_id FROM remedied WHERE observation_id {_IN_JSON}"
        " ORDER BY rowid",
        [json.dumps(list(heads.values()))],
    ):
        done[oid] = (day, pid)
    by_member: dict[str, list[Proposal]] = {}
    every: dict[str, Proposal] = {}
    mine = log.db.query(f"{_PROPOSALS_SQL} WHERE p.member_id {_IN_JSON} ORDER BY p.rowid", [ids])
    for p in map(_proposal, mine):
        every[p.id] = p
        by_member.setdefault(p.member_id, []).append(p)
    other = sorted({pid for _, pid in done.values() if pid and pid not in every})
    if other:  # a remedy that carried out another post's proposal (its words are shown)
        rows = log.db.query(f"{_PROPOSALS_SQL} WHERE p.id {_IN_JSON}", [json.dumps(other)])
        every.update((p.id, p) for p in map(_proposal, rows))
    return _states(heads, done, by_member, every)


def _states(heads, done, by_member, every) -> dict[str, RemedyState]:
    out: dict[str, RemedyState] = {}
    for member, head in heads.items():
        mine = by_member.get(member, [])
        if head in done:
            day, pid = done[head]
            what = every[pid].description if pid in every else ""
            out[member] = RemedyState(member, AS_REMEDIED, (), day, what)
            continue
        open_ = tuple(reversed([p for p in mine if p.done_on is None]))
        out[member] = RemedyState(member, PROPOSED if open_ else AS_FOUND, open_)
    return out


def _marked_heads(log: Log, visit_id: str | None) -> dict[str, str]:
    """member id -> current revision of the posts (of ``visit_id``) with a proposal or a
    remedy recorded, not withdrawn."""
    sql = "SELECT member_id FROM proposals UNION SELECT member_id FROM remedied"
    params: list[str] = []
    if visit_id is not None:
        sql = (
            f"SELECT member_id FROM ({sql}) WHERE member_id IN "
            "(SELECT member_id FROM observations WHERE visit_id = ?)"
        )
        params.append(visit_id)
    out: dict[str, str] = {}
    for (member,) in log.db.conn.execute(sql, params).fetchall():
        head = log.head(member)
        if head is not None and not head.withdrawn:
            out[member] = head.id
    return out


def counts(log: Log, visit_id: str | None = None) -> dict[str, int]:
    """{"as found": n, "proposed": n, "as remedied": n} over the current posts."""
    out = dict.fromkeys(STATES, 0)
    for s in states(log, visit_id).values():
        out[s.state] += 1
    return out
