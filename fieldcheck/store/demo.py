"""The demo survey: an invented renovation, so the interface opens on something real.

"14 Alder Row" is a made-up two-storey terraced house with a basement. The basement survey finds
four old posts (rough-sawn, one decayed at the base, one bowed, a round log post); the shoring
check finds a run of temporary 4x4 shores under a header where a bearing wall will come out, one
of them overloaded (it must be made safe). The records live in data/demo/survey.csv so they ship
with the wheel. Seeding also makes one correction and one withdrawn post, so history is visible.

The demo lives in a file of its own (``default_demo_path()``, beside the user's survey log), marked
as invented in its meta table: sync refuses it both ways, so it never reaches an office nor
another inspector's log, and the user's own log never holds it.

Older versions wrote the demo into the user's own log (and synced it, so offices and other
inspectors' logs may hold it too). Those rows stay (the log is append-only), recognised by the
demo's site (its address says "(invented)", its notes begin "Invented demo:") and everything
recorded under it (``fieldcheck.store.demo_rows``): bundles and hub syncs leave them out both
ways, and ``Log`` leaves them out of its lists, counts and exports (``Log.demo_kept_out``).
"""

from __future__ import annotations

import csv
from pathlib import Path

from fieldcheck.store.demo_rows import DEMO_META
from fieldcheck.store.repo import Log, Site, Visit

SITE_NAME = "14 Alder Row"
SITE_ADDRESS = "14 Alder Row, Millbrook (invented)"
INSPECTOR = "R. Okafor (demo)"
VISITS = {
    "basement": ("Basement survey", "standard", ("tape", "moisture meter", "awl")),
    "shoring": ("Shoring check before the wall comes out", "minimum", ("tape", "level")),
}


def default_demo_path() -> Path:
    """The demo's own file, beside the user's survey log (never the log itself)."""
    from fieldcheck.store.paths import default_log_path

    return default_log_path().with_name("demo-invented.fieldcheck")


def is_demo(log) -> bool:
    meta = getattr(log, "meta", None)
    try:
        return bool(meta and meta().get(DEMO_META))
    except Exception:
        return False


def demo_csv() -> Path:
    from fieldcheck.engine.refdata import data_dir

    return data_dir() / "demo" / "survey.csv"


def demo_rows() -> list[dict[str, str]]:
    """The demo records (with a ``visit`` column: basement or shoring)."""
    with demo_csv().open(newline="", encoding="utf-8") as fh:
        lines = [ln for ln in fh if not ln.startswith("#") and ln.strip()]
    return [dict(r) for r in csv.DictReader(lines)]


def seed_demo(log: Log) -> tuple[Site, list[Visit]]:
    """Write the demo survey into ``log`` (one transaction per action, as a person would) and
    mark the log as holding invented data (sync then refuses it)."""
    with log._write():
        log.db.execute(
            "INSERT OR REPLACE INTO meta VALUES (?, ?)",
            [DEMO_META, "invented: describes no real building; never synced"],
        )
    site = log.add_site(
        SITE_NAME,
        SITE_ADDRESS,
        notes="Invented demo: a bearing wall on the ground "
        "floor comes out; the header above it is shored until the new beam is in.",
    )
    visits: dict[str, Visit] = {}
    for key, (name, level, instruments) in VISITS.items():
        visits[key] = log.add_visit(site.id, INSPECTOR, level, name=name, instruments=instruments)
    members: dict[str, str] = {}
    for row in demo_rows():
        key = row.pop("visit")
        obs = log.save_post(visits[key].id, row)
        members[row["tag"]] = obs.member_id
    # a correction: S3 was first measured to the top of the wedges, then re-measured
    s3 = log.head(members["S3"])
    if s3 is not None:
        log.save_post(
            visits["shoring"].id,
            {
                **s3.record,
                "height": "8ft 1in",
                "notes": s3.record.get("notes", "") + "; height re-measured to the cap",
            },
            member_id=members["S3"],
        )
    # a withdrawn post: a shore tagged twice by mistake
    dup = log.save_post(
        visits["shoring"].id,
        {
            "tag": "S6",
            "location": "duplicate of S5",
            "size": "4x4",
            "height": "8ft 4in",
            "species": "douglas-fir-larch",
            "grade": "no2",
            "load": "2800lbf",
            "duration": "seven-days",
            "construction": "yes",
        },
    )
    log.withdraw(dup.member_id, visits["shoring"].id, "tagged twice: the same shore as S5")
    return site, list(visits.values())
