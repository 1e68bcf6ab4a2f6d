"""`fieldcheck rate`: one post from options, or many from a CSV file in one engine pass."""

from __future__ import annotations

import argparse
import csv
import json
import sys

from fieldcheck.commands.csv_option import IDENTIFYING, RESULT_COLUMNS, derived_columns
from fieldcheck.engine import explain
from fieldcheck.records.columns import COLUMNS

DESCRIPTION = (
    "Rate a timber post or shore. Values take units in your own notation (3-1/2 in, 8' 6\", "
    "2.44 m, 89 mm, 4 kip, 17.8 kN, 24%). With --batch, every CSV column is one of the options "
    "below (without the dashes, - written _, any letter case), one post per row. A screening aid "
    "for a competent person."
)
# action levels in order of severity (engine ACTIONS 0-3), for --fail-on
FAIL_ON = ("monitor", "repair-or-brace", "make-safe-now")
FAILED = 3  # exit code of --fail-on (0 fine, 1 rows with errors, 2 usage)


# columns naming an EN 338 strength class: their values are listed from the table we hold
STRENGTH_CLASS = ("class", "cap_class", "sill_class")


def add_arguments(p: argparse.ArgumentParser) -> None:
    from fieldcheck.engine.en338 import class_names

    groups: dict[str, argparse._ArgumentGroup] = {}
    for col in COLUMNS.values():
        g = groups.get(col.group) or groups.setdefault(col.group, p.add_argument_group(col.group))
        extra = (
            {"nargs": "?", "const": "yes", "metavar": "yes|no"}
            if col.flag
            else {"metavar": "VALUE"}
        )
        choices = col.choices or (class_names() if col.name in STRENGTH_CLASS else ())
        listed = (
            f"; one of {', '.join(choices)}"
            if choices and not col.flag and len(choices) <= 40
            else ""
        )
        g.add_argument(
            col.option,
            dest=f"col_{col.name}",
            help=f"{col.help}{listed} (e.g. {col.example})".replace("%", "%%"),
            **extra,
        )
    out = p.add_argument_group("output")
    out.add_argument("--json", action="store_true", help="print one JSON object")
    out.add_argument("--working", action="store_true", help="show the working step by step")
    out.add_argument(
        "--units",
        dest="units_here",
        choices=("us", "metric"),
        default=None,
        help="unit system for the text output (input is accepted in either)",
    )
    out.add_argument(
        "--batch", metavar="IN.csv", help="rate every row of a CSV file (- : standard input)"
    )
    out.add_argument(
        "--out", metavar="OUT.csv", help="with --batch: where to write the results (- : stdout)"
    )
    out.add_argument(
        "--fail-on",
        metavar="ACTION",
        choices=FAIL_ON,
        help="for scripts: exit 3 when a post's action is ACTION or worse (one of "
        + ", ".join(FAIL_ON)
        + "); a post not rated (load missing, or a bad row) counts as worse than any",
    )
    from fieldcheck.commands.csv_option import add_csv_options

    add_csv_options(out)


def _record(args: argparse.Namespace) -> dict[str, str]:
    return {name: v for name in COLUMNS if (v := getattr(args, f"col_{name}", None)) is not None}


def run(args: argparse.Namespace) -> int:
    if args.batch:
        return _run_batch(args)
    from fieldcheck.commands.usage import UsageError

    if args.out:
        raise UsageError("--out is the results file of --batch; give --batch IN.csv too")
    if getattr(args, "ignore_unknown_columns", False):
        raise UsageError("--ignore-unknown-columns applies to --batch IN.csv; give --batch too")
    from fieldcheck.records import parse_records

    rec = _record(args)
    parsed = parse_records([rec])
    if parsed.errors:
        # one sentence: the first problem, and which other fields have one too
        first, rest = parsed.errors[0], parsed.errors[1:]
        more = ""
        if rest:
            names = ", ".join(dict.fromkeys(f"--{e.column.replace('_', '-')}" for e in rest))
            more = f" Also to correct: {names}."
        print(f"fieldcheck: {first.sentence()}{more}", file=sys.stderr)
        return 2
    from fieldcheck.engine.rating import rate

    rating = rate(parsed.batch)
    summary = explain.summary(rating, 0)
    summary["material"] = parsed.meta[0].get("_material", "")
    failed = _fails(args, [int(rating.action[0])])
    summary["values_status"] = parsed.meta[0].get("_values_status")  # read/secondary/memory
    summary["values_source"] = parsed.meta[0].get("_values_source")
    if args.json:
        if args.working:
            summary["working"] = [s.__dict__ for s in explain.working(rating, 0)]
        print(json.dumps(summary, indent=2, ensure_ascii=False))
        return FAILED if failed else 0
    system = args.units_here or args.units or "us"
    print(_text(summary, system))
    if args.working:
        from fieldcheck.report.notation import value_text

        # the user's units first and four figures, as the interface and the report write the
        # working (an EC5 post speaks kN and mm first whatever the units, as EN 1995-1-1 does)
        first = "metric" if summary.get("method") == "ec5" else system
        print("\nWorking:")
        for s in explain.working(rating, 0):
            clause = f"   [{s.clause}]" if s.clause else ""
            print(f"  {s.label}: {value_text(s.value, first)}{clause}")
    return FAILED if failed else 0


