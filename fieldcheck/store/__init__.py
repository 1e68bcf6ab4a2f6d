"""The survey log: SQLite through sqlite-utils, append-only, one file per inspector's laptop.

Nothing outside ``fieldcheck.store`` writes SQL. Code against this API (everything returns frozen
dataclasses from ``fieldcheck.store.repo``)::

    from fieldcheck.store import Log, default_log_path, seed_demo

    log = Log.open(path=None, author=None, device=None, readonly=False)   # None: default_log_path()
        # creates the file; upgrades an older schema after a backup copy beside it
        # (log.backup_path); refuses a newer, foreign or damaged file with LogError (a ValueError,
        # one sentence). Use as a context manager or call log.close().
    log.path, log.device_id, log.author, log.schema_version, log.meta(), log.is_empty()
    log.next_report_revision(scope) -> int   # 0 at a report's first issue, +1 at each reissue

    site  = log.add_site(name, address="", notes="")                  -> Site
    log.sites() -> list[Site];  log.site(id);  log.find_site(name) -> Site | None
    visit = log.add_visit(site_id, inspector=None, level="minimum",   -> Visit
                          *, name=None, instruments=(), notes="", started_at=None)
    log.visits(site_id=None) -> list[Visit];  log.visit(id);  log.find_visit(site_id, name)

    obs = log.save_post(visit_id, record, member_id=None, *, allow_errors=False) -> Observation
        # record: dict[str, str] as typed (fieldcheck.records column names), stored verbatim
        # (empty cells dropped). member_id None: a new post; else a new revision superseding the
        # current head. Rated in the same transaction. Field errors raise ValueError (first error)
        # unless allow_errors=True (then stored unrated).
    log.withdraw(member_id, visit_id, reason) -> Observation
        # hidden from posts(), kept in history
    log.head(member_id) -> Observation | None;  log.history(member_id) -> list[Observation]
    log.observation(id) -> Observation
    log.posts(visit_id=None, *, site_id=None, include_withdrawn=False) -> list[PostView]
        # current revision per member (members seen on that visit), in the order first recorded:
        # tag, location, record, ratio, action, action_label, capacity_n, demand_n, governing,
        # engine_version, revised_at, revised_by, conflict
    log.iter_posts(visit_id=None, *, site_id=None, chunk=STORE_CHUNK) -> Iterator[list[PostView]]
        # the same posts in the same order, a chunk at a time from one cursor (the report);
        # per chunk: log.attachments_of(views), log.reviews_of(views) -> {member_id: [...]},
        # log.review_states_of(views), log.remedy_states_of(views) -> {member_id: state}
    log.count_posts(visit_id=None, *, site_id=None) -> int
    log.scratch(columns) -> ScratchRows   # a private temporary table on disk (store/scratch.py)
    log.counts_by_action(visit_id=None) -> dict[str, int]   # "no-action", "monitor",
        # "repair-or-brace", "make-safe-now", "not rated"
    log.rating_for(observation_id) -> StoredRating | None   # latest, exactly as stored
    log.ratings_for(observation_id) -> list[StoredRating]   # every engine run, oldest first
        # StoredRating: engine_version, data_editions, capacity_n, demand_n, ratio, action,
        # action_label, governing, flags, summary (the `rate --json` dict without cautions, for
        # posts saved one at a time; None for bulk-rated rows), created_at
    log.rerate_all() -> RerateResult(rated, unrated, engine_version, errors)  # one engine call
    log.conflicts() -> list[member_id]                      # members with more than one head

    log.import_rows(rows, site, visit, inspector=None)
        -> ImportResult(imported, errors, site, visit)
        # rows: iterable of dict[str, str] (the `rate --batch` column set); one transaction, one
        # engine call; bad rows are left out and reported as RowError(column, message, row=);
        # kept=True: the rows are already as the log keeps them (PostsFile.records), not cleaned
    log.export_rows(visit_id=None) -> ExportTable(columns, rows)   # record columns + rating columns

    log.attach(observation_id, photo_path, caption="") -> Attachment   # path + sha256 + size
    log.attach_photo(observation_id, photo, caption="") -> Attachment  # copied into the log's
        # photo folder (<stem>-photos/<sha256>.<ext>) first, so sync carries it (store/photos.py)
    log.photo_file(attachment) -> Path | None   # the file, only when its sha256 is the recorded one
    log.attachments(member_id=None) -> list[Attachment]
    log.check_attachments() -> list[AttachmentProblem]
        # .problem "missing" | "changed", .sentence()
    log.add_review(kind, text, *, member_id=None, observation_id=None, visit_id=None,
                   action=None) -> Review                 # the raw record; prefer these:
    log.review_post(member_id, kind, text="", action=None) -> Review
        # kind "accept" | "override" (action 0-3 or label, text = reason, both required) |
        # "require-remedy" (text = the remedy required) | "note"; about the current revision
    log.settle(member_id, keep, reason, visit_id=None) -> Review   # a revision with both
        # parents (supersedes the kept head, merges the other); conflicts() no longer lists it
    log.sign_off(visit_id, text="") -> Review
    log.review_states(visit_id=None) -> {member_id: ReviewState}   # fieldcheck.store.reviews:
        # .state "awaiting review" | "accepted" | "action overridden" | "remedy required" |
        # "conflict settled"; .by, .on, .instruction, .action, .action_label, .awaiting,
        # .line() -> "accepted: reviewed by ben, on 2026-12-02; ..."
    log.review_state(member_id) -> ReviewState             # one post (indexed lookups)
    log.sign_offs(visit_id=None) -> list[Review]
    log.reviews(member_id=None, *, kind=None) -> list[Review]   # oldest first
    log.propose_remedy(observation_id, kind=, description=, changes=, ratio=None) -> Proposal
        # a remedy as a proposal linked to that revision (the post as found); the post itself
        # is not changed and stays rated as found
    log.proposals(member_id=None, open_only=False) -> list[Proposal]   # .done_on None while open
    log.record_remedied(member_id, visit_id, proposal_id=None, record=None, done_on=None)
        -> Observation                                    # a new revision: the post as remedied
    log.remedy_states(visit_id=None) -> {member_id: RemedyState}  # .state "as found" |
        # "proposed" | "as remedied" (.done_on), .proposals (open ones)
    log.counts_by_remedy(visit_id=None) -> {"as found": n, "proposed": n, "as remedied": n}
    log.integrity() -> IntegrityReport                    # .ok, .problems() -> list[str]

    seed_demo(log) -> (Site, list[Visit])                 # the invented demo survey

Guarantees: WAL + synchronous=FULL + foreign_keys=ON on every connection; STRICT tables; every
method that writes is one transaction; revision tables are append-only (triggers refuse UPDATE and
DELETE); every row has a device-made UUID, device_id, per-device device_seq, author and a time
with zone; the current view follows parent links and device_seq, never the wall clock.
"""

from __future__ import annotations

from typing import Any

from fieldcheck.store.paths import default_log_path

__all__ = [
    "Attachment",
    "AttachmentProblem",
    "ExportTable",
    "ImportResult",
    "IntegrityReport",
    "Log",
    "LogError",
    "Observation",
    "PostView",
    "RerateResult",
    "Review",
    "RowError",
    "Site",
    "StoredRating",
    "Visit",
    "default_log_path",
    "seed_demo",
]


def __getattr__(name: str) -> Any:  # lazy: `import fieldcheck.store` stays cheap
    if name == "seed_demo":
        from fieldcheck.store.demo import seed_demo

        return seed_demo
    if name == "LogError":
        from fieldcheck.store.connection import LogError

        return LogError
    if name == "RowError":
        from fieldcheck.row_error import RowError

        return RowError
    if name in __all__:
        from fieldcheck.store import repo

        return getattr(repo, name)
    raise AttributeError(name)
