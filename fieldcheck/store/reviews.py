"""The office engineer's review of the survey: append-only records that sync back to the field.

Every review is a row of ``reviews`` (attributed, timed, never changed) about the revision of a
post that was current when it was made (``observation_id``), or about a visit (sign-off):

- ``accept``: the rating of that revision is accepted as it stands;
- ``override``: the action is set to another one (``action``, 0-3), with the reason (required);
- ``require-remedy``: a remedy is required, in the engineer's words (required);
- ``settle``: a conflict (two revisions made apart) is settled by a new revision that supersedes
  one head and merges the other (``observations.merges``: a revision with both parents), keeping
  the record the engineer chose; the review carries the reason;
- ``sign-off``: a visit is signed off;
- ``note``: a note (inspectors may leave these too).

A post's review state follows its latest review of its *current* revision: a post revised after
its review awaits review again. Safety: an override never lowers what the post was rated as
found in the stored rating; it is shown beside it (the report and the interface show both).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from fieldcheck.store.rated import ACTION_LABELS, action_label
from fieldcheck.store.rows import Observation, Review, new_id, now

if TYPE_CHECKING:
    from fieldcheck.store.repo import Log

AWAITING, ACCEPTED, OVERRIDDEN, REMEDY_REQUIRED, SETTLED = (
    "awaiting review",
    "accepted",
    "action overridden",
    "remedy required",
    "conflict settled",
)
_STATE_OF_KIND = {
    "accept": ACCEPTED,
    "override": OVERRIDDEN,
    "require-remedy": REMEDY_REQUIRED,
    "settle": SETTLED,
}


@dataclass(frozen=True)
class ReviewState:
    """Where the review of one post stands (``state`` is one of the names above)."""

    member_id: str
    state: str
    by: str = ""
    on: str = ""  # time with zone, as recorded
    instruction: str = ""  # the reason, the remedy required, or the note
    action: int | None = None  # an override's action
    review: Review | None = None

    @property
    def awaiting(self) -> bool:
        return self.state == AWAITING

    @property
    def action_label(self) -> str:
        return action_label(self.action) if self.action is not None else ""

    def line(self) -> str:
        """ "reviewed by ben, on 2026-12-02: repair or brace by a date (reason ...)"."""
        if self.review is None:
            return AWAITING
        out = f"{self.state}: reviewed by {self.by}, on {self.on[:10]}"
        if self.action is not None:
            out += f"; action set to {self.action_label}"
        if self.instruction:
            out += f"; {self.instruction}"
        return out


def parse_action(text: str | int) -> int:
    """0-3, or an action label / a word of one (``monitor``, ``make-safe-now``)."""
    if isinstance(text, int) or str(text).strip().isdigit():
        n = int(text)
        if 0 <= n < len(ACTION_LABELS):
            return n
    else:
        want = str(text).strip().lower().replace(" ", "-")
        for n in range(len(ACTION_LABELS)):
            if action_label(n) == want:
                return n
    choices = ", ".join(action_label(n) for n in range(len(ACTION_LABELS)))
    raise ValueError(f"action {text!r} is not known; use one of {choices}, e.g. monitor")


def review_post(
    log: Log, member_id: str, kind: str, text: str = "", action: int | str | None = None
) -> Review:
    """accept / override / require-remedy / note, about the post's current revision."""
    head = log.head(member_id)
    if head is None:
        raise ValueError(f"post {member_id} is not in this log; give a post id or tag")
    text = (text or "").strip()
    act = None
    if kind == "override":
        if action is None:
            raise ValueError("override: give the action to set, e.g. --override monitor")
        act = parse_action(action)
        if not text:
            raise ValueError("override: give the reason, e.g. --reason 'shore replaced on site'")
    elif kind == "require-remedy":
        if not text:
            raise ValueError("require-remedy: say what remedy is required, e.g. 'add a 4x4 shore'")
    elif kind not in ("accept", "note"):
        raise ValueError(
            f"review kind {kind!r} is not for a post; use accept, override, require-remedy or note"
        )
    if kind != "note" and member_id in log.conflicts():
        raise ValueError(
            "this post has two revisions made apart; settle the conflict first (settle)"
        )
    return log.add_review(
        kind,
        text,
        member_id=member_id,
        observation_id=head.id,
        visit_id=head.visit_id,
        action=act,
    )