def _fails(args: argparse.Namespace, actions, unrated: int = 0) -> bool:
    """--fail-on: an action at or above the level, or a post with no decision (not rated)."""
    level = getattr(args, "fail_on", None)
    if not level:
        return False
    from fieldcheck.engine.result import NOT_RATED

    at = FAIL_ON.index(level) + 1  # engine action index of the level
    return unrated > 0 or any(a == NOT_RATED or a >= at for a in actions)


def _ec5_force(n: float, system: str) -> str:
    """An EC5 force: kN first, lbf beside it in US units ('40.87 kN (9,189 lbf)')."""
    from fieldcheck.units import format_force

    kn = format_force(n, "metric")
    return kn if system == "metric" else f"{kn} ({format_force(n, 'us')})"


def _n(value: object, spec: str) -> str:
    """A number as ``spec``; a value the summary could not give (None: JSON has no NaN) as 'n/a'."""
    return "n/a" if value is None else format(value, spec)


def _text(s: dict, system: str) -> str:
    from fieldcheck.units import format_force

    lines = []
    ec5 = s.get("method") == "ec5"
    fmt = (lambda n: _ec5_force(n, system)) if ec5 else (lambda n: format_force(n, system))
    force = lambda kn: "none" if kn is None else fmt(kn * 1000.0)  # noqa: E731
    if ec5:  # EN 1995-1-1's own terms: N_Rd, N_Ed, lambda, lambda_rel, k_c, beta_c
        lines.append(f"N_Rd          {force(s['N_Rd_kN'])}   governed by {s['governing_check']}")
    else:
        lines.append(
            f"Capacity      {force(s['allowable_load_kN'])}   governed by {s['governing_check']}"
        )
    if s["state"] != "rated":
        lines.append(f"STATE         {s['state'].upper()}")
    if s["demand_capacity_ratio"] is not None:
        lines.append(f"Combination   {s['governing_combination']}")
        if ec5:
            lines.append(f"N_Ed          {force(s['N_Ed_kN'])}")
            lines.append(f"N_Ed / N_Rd   {s['demand_capacity_ratio']:.3f}")
        else:
            lines.append(f"Demand        {force(s['demand_kN'])}")
            lines.append(f"Ratio         {s['demand_capacity_ratio']:.3f}")
    if ec5:
        ax = s["governing_axis"] - 1
        lines.append(
            f"\u03bb {_n(s['lambda'][ax], '.1f')}, \u03bb_rel {_n(s['lambda_rel'][ax], '.3f')}, "
            f"k_c {_n(s['k_c_governing'], '.3f')}, \u03b2_c {_n(s['beta_c'], '.1f')} (axis "
            f"{ax + 1}; EN 1995-1-1 §6.3.2), k_mod {_n(s['k_mod'], '.2f')}, "
            f"\u03b3_M {_n(s['gamma_M'], '.2f')}"
        )
    else:
        lines.append(
            f"Ke {s['effective_length_factor']}, le/d {_n(s['slenderness_ratio'], '.1f')} "
            f"(limit {_n(s['slenderness_limit'], '.0f')}), stability factor "
            f"{_n(s['stability_factor'], '.3f')}"
        )
    lines.append(f"Material      {s.get('material', '')}")
    values = explain.status_line(s)  # each reference value's status: read, secondary, memory
    if values:
        lines.append(f"Values        {values}")
    lines.append(f"ACTION        {s['action_text']}")
    for c in s["checks"]:
        r = "" if c["ratio"] is None else f"  ratio {c['ratio']:.3f} under {c['combination']}"
        lines.append(f"  - {c['label']}: {force(c['capacity_kN'])}{r}  [{c['clause']}]")
    for w in s["warnings"]:
        lines.append(f"  ! {w}")
    lc = s.get("load_combination")
    if lc and lc.get("key"):
        lines.append(
            f"Load          {lc['name']} governs, {lc['factor_name']} {lc['factor']}  "
            f"[{lc['clause']}]"
        )
    if s.get("bracing") and s["bracing"]["total_kN"] is not None:
        br = s["bracing"]
        lines.append(f"Bracing must carry {force(br['total_kN'])}  [{br['clause']}]")
    if s.get("remedies"):
        from fieldcheck.report.notation import units_first  # re and html only: cheap

        lines.append("What would make it pass (cheapest first):")
        for k, rem in enumerate(s["remedies"], 1):
            cap = force(rem["capacity_kN"])
            # the user's units first, as the working (an EC5 post: kN and mm first)
            desc = units_first(rem["description"], "metric" if ec5 else system)
            lines.append(f"  {k}. {desc} Capacity {cap}, ratio {rem['ratio']:.3f}.")
    if s.get("remedies_note"):
        lines.append(f"Remedies      {s['remedies_note']}")
    lines.append("")
    lines.extend(f"  * {c}" for c in s["cautions"])
    return "\n".join(lines)


