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
from fieldcheck.engine.rating import rate
from fieldcheck.engine.refdata import editions
from fieldcheck.engine.result import ACTIONS, DUE_DAYS, NOT_RATED, Rating

# heights of a capacity curve as multiples of the post's own height: a quarter to twice it, as
# engine.curves.default_heights (judgement: shows how fast capacity falls off around the post)
CURVE_FACTORS = np.linspace(0.25, 2.0, 20)
# a stored rating "differs" from the re-rating beyond this relative change (float noise below)
REL_TOL = 1e-6


@dataclass
class PostEntry:
    """One post of the report: the record as typed, its current re-rating and its stored rating."""

    view: Any  # store PostView
    visit: Any  # store Visit of the current revision
    j: int | None  # index into ReportData.rating; None when the engine refuses the record
    errors: list[str]  # field errors of a refused record
    meta: dict[str, Any]
    stored: Any  # StoredRating | None
    summary: dict[str, Any] | None
    working: list[Any]
    differs: list[str]  # sentences: how the stored rating differs from the re-rating
    due: _dt.date | None
    attachments: list[Any] = field(default_factory=list)
    reviews: list[Any] = field(default_factory=list)
    curve_h: np.ndarray | None = None  # mm
    curve_cap: np.ndarray | None = None  # N
    review_state: Any = None  # store ReviewState: awaiting review, accepted, overridden, ...

    @property
    def tag(self) -> str:
        return self.view.tag or self.view.member_id[:8]

    @property
    def action(self) -> int | None:
        """Current action category (0-3), None when not rated."""
        return None if self.summary is None else ACTIONS.index(self.summary["action"])

    @property
    def rated(self) -> bool:
        """A decision was made (False: field errors, or not rated because the load is missing)."""
        return self.action is not None and self.action != NOT_RATED

    @property
    def urgency_key(self) -> tuple:
        # not rated (no record, or no load): treated as unsafe until assessed, listed after the
        # posts to make safe now and before those to repair (compare with NOT_RATED, never >=)
        a = 2.5 if not self.rated else self.action
        r = self.summary.get("demand_capacity_ratio") if self.summary else None
        return (-a, -(r if r is not None else -1.0), self.tag)


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
    """Capacity (N) of every post re-rated at ``factors`` x its height, in ONE engine call:
    (heights n x k in mm, capacities n x k in N). Brace points are dropped (full height unbraced),
    as engine.curves.capacity_vs_height does; unlike it, each post gets its own heights."""
    n, k = batch.n, len(factors)
    if n == 0:
        return np.zeros((0, k)), np.zeros((0, k))
    heights = batch.height_mm[:, None] * factors[None, :]
    big = batch.take(np.repeat(np.arange(n), k)).replace(
        height_mm=heights.ravel(),
        lu1_mm=np.nan,
        lu2_mm=np.nan,
        braced1=False,
        braced2=False,
    )
    cap = np.asarray(rate(big).capacity_n, dtype=np.float64).reshape(n, k)
    return heights, cap


def batch_remedies(batch, rating: Rating):
    """Remedies of every failing post in ONE engine call (engine.remedies), or None if absent."""
    try:
        from fieldcheck.engine.remedies import remedies
    except ImportError:
        return None
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


def gather(
    log, site_id: str | None = None, visit_id: str | None = None, units: str = "us"
) -> ReportData:
    """Everything the report shows; the current records re-rated in one engine call."""
    from fieldcheck.records import parse_records

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
    for p in views:
        if p.visit_id not in {v.id for v in visits}:
            visits.append(all_visits[p.visit_id])

    parsed = parse_records([p.record for p in views])
    rating = rate(parsed.batch) if parsed.batch.n else None
    heights, caps = capacity_curves(parsed.batch) if rating is not None else (None, None)
    rem = batch_remedies(parsed.batch, rating) if rating is not None else None
    errs: dict[int, list[str]] = {}
    for e in parsed.errors:
        errs.setdefault(e.row, []).append(f"{e.column}: {e.message}")
    row_to_j = {int(i): j for j, i in enumerate(parsed.index)}
    eds = editions()

    members = {p.member_id for p in views}
    att: dict[str, list] = {}
    for a in log.attachments():
        if a.member_id in members:
            att.setdefault(a.member_id, []).append(a)
    find = getattr(log, "photo_file", None)
    files = {a.id: (find(a) if find is not None else None) for lst in att.values() for a in lst}
    rev: dict[str, list] = {}
    visit_ids = {v.id for v in visits}
    signoffs = []
    for r in log.reviews():
        if r.member_id in members:
            rev.setdefault(r.member_id, []).append(r)
        elif r.kind == "sign-off" and r.visit_id in visit_ids:
            signoffs.append(r)

    entries: list[PostEntry] = []
    for i, view in enumerate(views):
        j = row_to_j.get(i)
        visit = all_visits[view.visit_id]
        stored = log.rating_for(view.observation_id)
        if j is None:
            entries.append(
                PostEntry(
                    view,
                    visit,
                    None,
                    errs.get(i, []),
                    {},
                    stored,
                    None,
                    [],
                    [],
                    None,
                    att.get(view.member_id, []),
                    rev.get(view.member_id, []),
                )
            )
            continue
        summary = post_summary(rating, j, rem)
        entries.append(
            PostEntry(
                view,
                visit,
                j,
                [],
                parsed.meta[j],
                stored,
                summary,
                explain.working(rating, j),
                _differences(stored, rating, j, eds),
                due_date(visit, int(rating.action[j])),
                att.get(view.member_id, []),
                rev.get(view.member_id, []),
                heights[j],
                caps[j],
            )
        )

    states = log.review_states() if hasattr(log, "review_states") else {}
    for en in entries:
        en.review_state = states.get(en.view.member_id)

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
        rating,
        conflicts,
        ENGINE_VERSION,
        eds,
        _dt.datetime.now().astimezone(),
        units,
        signoffs,
        review_states=_states(log, "review_states", members),
        remedy_states=_states(log, "remedy_states", members),
        photo_files=files,
    )


def _states(log, method: str, members: set[str]) -> dict[str, Any]:
    """A store's per-post states (review, remedy) for the report's posts; {} from a store
    without them."""
    fn = getattr(log, method, None)
    if fn is None:
        return {}
    return {m: st for m, st in fn().items() if m in members}
