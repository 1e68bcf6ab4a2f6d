"""A frozen corpus of varied posts and their ``rate --json`` summaries.

The corpus guards against unintended changes to any number the engine gives: the structure of the
engine may move, its results may not. ``test_frozen_corpus.py`` rates the records again and
compares each summary with the frozen one.

When a result changes on purpose (a corrected formula, a new table value), regenerate the file and
list the change in the commit message:

    PYTHONPATH=. python tests/engine/frozen_corpus.py            # rewrite data/corpus.json.gz
    PYTHONPATH=. python tests/engine/frozen_corpus.py --diff     # what changed, field by field

The records come from a seeded generator (``SEED``), so the same code always yields the same
corpus. Floats are kept to ``DIGITS`` significant digits.
"""

from __future__ import annotations

import argparse
import gzip
import json
import math
import random
import sys
from pathlib import Path
from typing import Any

SEED = 20261202
N_POSTS = 10_000
DIGITS = 7  # significant digits kept in the file
WORKING_EVERY = 20  # the working is frozen for every twentieth post
DATA = Path(__file__).parent / "data" / "corpus.json.gz"

NOMINAL = ["2x4", "2x6", "3x4", "4x4", "4x6", "4x8", "6x6", "6x8", "8x8", "3x6", "2x8"]
SPECIES = ["douglas-fir-larch", "hem-fir", "spruce-pine-fir", "southern-pine", "unknown"]
GRADES = ["select-structural", "no1", "no2", "no3", "stud", "construction", "standard", "unknown"]
DURATIONS = ["permanent", "ten-years", "two-months", "seven-days", "ten-minutes"]
ENDS = ["pinned"] * 12 + ["fixed"] * 5 + ["free", "guided", "guided"]
CLASSES = ["C14", "C16", "C18", "C20", "C22", "C24", "C27", "C30", "D30", "D40"]
SOILS = ["1", "2", "3", "4", "5", "sand", "clay", "sandy-gravel", "unknown", "unprepared"]
OCCUPANCY = ["residential", "office", "storage-light", "classroom", "roof-ordinary", "retail-upper"]
DEAD = ["floor-carpet", "floor-wood + 5 psf", "roof-asphalt", "12 psf", "0.6 kPa", "concrete-floor"]


def _grid(rng: random.Random, lo: float, hi: float, steps: int = 24) -> float:
    """A value on a grid of ``steps`` between lo and hi: varied, yet each cell text recurs, so the
    records parse quickly (the parser caches each column's cells)."""
    return lo + (hi - lo) * rng.randint(0, steps) / steps


def _len_in(rng: random.Random, lo: float, hi: float) -> str:
    v = _grid(rng, lo, hi)
    return rng.choice([f"{v:.3g} in", f"{v * 25.4:.0f} mm"])