def _run_batch(args: argparse.Namespace) -> int:
    from fieldcheck.commands.csv_option import open_posts, read_all_with_ignored
    from fieldcheck.commands.out_file import write_atomically
    from fieldcheck.records import parse_records
    from fieldcheck.report.batch_csv import KEEP, result_columns

    with open_posts(args, args.batch, carried=True) as table:
        # the columns --ignore-unknown-columns leaves out of the rating are the user's: carried
        # through to the results unread, so nothing is lost (even written over the input)
        rows, extras = read_all_with_ignored(table)
        ignored = list(table.ignored)
        # a file fieldcheck wrote before (a rated batch, an export): its old results are left
        # out, the new ones written once; the columns naming the post are kept
        old = {*derived_columns(keep=IDENTIFYING), *RESULT_COLUMNS}
        fieldnames = [c for c in table.columns if c not in old]
    parsed = parse_records(rows)
    from fieldcheck.engine.rating import rate

    rating = rate(parsed.batch, keep=KEEP)
    results = result_columns(rating, parsed.meta)
    for err in parsed.errors:
        print(f"fieldcheck: {err}", file=sys.stderr)
    errors_by_row: dict[int, list[str]] = {}
    for err in parsed.errors:
        errors_by_row.setdefault(err.row, []).append(err.sentence())

    # a row with a field error is not rated: its action says so, never blank (judgement: a
    # spreadsheet filter on the action passes a blank as nothing to do)
    unrated = ["not-rated" if k == "action" else "" for k in RESULT_COLUMNS[:-1]]

    def write(out) -> None:
        w = csv.writer(out)
        w.writerow(fieldnames + ignored + list(RESULT_COLUMNS))
        j = 0
        for i, row in enumerate(rows):
            base = [row.get(k, "") for k in fieldnames] + extras[i]
            if parsed.ok[i]:
                w.writerow(base + [results[k][j] for k in RESULT_COLUMNS[:-1]] + [""])
                j += 1
            else:
                w.writerow(base + unrated + ["; ".join(errors_by_row[i])])

    if args.out and args.out != "-":
        write_atomically(args.out, write)
    else:
        write(sys.stdout)
    from fieldcheck.engine.result import NOT_RATED

    parsed_ok = int(parsed.ok.sum())
    no_load = int((rating.action == NOT_RATED).sum())
    failed = _fails(args, rating.action.tolist(), unrated=len(rows) - parsed_ok)
    # a post with no load is not rated, as the import and the results' action column say
    said = [f"fieldcheck: rated {parsed_ok - no_load} of {len(rows)} posts"]
    if no_load:
        said.append(f"{no_load} not rated (load missing: give it)")
    if parsed_ok < len(rows):
        bad = len(rows) - parsed_ok
        said.append(
            f"{bad} {'row needs' if bad == 1 else 'rows need'} correcting (see the error column)"
        )
    print("; ".join(said) + ".", file=sys.stderr)
    if failed:
        print(f"fieldcheck: --fail-on {args.fail_on}: at least one post fails.", file=sys.stderr)
        return FAILED
    return 0 if parsed_ok == len(rows) else 1
