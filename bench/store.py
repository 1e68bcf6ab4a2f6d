"""Survey-log speed against floors taken in the same run: import, re-rate and export.

Every figure runs in a fresh subprocess (the machine is shared: CPU seconds of that process,
user + system, and its peak resident memory from ``wait4``), alternating ours and the floor.
The posts are realistic: nearly every record distinct (heights, loads and moisture vary), so the
distinct-record parse cache does not carry the figure.

- import: ``fieldcheck import`` of a CSV file; floor: ``csv.reader`` + one ``executemany`` of the
  same rows into one table in one transaction (``import_1e5_ratio``, target <= 4).
- re-rate: ``fieldcheck rerate``; floor: the bare engine on the already decoded rows (a prepared
  PostBatch) plus one insert per rating into one table in one transaction (target <= 4).
- export: ``fieldcheck export`` as CSV and as JSON; floor: a plain SELECT of each stored record
  and its latest rating (one row per post, as the export writes), each record decoded and
  written with the csv or json module under the export's own header, so both write the same
  rows and columns (the larger ratio of the two is ``export_*_ratio``, target <= 1.5).
- log tables (not a floor, for reading the ratios): SQLite alone writing the same posts into
  the log's own tables, rows made ready beforehand (``import_*_log_tables_cpu_s``: members,
  observations and ratings; ``rerate_*_log_tables_cpu_s``: ratings alone).
- rows bare (not a floor either): the three rows each post needs (member, revision, rating, each
  with its id, device, sequence, author and time) into tables with no type, key, index or CHECK,
  in memory (``import_*_rows_bare_cpu_s``): the least any log with those rows costs.
- records (not a floor either): reading every current record as the re-rate does before it
  rates (the heads query, JSON decoding, the records layer's column-wise parse, chunk by chunk;
  ``rerate_*_records_cpu_s``). With the log tables it says how much of ``rerate_ratio`` the
  log's stored form holds: the floor starts from rows already decoded.
- peak memory: the largest peak resident set of import, re-rate and export (target < 300 MB at
  1,000,000 posts).
- fieldcheck's bytecode is compiled first (``compiled``), as an installed copy has it.

By default N = 100,000 (``*_1e5`` keys) and then the 1,000,000-post run (about four minutes)
with ``import_1e6_ratio``, ``rerate_1e6_ratio``, ``export_1e6_ratio`` and ``peak_mb_1e6``;
``--quick`` leaves the 1,000,000-post run out (``--big`` is accepted and changes nothing).
Prints one JSON object on its last line.
"""

from __future__ import annotations

import argparse
import csv
import json
import os
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

SIZES = ("4x4", "4x6", "6x6", "6x8", "8x8", "4x8", "10x10")
SPECIES = ("douglas-fir-larch", "southern-pine", "hem-fir", "unknown")
GRADES = ("no1", "no2", "select-structural", "unknown")
ENDS = ("pinned", "pinned", "fixed")