def settle(log: Log, member_id: str, keep: str, reason: str, visit_id: str | None = None):
    """Settle a conflict: a new revision holding the record of head ``keep`` (an observation id
    or its first characters), superseding it and merging the other head (one such revision per
    other head, chained), rated as save_post rates, and a ``settle`` review with the reason.
    One transaction."""
    from fieldcheck.store import rated
    from fieldcheck.store.rows import RATING_COLS, REVIEW_COLS, dumps

    reason = (reason or "").strip()
    if not reason:
        raise ValueError("settle: give the reason, e.g. --reason 'second measurement is right'")
    hist = log.history(member_id)
    parents = {o.supersedes for o in hist if o.supersedes} | {o.merges for o in hist if o.merges}
    heads = [o for o in hist if o.id not in parents]
    if len(heads) < 2:
        raise ValueError(f"post {member_id} has no conflict to settle (one current revision)")
    chosen = [h for h in heads if keep and h.id.startswith(keep)]
    if len(chosen) != 1:
        ids = ", ".join(h.id for h in heads)
        raise ValueError(f"settle: name the revision to keep by its id (one of {ids})")
    kept = chosen[0]
    others = [h for h in heads if h.id != kept.id]
    result = rated.rate([kept.record])
    row = result.rows[0]
    stamp, version, _ = rated.engine_stamp()
    with log._write():
        log._ensure_stamp()
        seqs = iter(log._seqs(len(others) + 1 + (row is not None)))
        created = now()
        prev = kept
        for other in others:
            prev = Observation(
                new_id(),
                member_id,
                visit_id or kept.visit_id,
                prev.id,
                kept.withdrawn,
                kept.reason,
                kept.record,
                log.device_id,
                next(seqs),
                log.author,
                created,
                other.id,
            )
            log._insert(
                "observations",
                _SETTLE_COLS,
                [
                    (
                        prev.id,
                        member_id,
                        prev.visit_id,
                        prev.supersedes,
                        prev.merges,
                        int(prev.withdrawn),
                        prev.reason,
                        dumps(prev.record),
                        log.device_id,
                        prev.device_seq,
                        log.author,
                        created,
                    )
                ],
            )
        if row is not None:
            origin = (log.device_id, next(seqs), log.author, created)
            log._insert(
                "ratings", RATING_COLS, [(new_id(), prev.id, version, stamp, *row, *origin)]
            )
        r = Review(
            new_id(), "settle", reason, member_id, prev.id, prev.visit_id, log.author, created
        )
        log._insert(
            "reviews",
            REVIEW_COLS,
            [
                (
                    *(r.id, member_id, prev.id, prev.visit_id, "settle", reason, None),
                    *(log.device_id, next(seqs), log.author, created),
                )
            ],
        )
    return r


_SETTLE_COLS = (
    "id",
    "member_id",
    "visit_id",
    "supersedes",
    "merges",
    "withdrawn",
    "reason",
    "record_json",
    "device_id",
    "device_seq",
    "author",
    "created_at",
)


def sign_off(log: Log, visit_id: str, text: str = "") -> Review:
    log.visit(visit_id)  # ValueError when unknown
    return log.add_review("sign-off", (text or "").strip(), visit_id=visit_id)


def states(log: Log, visit_id: str | None = None) -> dict[str, ReviewState]:
    """member id -> ReviewState for the current posts (of a visit, or all). A post revised since
    its latest review, or in conflict, awaits review."""
    latest: dict[str, Review] = {}
    for r in log.reviews():  # oldest first: the last review of each post wins
        if r.member_id and r.kind in _STATE_OF_KIND:
            latest[r.member_id] = r
    out: dict[str, ReviewState] = {}
    for p in log.posts(visit_id):
        r = latest.get(p.member_id)
        if r is None or r.observation_id != p.observation_id or p.conflict:
            out[p.member_id] = ReviewState(p.member_id, AWAITING)
        else:
            out[p.member_id] = ReviewState(
                p.member_id, _STATE_OF_KIND[r.kind], r.author, r.created_at, r.text, r.action, r
            )
    return out


def states_of(views, reviews: dict[str, list[Review]]) -> dict[str, ReviewState]:
    """``states`` for some posts only (``views``: their PostViews; ``reviews``: member id ->
    their reviews, oldest first): a reader of the log a chunk at a time (the report)."""
    out: dict[str, ReviewState] = {}
    for p in views:
        r = None
        for x in reviews.get(p.member_id, ()):
            if x.kind in _STATE_OF_KIND:
                r = x  # oldest first: the last review of the post wins
        if r is None or r.observation_id != p.observation_id or p.conflict:
            out[p.member_id] = ReviewState(p.member_id, AWAITING)
        else:
            out[p.member_id] = ReviewState(
                p.member_id, _STATE_OF_KIND[r.kind], r.author, r.created_at, r.text, r.action, r
            )
    return out


def state(log: Log, member_id: str) -> ReviewState:
    """The review state of one post (a few indexed lookups: for the post view)."""
    head = log.head(member_id)
    latest = None
    for r in log.reviews(member_id):
        if r.kind in _STATE_OF_KIND:
            latest = r
    if head is None or latest is None or latest.observation_id != head.id:
        return ReviewState(member_id, AWAITING)
    if member_id in _conflicted(log, member_id):
        return ReviewState(member_id, AWAITING)
    k = latest
    return ReviewState(
        member_id, _STATE_OF_KIND[k.kind], k.author, k.created_at, k.text, k.action, k
    )


def _conflicted(log: Log, member_id: str) -> set[str]:
    hist = log.history(member_id)
    parents = {o.supersedes for o in hist if o.supersedes} | {o.merges for o in hist if o.merges}
    heads = [o for o in hist if o.id not in parents]
    return {member_id} if len(heads) > 1 else set()


def sign_offs(log: Log, visit_id: str | None = None) -> list[Review]:
    return [r for r in log.reviews(kind="sign-off") if visit_id is None or r.visit_id == visit_id]