def _record(rng: random.Random) -> dict[str, str]:
    r: dict[str, str] = {}
    method = rng.choices(["asd", "lrfd", "ec5"], weights=[45, 25, 30])[0]
    if method != "asd" or rng.random() < 0.5:
        r["method"] = method
    # section
    kind = rng.random()
    if kind < 0.6:
        r["size"] = rng.choice(NOMINAL)
    elif kind < 0.75:
        a, b = sorted([_grid(rng, 1.5, 9.5, 16), _grid(rng, 1.5, 9.5, 16)])
        r["section"] = rng.choice([f"{a:g}inx{b:g}in", f"{a * 25.4:.0f} mm x {b * 25.4:.0f} mm"])
    elif kind < 0.9:
        r["diameter"] = _len_in(rng, 4.0, 12.0)
    else:
        r["plies"] = str(rng.randint(2, 5))
        r["ply"] = rng.choice(["2x4", "2x6", "2x8"])
        if rng.random() < 0.7:
            r["fastening"] = rng.choice(["nailed", "bolted"])
    # height and braces
    h_ft = _grid(rng, 2.0, 22.0, 40)
    r["height"] = rng.choice([f"{h_ft:g}ft", f"{h_ft * 0.3048:.2f} m", f"{int(h_ft)}' 6\""])
    if rng.random() < 0.15:
        r["brace_weak"] = f"{h_ft * _grid(rng, 0.2, 0.8, 6):.2f}ft"
    if rng.random() < 0.08:
        r["brace_strong"] = "; ".join(
            f"{h_ft * x:.2f}ft" for x in sorted(rng.sample([0.25, 0.4, 0.5, 0.6, 0.75], 2))
        )
    # ends
    if rng.random() < 0.5:
        r["top"] = rng.choice(ENDS)
    if rng.random() < 0.5:
        r["bottom"] = rng.choice(ENDS)
    if rng.random() < 0.08:
        r["top_spring"] = rng.choice(["400 kip-in/rad", "50 kN-m/rad", "2000 kip-in/rad"])
    if rng.random() < 0.08:
        r["bottom_ratio"] = rng.choice(["0.5", "2", "10", "inf", "0"])
    if rng.random() < 0.05:
        r["top_ratio"] = rng.choice(["1", "4"])
    if rng.random() < 0.08:
        r["k_theoretical"] = rng.choice(["yes", "no"])
    # material
    if method == "ec5":
        if rng.random() < 0.97:  # the rest: species and grade only, refused
            r["class"] = rng.choice(CLASSES)
        else:
            r["species"] = rng.choice(SPECIES[:4])
            r["grade"] = rng.choice(GRADES[:5])
        if rng.random() < 0.6:
            r["service_class"] = rng.choice(["1", "2", "3"])
    else:
        if rng.random() < 0.9:
            r["species"] = rng.choice(SPECIES)
        if rng.random() < 0.85:
            r["grade"] = rng.choices(GRADES, weights=[3, 4, 6, 1, 2, 1, 1, 1])[0]
    duration = rng.random() < 0.6 and rng.choice(DURATIONS)
    if rng.random() < 0.15:
        r["moisture"] = f"{rng.randint(8, 40)}%"
    if rng.random() < 0.05:
        r["temperature"] = rng.choice(["70 F", "110 F", "140 F", "50 C"])
    if rng.random() < 0.05:
        r["incised"] = "yes"
    if rng.random() < 0.3:
        r["construction"] = rng.choice(["yes", "no"])
    if rng.random() < 0.05:
        r["data_level"] = rng.choice(["default-values", "drawings", "usual", "comprehensive"])
    # loads
    lk = rng.random()
    if method == "ec5" and rng.random() < 0.95:  # the rest: tributary loads with ec5, refused
        lk = lk * 0.55
    if lk < 0.55 or (duration and rng.random() < 0.97):  # the rest: duration and tributary
        if duration:
            r["duration"] = duration
        kip = _grid(rng, 0.3, 30.0, 60)
        r["load"] = rng.choice([f"{kip * 1000:.0f}lbf", f"{kip * 4.448:.2f} kN", f"{kip:.2f} kip"])
    elif lk < 0.8:
        if rng.random() < 0.5:
            r["tributary"] = f"{_grid(rng, 10, 250, 24):.0f} sq ft"
        else:
            r["spacing"] = f"{rng.randint(4, 14)}ft x {rng.randint(4, 14)}ft"
            if rng.random() < 0.5:
                r["position"] = rng.choice(["interior", "edge", "corner"])
        r["dead"] = rng.choice(DEAD)
        if rng.random() < 0.5:
            r["live"] = f"{rng.choice([20, 30, 40, 50, 100])} psf"
        elif rng.random() < 0.5:
            r["occupancy"] = rng.choice(OCCUPANCY)
        if rng.random() < 0.2:
            r["snow"] = f"{rng.choice([20, 30, 50, 70])} psf"
        if rng.random() < 0.1:
            r["roof_live"] = "20 psf"
        if rng.random() < 0.05:
            r["rain"] = "5 psf"
            r["rain_duration"] = "seven-days"
        if rng.random() < 0.15:
            r["point"] = f"{rng.randint(2, 50) * 100} lbf"
        if rng.random() < 0.1:
            r["point_live"] = f"{rng.randint(2, 30) * 100} lbf"
        if rng.random() < 0.2:
            r["floors"] = str(rng.randint(1, 4))
        if rng.random() < 0.1:
            r["live_reduction"] = "yes"
        if rng.random() < 0.1:
            r["live_duration"] = rng.choice(["ten-years", "seven-days"])
        if rng.random() < 0.1:
            r["shared_by"] = str(rng.randint(1, 4))
        if rng.random() < 0.15:
            r["lateral_rule"] = rng.choice(["fema-minimum", "fema-aftershock", "cal-osha"])
            if r["lateral_rule"] == "cal-osha":
                r["brace_edge"] = f"{rng.randint(8, 40)} ft"
        if rng.random() < 0.1:
            r["lean"] = f"{_grid(rng, 0, 2, 8):g} in"
    # bearing at the ends
    if rng.random() < 0.2:
        if method == "ec5":
            r["cap_class"] = rng.choice(CLASSES)
        else:
            r["cap_species"] = rng.choice([*SPECIES[:4], "none"])
        if rng.random() < 0.5:
            r["cap_bearing"] = _len_in(rng, 1.5, 8.0)
        if rng.random() < 0.3:
            r["cap_end_distance"] = _len_in(rng, 1.0, 12.0)
    if rng.random() < 0.15:
        if method == "ec5":
            r["sill_class"] = rng.choice(CLASSES)
        else:
            r["sill_species"] = rng.choice(SPECIES[:4])
        if rng.random() < 0.3:
            r["sill_bearing"] = _len_in(rng, 1.5, 8.0)
    if rng.random() < 0.07:
        r["end_contact"] = f"{rng.randint(40, 100)}%"
    if rng.random() < 0.04:
        r["end_plate"] = "yes"
    # ground
    if rng.random() < 0.15:
        r["pad"] = rng.choice(["2ft x 2ft", "18 in x 18 in", "3 sq ft", "1ft x 3ft"])
        if rng.random() < 0.6:
            r["pad_thickness"] = rng.choice(["1.5 in", "3.5 in", "6 in"])
        r["soil"] = rng.choice(SOILS)
        if r["soil"] == "unknown" and rng.random() < 0.5:
            r["soil_default"] = "yes"
        if rng.random() < 0.2:
            r["plate"] = rng.choice(["6 in", "8 in"])
    # the post as found
    if rng.random() < 0.45:
        _condition(rng, r)
    return r