def synthetic(n: int, start: int = 0):
    """Posts as inspectors type them, nearly every one distinct: a measured height (feet and
    inches or millimetres), a load (lbf or kN) and a moisture reading per post."""
    for i in range(start, start + n):
        h = 1800 + (i * 7919) % 1700
        k = (i * 104729) % 9973
        yield {
            "tag": f"P{i + 1}",
            "location": f"grid {chr(65 + i % 8)}/{i % 13 + 1}",
            "size": SIZES[i % 7],
            "height": f"{h} mm" if i % 2 else f"{h // 305}ft {(h % 305) // 26}in",
            "top": ENDS[i % 3],
            "bottom": "pinned",
            "species": SPECIES[(i // 5) % 4],
            "grade": GRADES[(i // 3) % 4],
            "load": f"{1000 + k} lbf" if i % 2 else f"{(500 + k) / 100:.2f} kN",
            "moisture": f"{8 + i % 20}%",
            "notes": "",
        }


def write_csv(path: Path, n: int) -> None:
    rows = synthetic(n)
    first = next(rows)
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=list(first))
        w.writeheader()
        w.writerow(first)
        w.writerows(rows)


# ----------------------------------------------------------------------------- floors

FLOOR_IMPORT = """
import csv, sqlite3, sys, time
con = sqlite3.connect(sys.argv[2])
with open(sys.argv[1], newline="", encoding="utf-8") as fh:
    r = csv.reader(fh)
    head = next(r)
    con.execute(f"CREATE TABLE posts ({','.join(h + ' TEXT' for h in head)})")
    con.executemany(f"INSERT INTO posts VALUES ({','.join('?' * len(head))})", r)
con.commit()
"""

FLOOR_RERATE = """
import json, sqlite3, sys, time
from fieldcheck.records import parse_records
from fieldcheck.engine.rating import rate
src = sqlite3.connect(sys.argv[1])
recs = [json.loads(t) for (t,) in src.execute("SELECT record_json FROM observations")]
batch = parse_records(recs).batch  # the decoded rows (not timed)
del recs
con = sqlite3.connect(sys.argv[2])
con.execute("CREATE TABLE ratings (i INTEGER, capacity_n REAL, demand_n REAL, ratio REAL, "
            "action INTEGER, flags INTEGER)")
t0 = time.process_time()
r = rate(batch)
rows = zip(range(batch.n), r.capacity_n.tolist(), r.demand_n.tolist(), r.ratio.tolist(),
           r.action.tolist(), r.flags.tolist())
con.executemany("INSERT INTO ratings VALUES (?, ?, ?, ?, ?, ?)", rows)
con.commit()
print("CPU", time.process_time() - t0)
"""

FLOOR_EXPORT = """
import csv, json, sqlite3, sys
con = sqlite3.connect(sys.argv[1])
cols = json.loads(sys.argv[4])  # the export's own header: the same columns and rows are written
cur = con.execute(
    "SELECT o.record_json, o.member_id, o.id, o.created_at, r.ratio, r.action, "
    "r.capacity_n, r.demand_n, r.governing, r.engine_version "
    "FROM observations o JOIN ratings r "
    "ON r.rowid = (SELECT max(rowid) FROM ratings WHERE observation_id = o.id)")
tail = ("member_id", "observation_id", "revised_at", "ratio", "action",
        "capacity_lbf", "demand_lbf", "governing", "engine_version")
with open(sys.argv[2], "w", newline="", encoding="utf-8") as out:
    w = csv.writer(out)
    if sys.argv[3] == "csv":
        w.writerow(cols)
    first = True
    for row in cur:
        rec = dict.fromkeys(cols)
        rec.update(json.loads(row[0]))
        rec.update(zip(tail, row[1:]))
        if sys.argv[3] == "csv":
            w.writerow(rec.values())
        else:
            out.write(("[" if first else ",\\n") + json.dumps(rec, ensure_ascii=False))
        first = False
    if sys.argv[3] == "json":
        out.write("]\\n")
"""


def export_header() -> list[str]:
    """The office export's header (US units), which the export floor writes too."""
    from fieldcheck.records import COLUMNS
    from fieldcheck.report.export_format import columns

    return columns("us", COLUMNS)


# Not a floor of the issue: what SQLite alone takes to write the same posts into the log's own
# tables (three tables with their keys, indexes and checks; one table for a re-rate), the rows
# made ready before the clock starts. It says how much of a ratio the log's schema holds.
LOG_TABLES = """
import itertools, sys, time
from fieldcheck.store.repo import Log, _MEMBER_COLS, _OBS_COLS
from fieldcheck.store.rows import RATING_COLS, dumps, new_ids, now
from fieldcheck.store import rated
sys.path.insert(0, "bench")
from store import synthetic
n, rerate = int(sys.argv[2]), sys.argv[3] == "rerate"
log = Log.open(sys.argv[1])
stamp, version, _ = rated.engine_stamp()
rating = (1000.0, 500.0, 0.5, 0, "compression", 0, None)
cpu = 0.0
with log._write(refs_made_here=True):  # the posts as an import writes them (timed: "import")
    log._ensure_stamp()
    site = log.add_site("Bench")
    visit = log.add_visit(site.id, None, name="One")
    dev, who, created = log.device_id, log.author, now()
    src = synthetic(n)
    while recs := [{k: v for k, v in r.items() if v} for r in itertools.islice(src, 16384)]:
        k = len(recs)
        ids = new_ids(3 * k)
        first = log._seqs(3 * k).start
        seq = iter(range(first, first + 3 * k))
        m = [(i, site.id, r["tag"], dev, next(seq), who, created) for i, r in zip(ids[0::3], recs)]
        o = [(i, mid, visit.id, None, 0, "", dumps(r), dev, next(seq), who, created)
             for i, mid, r in zip(ids[1::3], ids[0::3], recs)]
        g = [(i, oid, version, stamp, *rating, dev, next(seq), who, created)
             for i, oid in zip(ids[2::3], ids[1::3])]
        t0 = time.process_time()
        log._insert("members", _MEMBER_COLS, m)
        log._insert("observations", _OBS_COLS, o)
        log._insert("ratings", RATING_COLS, g)
        cpu += time.process_time() - t0
    t0 = time.process_time()
cpu += time.process_time() - t0  # the commit
if rerate:  # a second rating of every post, into the log that holds the first (timed alone)
    cpu = 0.0
    oids = [r[0] for r in log.db.conn.execute("SELECT id FROM observations ORDER BY rowid")]
    with log._write():
        for c in range(0, len(oids), 16384):
            part = oids[c : c + 16384]
            k = len(part)
            first = log._seqs(k).start
            g = [(i, oid, version, stamp, *rating, dev, first + j, who, created)
                 for j, (i, oid) in enumerate(zip(new_ids(k), part))]
            t0 = time.process_time()
            log._insert("ratings", RATING_COLS, g)
            cpu += time.process_time() - t0
        t0 = time.process_time()
    cpu += time.process_time() - t0  # the commit
log.close()
print("CPU", cpu)
"""


# Not a floor either: the rows an import must write for each post (a member, its revision and its
# rating, with the id, device, sequence, author and time every row records) in a database in
# memory whose tables have no type, key, index or CHECK at all. The least any log holding those
# three rows per post costs through Python's sqlite3, before a post is read, parsed or rated.
ROWS_BARE = """
import itertools, sqlite3, sys, time
from fieldcheck.store.repo import _MEMBER_COLS, _OBS_COLS
from fieldcheck.store.rows import RATING_COLS, dumps, new_ids, now
sys.path.insert(0, "bench")
from store import synthetic
n = int(sys.argv[1])
con = sqlite3.connect(":memory:")
tables = (("members", _MEMBER_COLS), ("observations", _OBS_COLS), ("ratings", RATING_COLS))
for name, cols in tables:
    con.execute(f"CREATE TABLE {name} ({','.join(cols)})")
sql = [f"INSERT INTO {t} ({','.join(c)}) VALUES ({','.join('?' * len(c))})" for t, c in tables]
dev, who, created = new_ids(1)[0], "bench", now()
rating = ("0.2.1", "stamp", 1000.0, 500.0, 0.5, 0, "compression", 0, None)
cpu, seq, src = 0.0, 0, synthetic(n)
con.execute("BEGIN")
while recs := [{k: v for k, v in r.items() if v} for r in itertools.islice(src, 16384)]:
    k = len(recs)
    ids = new_ids(3 * k)
    s = iter(range(seq + 1, seq + 3 * k + 1))
    seq += 3 * k
    m = [(i, "site", r["tag"], dev, next(s), who, created) for i, r in zip(ids[0::3], recs)]
    o = [(i, mid, "visit", None, 0, "", dumps(r), dev, next(s), who, created)
         for i, mid, r in zip(ids[1::3], ids[0::3], recs)]
    g = [(i, oid, *rating, dev, next(s), who, created) for i, oid in zip(ids[2::3], ids[1::3])]
    t0 = time.process_time()
    for q, rows in zip(sql, (m, o, g)):
        con.executemany(q, rows)
    cpu += time.process_time() - t0
t0 = time.process_time()
con.execute("COMMIT")
print("CPU", cpu + time.process_time() - t0)
"""


# Not a floor: the re-rate's reading of the records, the engine and the inserts left out (the
# same query, chunks, decoding, parse cache and paused collector as Log.rerate_all).
RECORDS = """
import gc, sys, time
from fieldcheck.records import parse_records
from fieldcheck.store.repo import HEAD, STORE_CHUNK, Log, _loads_many
log = Log.open(sys.argv[1], readonly=True)
gc.disable()
t0 = time.process_time()
cur = log.db.conn.execute(
    "SELECT id, record_json FROM observations o WHERE withdrawn = 0 AND " + HEAD + " ORDER BY rowid"
)
cache, n = {}, 0
while heads := cur.fetchmany(STORE_CHUNK):
    n += parse_records(_loads_many([t for _, t in heads]), cache).batch.n
print("CPU", time.process_time() - t0)
assert n == int(sys.argv[2]), n
"""


def run(argv: list[str]) -> dict:
    """Run argv: its CPU seconds (user + system, or the part the floor timed itself), wall
    seconds and peak resident MB (the child's own rusage, from wait4)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    t = time.perf_counter()
    p = subprocess.Popen(argv, cwd=ROOT, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    outs: list[bytes] = []

    # read the pipes without waiting on the child (wait4 must reap it to get its rusage)
    def drain(stream, into):
        into.append(stream.read())

    eo: list[bytes] = []
    th = [
        threading.Thread(target=drain, args=(p.stdout, outs)),
        threading.Thread(target=drain, args=(p.stderr, eo)),
    ]
    for x in th:
        x.start()
    _, status, ru = os.wait4(p.pid, 0)
    wall = time.perf_counter() - t
    for x in th:
        x.join()
    p.returncode = os.waitstatus_to_exitcode(status)
    out = outs[0].decode()
    if p.returncode not in (0, 1):
        raise RuntimeError(f"{argv[:5]} failed ({p.returncode}): {eo[0].decode()[-2000:]}")
    cpu = ru.ru_utime + ru.ru_stime
    for line in out.splitlines():  # a floor that times only its own part prints it
        if line.startswith("CPU "):
            cpu = float(line.split()[1])
    return {
        "cpu": cpu,
        "wall": wall,
        "peak_mb": ru.ru_maxrss / 1024.0,
        "rc": p.returncode,
        "stderr": eo[0].decode()[-2000:],
    }


PY = sys.executable
CLI = [PY, "-m", "fieldcheck"]


def bench(n: int, tmp: Path, repeats: int) -> dict:
    src = tmp / f"posts-{n}.csv"
    write_csv(src, n)
    imp, imp_floor = [], []
    db = tmp / f"log-{n}.db"
    for k in range(repeats):
        fl = tmp / f"floor-{n}-{k}.db"
        imp_floor.append(run([PY, "-c", FLOOR_IMPORT, str(src), str(fl)]))
        fl.unlink()
        if db.exists():
            for p in tmp.glob(db.name + "*"):
                p.unlink()
        imp.append(
            run([*CLI, "import", "--db", str(db), str(src), "--site", "Bench", "--visit", "One"])
        )
    rr = run([*CLI, "rerate", "--db", str(db)])
    if rr["rc"] != 0:  # every synthetic post rates: a re-rate that stopped measured nothing
        raise RuntimeError(f"fieldcheck rerate failed ({rr['rc']}): {rr['stderr']}")
    rr_floor = run([PY, "-c", FLOOR_RERATE, str(db), str(tmp / f"rr-floor-{n}.db")])
    records = run([PY, "-c", RECORDS, str(db), str(n)])
    exp: dict[str, dict] = {}
    exp_floor: dict[str, dict] = {}
    header = json.dumps(export_header())
    for fmt in ("csv", "json"):
        out = tmp / f"export-{n}.{fmt}"
        exp[fmt] = run([*CLI, "export", "--db", str(db), "--format", fmt, "--out", str(out)])
        exp_floor[fmt] = run([PY, "-c", FLOOR_EXPORT, str(db), str(out), fmt, header])
        out.unlink()
    tables = {
        what: run([PY, "-c", LOG_TABLES, str(tmp / f"tables-{what}-{n}.db"), str(n), what])
        for what in ("import", "rerate")
    }
    for p in tmp.glob("tables-*"):
        p.unlink()
    bare = run([PY, "-c", ROWS_BARE, str(n)])
    ratio_imp = statistics.median(a["cpu"] / b["cpu"] for a, b in zip(imp, imp_floor, strict=True))
    exp_ratio = {f: exp[f]["cpu"] / exp_floor[f]["cpu"] for f in exp}
    peaks = [max(r["peak_mb"] for r in imp), rr["peak_mb"], *(r["peak_mb"] for r in exp.values())]
    return {
        "import_ratio": round(ratio_imp, 2),
        "import_cpu_s": round(statistics.median(r["cpu"] for r in imp), 2),
        "import_floor_cpu_s": round(statistics.median(r["cpu"] for r in imp_floor), 2),
        "import_peak_mb": round(max(r["peak_mb"] for r in imp)),
        "import_floor_peak_mb": round(max(r["peak_mb"] for r in imp_floor)),
        "rerate_ratio": round(rr["cpu"] / rr_floor["cpu"], 2),
        "rerate_cpu_s": round(rr["cpu"], 2),
        "rerate_floor_cpu_s": round(rr_floor["cpu"], 2),
        "rerate_peak_mb": round(rr["peak_mb"]),
        "import_log_tables_cpu_s": round(tables["import"]["cpu"], 2),
        "rerate_log_tables_cpu_s": round(tables["rerate"]["cpu"], 2),
        "rerate_records_cpu_s": round(records["cpu"], 2),
        "import_rows_bare_cpu_s": round(bare["cpu"], 2),
        "export_ratio": round(max(exp_ratio.values()), 2),
        "export_csv_ratio": round(exp_ratio["csv"], 2),
        "export_json_ratio": round(exp_ratio["json"], 2),
        "export_csv_cpu_s": round(exp["csv"]["cpu"], 2),
        "export_csv_floor_cpu_s": round(exp_floor["csv"]["cpu"], 2),
        "export_json_cpu_s": round(exp["json"]["cpu"], 2),
        "export_json_floor_cpu_s": round(exp_floor["json"]["cpu"], 2),
        "export_peak_mb": round(max(r["peak_mb"] for r in exp.values())),
        "peak_mb": round(max(peaks)),
    }


def _tagged(figures: dict, tag: str) -> dict:
    """import_ratio -> import_1e5_ratio; peak_mb -> peak_mb_1e5."""
    out = {}
    for k, v in figures.items():
        head, _, rest = k.partition("_")
        out[f"peak_mb_{tag}" if k == "peak_mb" else f"{head}_{tag}_{rest}"] = v
    return out


def compiled() -> None:
    """fieldcheck as installed: its bytecode written beside it (pip compiles it at install).
    Without this, a shell with PYTHONDONTWRITEBYTECODE set compiles every fieldcheck module
    from source in every command timed (about 0.1 CPU-s a command, measured), which no
    installed copy pays. The floors import no fieldcheck module in their timed part."""
    import compileall

    compileall.compile_dir(ROOT / "fieldcheck", quiet=1)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--posts", type=int, default=100_000)
    ap.add_argument("--quick", action="store_true", help="leave out the 1,000,000-post run")
    ap.add_argument("--big", action="store_true", help="the default: kept for old scripts")
    ap.add_argument("--repeats", type=int, default=3, help="import runs (alternated with floor)")
    a = ap.parse_args()
    out: dict[str, object] = {"posts": a.posts}
    compiled()
    with tempfile.TemporaryDirectory() as tmp:
        small = bench(a.posts, Path(tmp), a.repeats)
        out.update(_tagged(small, f"{a.posts:.0e}".replace("+0", "").replace("+", "")))
        if not a.quick:
            out.update(_tagged(bench(1_000_000, Path(tmp), 1), "1e6"))
    print(json.dumps(out))


if __name__ == "__main__":
    main()
