"""What a survey report shows, gathered from the log and re-rated in ONE engine call.

The renderer (html.py) only formats what is here. Every number a report prints comes from
``ReportData.rating`` (the current records re-rated together) or from the stored rating it is
compared with; per-post text (summary, working) is asked of the engine only for the posts of the
report, and the capacity-against-height curves of every post come from one more engine call.
"""

from __future__ import annotations

import datetime as _dt
import math
from dataclasses import dataclass, field
from typing import Any

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
    load_stored: Any = None  # () -> StoredRating | None (the log, asked when written)
    _cache: dict[str, Any] = field(default_factory=dict, repr=False)

    @property
    def tag(self) -> str:
        return self.view.tag or self.view.member_id[:8]

    @property
    def action(self) -> int | None:
        """Current action category (ACTIONS index), None when the record has errors."""
        return None if self.j is None else int(self.rating.action[self.j])

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
    posts: list[PostEntry]
    rating: Rating | None
    conflicts: list[tuple[str, list[Any]]]  # (tag, heads) of members with more than one head
    engine_version: str
    editions: dict[str, str]
    created: _dt.datetime
    units: str
    signoffs: list[Any] = field(default_factory=list)  # sign-off reviews of the report's visits
    info: ReportInfo = field(default_factory=ReportInfo)
    review_states: dict[str, Any] = field(default_factory=dict)  # member id -> ReviewState
    remedy_states: dict[str, Any] = field(default_factory=dict)  # member id -> RemedyState
    columns: tuple[str, ...] = ()  # the rated record columns in the registry's order (log)
    photo_files: dict[str, Any] = field(default_factory=dict)  # attachment id -> Path | None

    @property
    def rated(self) -> list[PostEntry]:
        return [p for p in self.posts if p.j is not None]

    def by_urgency(self) -> list[PostEntry]:
        return sorted(self.posts, key=lambda p: p.urgency_key)


def visit_date(visit) -> _dt.date | None:
    try:
        return _dt.datetime.fromisoformat(visit.started_at).date()
    except (TypeError, ValueError):
        return None


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


def _rate_chunk(log, records: list[dict], meta_out: list, errs_out: dict, base: int):
    """Rate one chunk, parsed and rated by the log (``log.rate_records``): (rating, index of
    each row into it, remedies, heights, caps)."""
    parsed, rating = log.rate_records(records)
    for e in parsed.errors:
        errs_out.setdefault(base + e.row, []).append(e.sentence())  # the column named once
    meta_out.extend(parsed.meta)
    if rating is None:
        return None, {}, None, None, None
    heights, caps = capacity_curves(parsed.batch)
    rem = batch_remedies(parsed.batch, rating)
    return rating, {int(i): j for j, i in enumerate(parsed.index)}, rem, heights, caps


def gather(
    log,
    site_id: str | None = None,
    visit_id: str | None = None,
    units: str = "us",
    progress=None,
    now: _dt.datetime | None = None,
) -> ReportData:
    """Everything the report shows: the current records re-rated chunk by chunk (each chunk in
    one engine call, its capacity curves in one more). ``progress(done, total, stage)``;
    ``now``: the report's issue time (default: the clock now).

    The log gives the posts parsed and rated (``log.rate_records(records) -> (parsed, rating)``,
    the store's API over the records layer and the engine): the report parses nothing itself.
    """
    all_visits = {v.id: v for v in log.visits()}
    all_sites = {s.id: s for s in log.sites()}
    if visit_id is not None:
        visit = log.visit(visit_id)
        site_id = site_id or visit.site_id
        views = log.posts(visit_id)
        visits = [visit]
        scope = f"visit {visit.name}"
    elif site_id is not None:
        views = log.posts(site_id=site_id)
        visits = log.visits(site_id)
        scope = f"site {log.site(site_id).name}"
    else:
        views = log.posts()
        visits = list(all_visits.values())
        scope = "the whole log"
    site_ids = (
        [site_id]
        if site_id
        else list(dict.fromkeys([v.site_id for v in visits] + [p.site_id for p in views]))
    )
    sites = [all_sites[s] if s in all_sites else log.site(s) for s in site_ids]
    # visits the posts' current revisions were made on, besides the ones in scope
    seen = {v.id for v in visits}
    for p in views:
        if p.visit_id not in seen:
            visits.append(all_visits[p.visit_id])
            seen.add(p.visit_id)

    eds = editions()
    members = {p.member_id for p in views}
    att: dict[str, list] = {}
    for a in log.attachments():
        if a.member_id in members:
            att.setdefault(a.member_id, []).append(a)
    find = log.photo_file
    files = {a.id: find(a) for lst in att.values() for a in lst}
    rev: dict[str, list] = {}
    visit_ids = {v.id for v in visits}
    signoffs = []
    for r in log.reviews():
        if r.member_id in members:
            rev.setdefault(r.member_id, []).append(r)
        elif r.kind == "sign-off" and r.visit_id in visit_ids:
            signoffs.append(r)
    states = log.review_states()

    def loader(obs_id: str):
        return lambda: log.rating_for(obs_id)

    entries: list[PostEntry] = []
    first: Rating | None = None
    n = len(views)
    for start in range(0, n, CHUNK):
        chunk = views[start : start + CHUNK]
        meta: list = []
        errs: dict[int, list[str]] = {}
        rating, row_to_j, rem, heights, caps = _rate_chunk(
            log, [p.record for p in chunk], meta, errs, 0
        )
        first = first or rating
        for i, view in enumerate(chunk):
            j = row_to_j.get(i)
            visit = all_visits[view.visit_id]
            common = {
                "attachments": att.get(view.member_id, []),
                "reviews": rev.get(view.member_id, []),
                "review_state": states.get(view.member_id),
                "load_stored": loader(view.observation_id),
            }
            if j is None:
                entries.append(PostEntry(view, visit, None, errs.get(i, []), {}, **common))
                continue
            entries.append(
                PostEntry(
                    view,
                    visit,
                    j,
                    [],
                    meta[j],
                    rating,
                    rem,
                    due_date(visit, int(rating.action[j])),
                    curve_h=heights[j],
                    curve_cap=caps[j],
                    **common,
                )
            )
        if progress is not None:
            progress(min(start + CHUNK, n), n, "rating")

    conflicts = []
    tags = {p.member_id: p.tag for p in views}
    for mid in log.conflicts():
        if mid in members:
            heads = [
                o
                for o in log.history(mid)
                if not any(c.supersedes == o.id for c in log.history(mid))
            ]
            conflicts.append((tags.get(mid) or mid[:8], heads))
    return ReportData(
        sites,
        visits,
        scope,
        entries,
        first,
        conflicts,
        ENGINE_VERSION,
        eds,
        now if now is not None else _dt.datetime.now().astimezone(),
        units,
        signoffs,
        review_states=_states(log, "review_states", members),
        remedy_states=_states(log, "remedy_states", members),
        photo_files=files,
        columns=log.record_columns(),
    )


def _states(log, method: str, members: set[str]) -> dict[str, Any]:
    """The log's per-post states (review, remedy) for the report's posts."""
    return {m: st for m, st in getattr(log, method)().items() if m in members}