def _condition(rng: random.Random, r: dict[str, str]) -> None:
    at = ["full", "middle", "top", "bottom"]
    faces = ["wide", "narrow"]
    if rng.random() < 0.3:
        r["decay_wide"] = _len_in(rng, 0.1, 1.5)
        if rng.random() < 0.3:
            r["decay_narrow"] = _len_in(rng, 0.1, 1.0)
        if rng.random() < 0.2:
            r["decay_wide2"] = _len_in(rng, 0.1, 1.0)
        if rng.random() < 0.5:
            r["decay_at"] = rng.choice(at)
        if rng.random() < 0.1:
            r["decay_margin"] = rng.choice(["0", "1/4 in", "1 in"])
    if rng.random() < 0.1:
        r["hollow"] = _len_in(rng, 0.5, 3.0)
        if rng.random() < 0.5:
            r["hollow_at"] = rng.choice(at)
    if rng.random() < 0.1:
        r["char_wide"] = _len_in(rng, 0.1, 1.2)
        if rng.random() < 0.3:
            r["char_narrow"] = _len_in(rng, 0.1, 0.8)
        if rng.random() < 0.5:
            r["char_at"] = rng.choice(at)
    if rng.random() < 0.08:
        r["wane"] = _len_in(rng, 0.1, 1.0)
        r["wane_corners"] = str(rng.randint(1, 4))
    if rng.random() < 0.1:
        r["notch"] = _len_in(rng, 0.2, 1.5)
        r["notch_face"] = rng.choice(faces)
        if rng.random() < 0.5:
            r["notch_height"] = f"{_grid(rng, 0.5, 3.0, 5):.1f} ft"
    if rng.random() < 0.1:
        r["hole"] = _len_in(rng, 0.3, 1.5)
        r["hole_face"] = rng.choice(faces)
        if rng.random() < 0.5:
            r["hole_height"] = f"{_grid(rng, 0.5, 3.0, 5):.1f} ft"
    if rng.random() < 0.15:
        r["knot"] = _len_in(rng, 0.2, 2.5)
        if rng.random() < 0.5:
            r["knot_face"] = rng.choice(faces)
    if rng.random() < 0.1:
        r["slope"] = f"1 in {rng.choice([6, 8, 10, 12, 15, 20])}"
        if rng.random() < 0.3:
            r["slope_table"] = rng.choice(["grading", "clear-wood"])
    if rng.random() < 0.08:
        r["beyond_grade"] = rng.choice(["yes", "no"])
    if rng.random() < 0.15:
        r["split"] = rng.choice(["none", "check", "through", "opening"])
        if r["split"] == "through" and rng.random() < 0.6:
            r["split_faces"] = rng.choice(["wide", "narrow", "unknown"])
        if rng.random() < 0.4:
            r["split_at"] = rng.choice(at)
    if rng.random() < 0.06:
        r["crushed_end"] = rng.choice(["none", "top", "bottom", "both"])
    for flag in ("crushing", "settling_sill", "moving"):
        if rng.random() < 0.03:
            r[flag] = "yes"
    for col, hi in (("bow_weak", 1.5), ("bow_strong", 1.0), ("plumb_weak", 2.0)):
        if rng.random() < 0.08:
            r[col] = _len_in(rng, 0.0, hi)
    if rng.random() < 0.04:
        r["plumb_strong"] = _len_in(rng, 0.0, 1.5)
    if rng.random() < 0.08:
        r["offset_weak"] = _len_in(rng, 0.0, 1.0)
    if rng.random() < 0.04:
        r["offset_strong"] = _len_in(rng, 0.0, 1.0)
    if rng.random() < 0.06:
        sound = rng.randint(5, 10) * 50
        r["stress_wave"] = f"{int(sound * _grid(rng, 0.9, 2.0, 11))} us"
        if rng.random() < 0.7:
            r["stress_wave_sound"] = f"{sound} us"
        if rng.random() < 0.3:
            r["stress_wave_path"] = _len_in(rng, 3.0, 7.5)
        if rng.random() < 0.2:
            r["density"] = f"{rng.randint(38, 65) * 10} kg/m3"


