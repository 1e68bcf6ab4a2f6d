"""Kill harness for the survey log (run as a script by test_store_kill.py).

Per cycle a forked worker opens the log (no connection crosses the fork) and writes as fast as
it can: single posts (member + observation + rating in one transaction) and five-post imports
(site lookup, a new visit, 5 members, 5 observations, 5 ratings in one transaction), printing
an acknowledgement after each commit returns. The parent SIGKILLs it at a random moment, then
reopens the file and checks: integrity_check ok, every acknowledged write present, no
transaction half-applied, the per-device sequence gap-free. The last line printed is one JSON
object: {"cycles", "acked", "failures": [...]}.
"""

from __future__ import annotations

import json
import os
import random
import signal
import sqlite3
import sys
import time

from fieldcheck.store import Log, rated  # imported before any fork, no connection open

POST = {
    "tag": "K",
    "size": "4x4",
    "height": "8ft",
    "species": "douglas-fir-larch",
    "grade": "no2",
    "load": "3000lbf",
}


def worker(path: str, fd: int, cycle: int) -> None:
    out = os.fdopen(fd, "w", buffering=1)
    log = Log.open(path, author="kill", device="dev-kill")
    site = log.find_site("Kill site") or log.add_site("Kill site")
    out.write(f"site {site.id}\n")
    visit = log.find_visit(site.id, "singles") or log.add_visit(site.id, "k", name="singles")
    out.write(f"visit {visit.id}\n")
    k = 0
    while True:
        k += 1
        if k % 3:
            obs = log.save_post(visit.id, {**POST, "tag": f"C{cycle}-{k}"})
            out.write(f"post {obs.id}\n")
        else:
            name = f"batch {cycle}-{k}"
            res = log.import_rows(
                [{**POST, "tag": f"B{cycle}-{k}-{j}"} for j in range(5)], "Kill site", name
            )
            out.write(f"batch {name} {res.imported}\n")


def verify(path: str, acks: list[str]) -> list[str]:
    bad: list[str] = []
    con = sqlite3.connect(path)
    try:
        ic = con.execute("PRAGMA integrity_check").fetchall()
        if ic != [("ok",)]:
            bad.append(f"integrity_check: {ic[:3]}")
        fk = con.execute("PRAGMA foreign_key_check").fetchall()
        if fk:
            bad.append(f"foreign keys: {fk[:3]}")
        if not con.execute("SELECT 1 FROM sqlite_master WHERE name = 'observations'").fetchone():
            return (
                bad
                if not any(a.startswith(("post", "batch")) for a in acks)
                else [*bad, "schema lost"]
            )
        obs = {r[0] for r in con.execute("SELECT id FROM observations")}
        rated = {r[0] for r in con.execute("SELECT observation_id FROM ratings")}
        visits = {r[0]: r[1] for r in con.execute("SELECT name, id FROM visits")}
        for a in acks:
            kind, _, rest = a.partition(" ")
            if kind == "post" and rest not in obs:
                bad.append(f"acknowledged post {rest} missing")
            if kind == "batch":
                name = rest.rsplit(" ", 1)[0]
                if name not in visits:
                    bad.append(f"acknowledged import {name} missing")
        # no half-applied transaction: every observation rated and with its member; every import
        # visit holds exactly its five posts
        if obs - rated:
            bad.append(f"{len(obs - rated)} observations without their rating")
        orphans = con.execute(
            "SELECT count(*) FROM observations o LEFT JOIN members m ON m.id = o.member_id "
            "WHERE m.id IS NULL"
        ).fetchone()[0]
        if orphans:
            bad.append(f"{orphans} observations without a member")
        for name, vid in visits.items():
            if name.startswith("batch "):
                n = con.execute(
                    "SELECT count(*) FROM observations WHERE visit_id = ?", [vid]
                ).fetchone()[0]
                if n != 5:
                    bad.append(f"import {name} half-applied: {n} of 5 posts")
        # the sequence counter moved in the same transactions as the rows: gap-free, no overlap
        seqs = sorted(
            r[0]
            for t in ("sites", "visits", "members", "observations", "ratings")
            for r in con.execute(f"SELECT device_seq FROM {t} WHERE device_id = 'dev-kill'")
        )
        last = con.execute("SELECT value FROM meta WHERE key = 'seq:dev-kill'").fetchone()
        if seqs != list(range(1, len(seqs) + 1)) or (seqs and int(last[0]) != seqs[-1]):
            bad.append(f"device_seq not gap-free: {len(seqs)} rows, counter {last}")
    finally:
        con.close()
    return bad


def main() -> None:
    path, cycles, seed = sys.argv[1], int(sys.argv[2]), int(sys.argv[3])
    # warm the engine before forking (no connection is open yet), so each worker writes at once
    rated.rate([POST])
    rated.engine_stamp()
    # and what opening a log loads (sqlite-utils and its plugins): a throwaway log beside the
    # real one, closed again, so no connection crosses the fork. Reopening it and three saves
    # time this machine now: the kill window follows, so a loaded machine still sees kills
    # mid-stream, not only before the first write
    with Log.open(path + ".warm", author="kill", device="dev-warm") as warm:
        visit = warm.add_visit(warm.add_site("Warm site").id, "k", name="warm")
    t0 = time.perf_counter()
    with Log.open(path + ".warm", author="kill", device="dev-warm") as warm:
        for j in range(3):
            warm.save_post(visit.id, {**POST, "tag": f"W{j}"})
    window = max(0.12, 3 * (time.perf_counter() - t0))
    rnd = random.Random(seed)
    failures: list[str] = []
    total_acks = 0
    for cycle in range(cycles):
        r, w = os.pipe()
        pid = os.fork()
        if pid == 0:  # the writer
            os.close(r)
            try:
                worker(path, w, cycle)
            except BaseException as exc:  # a writer that cannot write is a failure too
                with os.fdopen(w, "w") as fh:
                    fh.write(f"error {exc!r}\n")
            finally:
                os._exit(1)
        os.close(w)
        # first cycles die early (during creation and migration), later ones mid-stream
        time.sleep(rnd.uniform(0.0, 0.02 if cycle < 5 else window))
        os.kill(pid, signal.SIGKILL)
        os.waitpid(pid, 0)
        with os.fdopen(r) as fh:
            text = fh.read()
        acks = list(text.split("\n")[:-1])  # an unterminated last line was not acked
        total_acks += sum(a.startswith(("post", "batch")) for a in acks)
        bad = [a for a in acks if a.startswith("error")] + verify(path, acks)
        failures += [f"cycle {cycle}: {b}" for b in bad]
        if bad:
            break
    # finally the log opens normally and says it is sound
    n_posts = 0
    try:
        with Log.open(path) as log:
            rep = log.integrity()
            if not rep.ok:
                failures.append(f"final check: {rep.problems()}")
            n_posts = len(log.posts())
    except Exception as exc:
        failures.append(f"final open: {exc!r}")
    print(
        json.dumps(
            {
                "cycles": cycles,
                "acked": total_acks,
                "posts": n_posts,
                "window_s": round(window, 3),
                "failures": failures,
            }
        )
    )


if __name__ == "__main__":
    main()
