"""What a survey report shows, gathered from the log and re-rated a chunk of posts at a time.

The renderer (html.py) only formats what is here. Every number a report prints comes from the
current records re-rated (one engine call per chunk of ``CHUNK`` posts) or from the stored rating
it is compared with. ``gather`` makes two passes over the log so that memory stays flat in the
number of posts: the first keeps what the summary parts show of each post as a compact row on
disk (``PostRows``, a temporary table of the store), the second (``ReportData.posts``) reads and
rates each chunk again for the per-post sections; per-post text (summary, working) is asked of
the engine only when a section is written, and each chunk's capacity-against-height curves and
remedies come from one more engine call each.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import math
from collections.abc import Iterator
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import numpy as np

from fieldcheck import ENGINE_VERSION
from fieldcheck.engine import explain
from fieldcheck.engine.blocks import BLOCK
from fieldcheck.engine.curves import capacity_vs_height
from fieldcheck.engine.refdata import editions
from fieldcheck.engine.remedies import remedies
from fieldcheck.engine.result import ACTIONS, DUE_DAYS, NOT_RATED, Rating

# heights of a capacity curve as multiples of the post's own height: a quarter to twice it, as
# engine.curves.default_heights (judgement: shows how fast capacity falls off around the post)
CURVE_FACTORS = np.linspace(0.25, 2.0, 20)
# a stored rating "differs" from the re-rating beyond this relative change (float noise below)
REL_TOL = 1e-6


@dataclass(eq=False)
class PostEntry:
    """One post of the report: the record as typed, its current re-rating and its stored rating.

    The arrays (action, ratio, capacity) are read from the chunk's rating; the per-post text
    (summary, working, stored rating and how it differs) is made when the post's section is
    written and dropped after (``release``), so a report of many posts holds no text per post."""

    view: Any  # store PostView
    visit: Any  # store Visit of the current revision
    j: int | None  # index into ``rating`` (its chunk); None when the engine refuses the record
    errors: list[str]  # field errors of a refused record
    meta: dict[str, Any]
    rating: Rating | None = None  # the rating of the post's chunk
    rem: Any = None  # remedies of the chunk (engine.remedies), or None
    due: _dt.date | None = None
    attachments: list[Any] = field(default_factory=list)
    reviews: list[Any] = field(default_factory=list)
    curve_h: np.ndarray | None = None  # mm
    curve_cap: np.ndarray | None = None  # N
    review_state: Any = None  # store ReviewState: awaiting review, accepted, overridden, ...
    remedy_state: Any = None  # store RemedyState: as found, proposed, as remedied
    photo_files: dict[str, Any] = field(default_factory=dict)  # attachment id -> Path | None
    load_stored: Any = None  # () -> StoredRating | None (the log, asked when written)
    _cache: dict[str, Any] = field(default_factory=dict, repr=False)

    @property
    def tag(self) -> str:
        return self.view.label

    @property
    def location(self) -> str:
        return self.view.location

    @property
    def action(self) -> int | None:
        """The action in force (ACTIONS index), None when the record has errors: the rating's,
        or an office override of this revision where it is more severe (judgement: the
        engineer's make-safe reaches the client; an override never lowers the rating)."""
        if self.j is None:
            return None
        return raised(int(self.rating.action[self.j]), self.review_state)

    @property
    def ratio(self) -> float | None:
        """Demand / capacity, None when there is no rating or no load."""
        if self.j is None:
            return None
        r = float(self.rating.ratio[self.j])
        return r if math.isfinite(r) else None

    @property
    def rated(self) -> bool:
        """A decision was made (False: field errors, or not rated because the load is missing)."""
        return self.action is not None and self.action != NOT_RATED

    @property
    def urgency_key(self) -> tuple:
        # not rated (no record, or no load): treated as unsafe until assessed, listed after the
        # posts to make safe now and before those to repair (compare with NOT_RATED, never >=)
        a = 2.5 if not self.rated else self.action
        r = self.ratio
        return (-a, -(r if r is not None else -1.0), self.tag)

    def _get(self, key: str, make):
        if key not in self._cache:
            self._cache[key] = make()
        return self._cache[key]

    @property
    def summary(self) -> dict[str, Any] | None:
        if self.j is None:
            return None
        return self._get("summary", lambda: post_summary(self.rating, self.j, self.rem))

    @property
    def working(self) -> list[Any]:
        if self.j is None:
            return []
        return self._get("working", lambda: explain.working(self.rating, self.j))

    @property
    def stored(self) -> Any:
        return self._get("stored", lambda: self.load_stored() if self.load_stored else None)

    @property
    def differs(self) -> list[str]:
        if self.j is None:
            return []
        return self._get(
            "differs", lambda: _differences(self.stored, self.rating, self.j, editions())
        )

    def release(self) -> None:
        """Drop the per-post text made for this post's section."""
        self._cache.clear()


@dataclass(frozen=True)
class ReportInfo:
    """Who issues the report and which one it is: from the config file or the command's options.
    ``revision`` counts up each time the same scope's report is reissued (kept in the log)."""

    firm: str = ""
    engineer: str = ""
    client: str = ""
    job: str = ""
    number: str = ""
    revision: int = 0
    draft: bool = False  # not an issue: the revision shown is the last one issued


def scope_key(site_id: str | None, visit_id: str | None) -> str:
    """What a report covers, as the key its revision count is kept under."""
    if visit_id:
        return f"visit:{visit_id}"
    return f"site:{site_id}" if site_id else "log"


def issue_info(
    log,
    site_id: str | None = None,
    visit_id: str | None = None,
    *,
    issue: bool = True,
    config=None,
    **given: str | None,
) -> ReportInfo:
    """The title block of a report: firm, engineer, client, job and number from ``given`` (the
    command's options) over the config file; the revision from the log, counted up when
    ``issue`` (a report written for sending) and the log is writable."""
    if config is None:
        from fieldcheck.config import load

        config = load()
    fields = {
        "firm": config.firm,
        "engineer": config.engineer,
        "client": config.client,
        "job": config.job,
        "number": config.report_number,
    }
    fields.update({k: v for k, v in given.items() if v is not None and k in fields})
    key = scope_key(site_id, visit_id)
    if issue and not getattr(log, "readonly", True):
        return ReportInfo(**fields, revision=log.next_report_revision(key))
    last = log.meta().get(f"report_revision:{key}")
    return ReportInfo(**fields, revision=int(last) if last else 0, draft=True)


@dataclass
class ReportData:
    sites: list[Any]
    visits: list[Any]
    scope: str  # "site ...", "visit ...", "the whole log"
    posts: Any  # Posts: iterable of PostEntry, read and rated again a chunk at a time; len()
    rating: Rating | None  # the first chunk's rating
    conflicts: list[tuple[str, list[Any]]]  # (tag, heads) of members with more than one head
    engine_version: str
    editions: dict[str, str]
    created: _dt.datetime
    units: str
    signoffs: list[Any] = field(default_factory=list)  # sign-off reviews of the report's visits
    info: ReportInfo = field(default_factory=ReportInfo)
    columns: tuple[str, ...] = ()  # the rated record columns in the registry's order (log)
    rows: Any = None  # PostRows: what the summary parts show of each post (on disk)
    counts: dict[int, int] = field(default_factory=dict)  # action (NOT_RATED: refused too) -> n

    @property
    def n(self) -> int:
        return len(self.posts)

    @property
    def rated(self) -> list[PostEntry]:
        """The posts with a rating (every post read: for a small report)."""
        return [p for p in self.posts if p.j is not None]

    def close(self) -> None:
        """Remove the temporary table of the summary rows."""
        if self.rows is not None:
            self.rows.close()


def visit_date(visit) -> _dt.date | None:
    try:
        return _dt.datetime.fromisoformat(visit.started_at).date()
    except (TypeError, ValueError):
        return None


def raised(action: int, state: Any) -> int:
    """``action``, or the action an office override (store ReviewState) sets where it is more
    severe; a post not rated stays not rated (nothing decided it)."""
    over = getattr(state, "action", None)
    if action == NOT_RATED or over is None or over <= action:
        return action
    return int(over)


def due_date(visit, action: int | None) -> _dt.date | None:
    """Visit date + the action's due days (engine DUE_DAYS, judgement); None: no deadline."""
    if action is None or DUE_DAYS[action] is None:
        return None
    d = visit_date(visit)
    return None if d is None else d + _dt.timedelta(days=DUE_DAYS[action])


def capacity_curves(batch, factors: np.ndarray = CURVE_FACTORS) -> tuple[np.ndarray, np.ndarray]:
    """Capacity (N) of every post re-rated at ``factors`` x its own height, in ONE engine call
    (engine.curves): (heights n x k in mm, capacities n x k in N)."""
    heights = batch.height_mm[:, None] * np.asarray(factors)[None, :]
    return heights, capacity_vs_height(batch, heights)


def batch_remedies(batch, rating: Rating):
    """Remedies of every failing post in ONE engine call (engine.remedies)."""
    return remedies(batch, rating)


def post_summary(rating: Rating, j: int, rem) -> dict[str, Any]:
    """The summary of post j (explain.summary), with its remedies taken from ``rem``, the
    remedies of every post found in one engine call (``batch_remedies``), when given."""
    if rem is None:
        return explain.summary(rating, j)
    out = explain.summary(rating, j, with_remedies=False)
    explain.remedy_keys(rating, j, out, found=rem)
    return out


def _close(a, b) -> bool:
    if a is None or b is None:
        return a is None and b is None
    a, b = float(a), float(b)
    if math.isnan(a) or math.isnan(b):
        return math.isnan(a) and math.isnan(b)
    return abs(a - b) <= REL_TOL * max(abs(a), abs(b), 1e-12)


def _differences(stored, rating: Rating, j: int, eds: dict[str, str]) -> list[str]:
    if stored is None:
        return [
            "No stored rating: this revision was saved unrated; the values shown are the "
            "re-rating made for this report."
        ]
    out: list[str] = []
    cur_action = int(rating.action[j])
    if stored.action is not None and stored.action != cur_action:
        out.append(
            f"The stored action was {ACTIONS[stored.action]}; the re-rating gives "
            f"{ACTIONS[cur_action]}."
        )
    if not _close(stored.capacity_n, float(rating.capacity_n[j])):
        out.append("The stored capacity differs from the re-rating.")
    if not _close(stored.ratio, None if math.isnan(rating.ratio[j]) else float(rating.ratio[j])):
        out.append("The stored demand/capacity ratio differs from the re-rating.")
    if stored.governing and stored.governing != rating.governing_name(j):
        out.append(
            f"The stored governing check was {stored.governing}; the re-rating gives "
            f"{rating.governing_name(j)}."
        )
    if stored.engine_version != ENGINE_VERSION:
        out.append(f"Stored by engine {stored.engine_version}; this report uses {ENGINE_VERSION}.")
    changed = sorted(
        k for k in set(stored.data_editions) | set(eds) if stored.data_editions.get(k) != eds.get(k)
    )
    if changed:
        out.append(
            "Reference-data editions changed since it was stored: " + ", ".join(changed) + "."
        )
    return out


# posts rated together: small enough that a chunk and its capacity curves stay within one
# engine block (every intermediate kept, no post re-rated alone: cost linear in the posts)
CHUNK = max(1, BLOCK // len(CURVE_FACTORS))


def check_label(r, name: str) -> str:
    """A check's name in words (the engine's label), never its key."""
    c = r.checks.get(name) if r is not None else None
    return c.label if c is not None else name.replace("_", " ")


def client_group(p) -> int | None:
    """The client summary's group of a post (a PostEntry or a PostRow): its action, but None
    (not assessed) for a post with no load (a capacity without a demand decides nothing) or no
    rating at all."""
    if not p.rated or p.ratio is None:
        return None
    return p.action


class PostRow(NamedTuple):
    """What the summary parts (cover, client summary, every-post table, open actions) show of
    one post: kept on disk (Log.scratch) between the report's two passes over the log, never one
    object per post in memory."""

    member_id: str
    tag: str  # the tag, or the start of the member id when none was typed
    location: str
    visit_name: str
    action: int | None  # None: the record has field errors (never rated)
    ratio: float | None  # None: not finite (no load) or no rating
    capacity_n: float | None  # None: not finite
    demand_n: float | None
    governs: str | None  # the governing check's label
    due_day: int | None  # date ordinal
    errors: str | None  # a refused record's field errors, "; "-joined
    why: str | None  # open posts: the warnings that set the action, " "-joined; None: none
    grp: int | None  # client_group
    ua: float  # urgency: the action, 2.5 for a post not rated (after make safe, before repair)
    ur: float  # then the ratio, -1 without one
    open: int  # an open action (not rated, monitor, repair, make safe)
    dated: int  # in the client's dates (not assessed, repair, make safe)

    @property
    def rated(self) -> bool:
        return self.action is not None and self.action != NOT_RATED

    @property
    def due(self) -> _dt.date | None:
        return None if self.due_day is None else _dt.date.fromordinal(self.due_day)


# most urgent first: make safe, not rated, repair, monitor, no action; then the larger ratio,
# then the tag, then the report's order (the scratch table's own)
URGENCY = ("-ua", "-ur", "tag")


class PostRows:
    """The PostRow of every post of a report, in a temporary table of the store (on disk)."""

    def __init__(self, log):
        self._t = log.scratch(PostRow._fields)

    def add(self, rows: list[PostRow]) -> None:
        self._t.add(rows)

    def count(self, **eq) -> int:
        return self._t.count(**eq)

    def in_order(self) -> Iterator[PostRow]:
        return map(PostRow._make, self._t.read())

    def by_urgency(self, **eq) -> Iterator[PostRow]:
        """The rows (those whose fields equal ``eq``), most urgent first (``URGENCY``)."""
        return map(PostRow._make, self._t.read(URGENCY, **eq))

    def close(self) -> None:
        self._t.close()


def _finite(x: float) -> float | None:
    return x if math.isfinite(x) else None


def post_row(
    view, visit, rating: Rating | None, j: int | None, errors: list[str], state: Any = None
) -> PostRow:
    """The PostRow of one post (``j``: its index into ``rating``, None when refused; ``state``:
    its store ReviewState, whose override raises the action in force)."""
    tag = view.label
    if j is None:
        action = ratio = cap = dem = gov = due = why = None
        errs: str | None = "; ".join(errors)
    else:
        action = raised(int(rating.action[j]), state)
        ratio = _finite(float(rating.ratio[j]))
        cap, dem = _finite(float(rating.capacity_n[j])), _finite(float(rating.demand_n[j]))
        gov = check_label(rating, rating.governing_name(j))
        d = due_date(visit, action)
        due = None if d is None else d.toordinal()
        why = " ".join(explain.action_reasons(rating, j)) or None
        errs = None
    rated = action is not None and action != NOT_RATED
    grp = None if not rated or ratio is None else action
    return PostRow(
        view.member_id,
        tag,
        view.location,
        visit.name,
        action,
        ratio,
        cap,
        dem,
        gov,
        due,
        errs,
        why,
        grp,
        2.5 if not rated else float(action),
        ratio if ratio is not None else -1.0,
        int(not rated or action in (1, 2, 3)),
        int(grp is None or action in (2, 3)),
    )


class LogChanged(ValueError):
    """The log's posts changed between the report's two passes over them."""

    def __init__(self):
        super().__init__(
            "the survey log changed while the report was being written (a post was saved, "
            "withdrawn, synced or re-rated meanwhile); write the report again"
        )


def _digest(views, parsed, rating: Rating | None) -> bytes:
    """What must be the same in both passes over one chunk: its posts' revisions and ratings."""
    h = hashlib.blake2b(digest_size=16)
    h.update("\0".join(v.observation_id for v in views).encode())
    h.update(np.asarray(parsed.index, dtype=np.int64).tobytes())
    if rating is not None:
        for a in (rating.action, rating.ratio, rating.capacity_n, rating.demand_n):
            h.update(np.ascontiguousarray(a).tobytes())
    return h.digest()


class Posts:
    """The report's posts in order (PostEntry), read again from the log and re-rated a chunk
    at a time each time they are iterated (``CHUNK`` posts in one engine call, their capacity
    curves and remedies in one more each): the second pass of the report, holding one chunk.
    Raises LogChanged when a chunk differs from the first pass (``digests``)."""

    def __init__(self, log, visit_id, site_id, n: int, digests: list[bytes], visits, kept_out):
        self._log, self._visit_id, self._site_id = log, visit_id, site_id
        self._n, self._digests = n, digests
        self._visits, self._kept_out = visits, kept_out

    def __len__(self) -> int:
        return self._n

    def __iter__(self) -> Iterator[PostEntry]:
        log = self._log
        k = 0
        chunks = log.iter_posts(self._visit_id, site_id=self._site_id, chunk=CHUNK)
        for views in chunks:
            parsed, rating = log.rate_records([p.record for p in views])
            if k >= len(self._digests) or _digest(views, parsed, rating) != self._digests[k]:
                chunks.close()
                raise LogChanged()
            k += 1
            yield from self._entries(views, parsed, rating)
        if k != len(self._digests):
            raise LogChanged()

    def _entries(self, views, parsed, rating) -> Iterator[PostEntry]:
        log = self._log
        errs: dict[int, list[str]] = {}
        for er in parsed.errors:
            errs.setdefault(er.row, []).append(er.sentence())  # the column named once
        row_to_j: dict[int, int] = {}
        rem = heights = caps = None
        if rating is not None:
            heights, caps = capacity_curves(parsed.batch)
            rem = batch_remedies(parsed.batch, rating)
            row_to_j = {int(i): j for j, i in enumerate(parsed.index)}
        att = log.attachments_of(views)
        revs = log.reviews_of(views)
        # the log's review and remedy states leave out the posts at a demo site kept out of its
        # lists (Log.demo_kept_out): the report has shown no such rows for them
        shown = [v for v in views if v.site_id not in self._kept_out]
        states = log.review_states_of(shown, revs)
        remedy = log.remedy_states_of(shown)
        for i, view in enumerate(views):
            j = row_to_j.get(i)
            visit = self._visits[view.visit_id]
            mine = att.get(view.member_id, [])
            common = {
                "attachments": mine,
                "reviews": revs.get(view.member_id, []),
                "review_state": states.get(view.member_id),
                "remedy_state": remedy.get(view.member_id),
                "photo_files": {a.id: log.photo_file(a) for a in mine},
                "load_stored": _loader(log, view.observation_id),
            }
            if j is None:
                yield PostEntry(view, visit, None, errs.get(i, []), {}, **common)
                continue
            yield PostEntry(
                view,
                visit,
                j,
                [],
                parsed.meta[j],
                rating,
                rem,
                due_date(visit, raised(int(rating.action[j]), common["review_state"])),
                curve_h=heights[j],
                curve_cap=caps[j],
                **common,
            )


def _loader(log, obs_id: str):
    return lambda: log.rating_for(obs_id)


def gather(
    log,
    site_id: str | None = None,
    visit_id: str | None = None,
    units: str = "us",
    progress=None,
    now: _dt.datetime | None = None,
) -> ReportData:
    """Everything the report shows, in two passes over the log, each a chunk of ``CHUNK`` posts
    at a time (memory flat in the number of posts):

    1. here: each chunk is read (``log.iter_posts``) and rated in one engine call, and what the
       summary parts show of each post is kept as a PostRow in a temporary table of the store
       (``ReportData.rows``), with the counts, visits, sites and conflicts;
    2. when ``ReportData.posts`` is iterated (the per-post sections): each chunk is read and
       rated again (the same engine call: the same rating, checked), with its capacity curves,
       remedies, photos, reviews and states, and dropped after.

    ``progress(done, total, stage)``; ``now``: the report's issue time (default: the clock now).
    The log gives the posts parsed and rated (``log.rate_records(records) -> (parsed,
    rating)``, the store's API over the records layer and the engine): the report parses
    nothing itself."""
    all_visits = {v.id: v for v in log.visits()}
    all_sites = {s.id: s for s in log.sites()}
    if visit_id is not None:
        visit = log.visit(visit_id)
        site_id = site_id or visit.site_id
        scope_args = (visit_id, None)
        visits = [visit]
        scope = f"visit {visit.name}"
    elif site_id is not None:
        scope_args = (None, site_id)
        visits = log.visits(site_id)
        scope = f"site {log.site(site_id).name}"
    else:
        scope_args = (None, None)
        visits = list(all_visits.values())
        scope = "the whole log"
    scope_visits = list(visits)
    conflicted = log.conflicts()  # before the pass: it may note what it found in the log
    wanted = set(conflicted)
    signoffs_all = log.sign_offs()
    signoff_members = {r.member_id for r in signoffs_all if r.member_id}
    tags: dict[str, str] = {}  # member id -> tag, of the conflicted posts in scope
    in_scope: set[str] = set()  # of the members sign-offs name
    post_sites: dict[str, None] = {}
    seen = {v.id for v in visits}
    counts: dict[int, int] = {}
    digests: list[bytes] = []
    rows = PostRows(log)
    first: Rating | None = None
    n = log.count_posts(scope_args[0], site_id=scope_args[1])
    done = 0
    try:
        for views in log.iter_posts(scope_args[0], site_id=scope_args[1], chunk=CHUNK):
            parsed, rating = log.rate_records([p.record for p in views])
            digests.append(_digest(views, parsed, rating))
            first = first or rating
            errs: dict[int, list[str]] = {}
            for er in parsed.errors:
                errs.setdefault(er.row, []).append(er.sentence())
            row_to_j = {} if rating is None else {int(i): j for j, i in enumerate(parsed.index)}
            states = log.review_states_of(views)  # an override raises the action in force
            out = []
            for i, view in enumerate(views):
                j = row_to_j.get(i)
                row = post_row(
                    view, all_visits[view.visit_id], rating, j, errs.get(i, []),
                    states.get(view.member_id),
                )  # fmt: skip
                out.append(row)
                a = NOT_RATED if row.action is None else row.action
                counts[a] = counts.get(a, 0) + 1
                post_sites[view.site_id] = None
                # visits the posts' current revisions were made on, besides the ones in scope
                if view.visit_id not in seen:
                    visits.append(all_visits[view.visit_id])
                    seen.add(view.visit_id)
                if view.member_id in wanted:
                    tags[view.member_id] = view.label
                if view.member_id in signoff_members:
                    in_scope.add(view.member_id)
            rows.add(out)
            done += len(views)
            if progress is not None:
                progress(done, n, "rating")
    except BaseException:
        rows.close()
        raise
    site_ids = (
        [site_id]
        if site_id
        else list(dict.fromkeys([v.site_id for v in scope_visits] + list(post_sites)))
    )
    sites = [all_sites[s] if s in all_sites else log.site(s) for s in site_ids]
    visit_ids = {v.id for v in visits}
    signoffs = [r for r in signoffs_all if r.member_id not in in_scope and r.visit_id in visit_ids]
    conflicts = []
    for mid in conflicted:
        if mid in tags:
            hist = log.history(mid)
            heads = [o for o in hist if not any(c.supersedes == o.id for c in hist)]
            conflicts.append((tags[mid], heads))
    posts = Posts(
        log, scope_args[0], scope_args[1], done, digests, all_visits, set(log.demo_kept_out)
    )
    return ReportData(
        sites,
        visits,
        scope,
        posts,
        first,
        conflicts,
        ENGINE_VERSION,
        editions(),
        now if now is not None else _dt.datetime.now().astimezone(),
        units,
        signoffs,
        columns=log.record_columns(),
        rows=rows,
        counts=counts,
    )