def records(n: int = N_POSTS, seed: int = SEED) -> list[dict[str, str]]:
    rng = random.Random(seed)
    return [_record(rng) for _ in range(n)]


def _round(x: Any) -> Any:
    if isinstance(x, float):
        if not math.isfinite(x) or x == 0.0:
            return x if math.isfinite(x) else repr(x)
        return float(f"{x:.{DIGITS}g}")
    if isinstance(x, dict):
        return {k: _round(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_round(v) for v in x]
    return x


def outputs(recs: list[dict[str, str]], start: int = 0, step: int = 1) -> list[dict[str, Any]]:
    """What ``fieldcheck rate --json`` prints for each record (``--working`` for every twentieth),
    or the errors it gives, with the cautions (the same for every post) left out. ``recs`` is
    the corpus's records[start::step] (which posts get their working frozen).

    The records are rated in one engine pass and the remedies found in one more (the summary of
    a single post finds them for that post alone: the same code on a length-one batch).
    """
    from fieldcheck.engine import explain, remedies
    from fieldcheck.engine.rating import rate
    from fieldcheck.records import parse_records

    parsed = parse_records(recs)
    rating = rate(parsed.batch)
    found = remedies.remedies(parsed.batch, rating)
    by_row: dict[int, list[str]] = {}
    for err in parsed.errors:
        by_row.setdefault(err.row, []).append(f"{err.column}: {err.message}")
    out: list[dict[str, Any]] = []
    j = 0
    for i in range(len(recs)):
        if not parsed.ok[i]:
            out.append({"errors": by_row[i]})
            continue
        s = explain.summary(rating, j, with_remedies=False)
        explain.remedy_keys(rating, j, s, found=found)
        s.pop("cautions", None)
        s["material"] = parsed.meta[j].get("_material", "")
        if (start + i * step) % WORKING_EVERY == 0:
            s["working"] = [dict(st.__dict__) for st in explain.working(rating, j)]
        out.append(_round(s))
        j += 1
    return out


def load() -> dict[str, Any]:
    with gzip.open(DATA, "rt", encoding="utf-8") as fh:
        return json.load(fh)


def write() -> None:
    recs = records()
    data = {"seed": SEED, "digits": DIGITS, "records": recs, "outputs": outputs(recs)}
    DATA.parent.mkdir(parents=True, exist_ok=True)
    text = json.dumps(data, separators=(",", ":"), ensure_ascii=False, sort_keys=True)
    with gzip.GzipFile(DATA, "wb", mtime=0) as fh:  # mtime 0: the same corpus, the same bytes
        fh.write(text.encode("utf-8"))


def differences(old: Any, new: Any, path: str = "", rel: float = 2e-6) -> list[str]:
    """Field-by-field differences; floats agree within ``rel`` (the file keeps DIGITS digits)."""
    if isinstance(old, dict) and isinstance(new, dict):
        out = []
        for k in sorted(set(old) | set(new)):
            if k not in old or k not in new:
                out.append(f"{path}.{k}: {old.get(k, '<absent>')!r} -> {new.get(k, '<absent>')!r}")
            else:
                out.extend(differences(old[k], new[k], f"{path}.{k}", rel))
        return out
    if isinstance(old, list) and isinstance(new, list):
        if len(old) != len(new):
            return [f"{path}: {len(old)} items -> {len(new)} items: {old!r} -> {new!r}"]
        out = []
        for k, (a, b) in enumerate(zip(old, new, strict=True)):
            out.extend(differences(a, b, f"{path}[{k}]", rel))
        return out
    num = (int, float)
    if isinstance(old, num) and isinstance(new, num) and not isinstance(old, bool):
        if math.isclose(old, new, rel_tol=rel, abs_tol=1e-12):
            return []
    elif old == new:
        return []
    return [f"{path}: {old!r} -> {new!r}"]


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--diff", action="store_true", help="print what changed; write nothing")
    args = ap.parse_args(argv)
    if args.diff:
        frozen = load()
        new = outputs(frozen["records"])  # rounded as the file keeps them
        n = 0
        for i, (a, b) in enumerate(zip(frozen["outputs"], new, strict=True)):
            d = differences(a, b, f"post {i}")
            n += bool(d)
            for line in d:
                print(line)
        print(f"{n} of {len(new)} posts differ", file=sys.stderr)
        return 1 if n else 0
    write()
    print(f"wrote {DATA} ({DATA.stat().st_size} bytes)", file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
