"""The CSV input shared by `rate --batch` and `import`: one reader, one option, one message."""

from __future__ import annotations

import argparse
import sys

# the result columns `rate --batch --out` writes beside each record: the NDS terms (blank on an
# EC5 row), the neutral ones, where the values came from, EN 1995-1-1's terms (blank on an NDS
# row), and the row's error last
RESULT_COLUMNS = (
    "allowable_load_lbf",
    "allowable_load_kN",
    "demand_capacity_ratio",
    "governing_check",
    "governing_combination",
    "action",
    "effective_length_factor",
    "slenderness_ratio",
    "stability_factor",
    "within_slenderness_limit",
    "warnings",
    "material",
    "values_source",
    "values_status",
    "N_Rd_kN",
    "N_Ed_kN",
    "buckling_length_factor",
    "lambda",
    "lambda_rel",
    "k_c",
    "beta_c",
    "k_mod",
    "gamma_M",
    "error",
)


def written_by_fieldcheck() -> tuple[str, ...]:
    """Columns an export or a rated batch file adds beside the record: known, never rated, so a
    file fieldcheck wrote reads back without --ignore-unknown-columns."""
    from fieldcheck.report.export_format import ADDED
    from fieldcheck.store.repo import EXPORT_ONLY_COLUMNS

    return tuple(dict.fromkeys((*EXPORT_ONLY_COLUMNS, *RESULT_COLUMNS, *ADDED)))


# columns fieldcheck writes that say which post a row is (an export's): kept beside a re-rating
IDENTIFYING = ("site", "visit", "visit_date", "member_id", "observation_id", "revised_at")


def derived_columns(keep: tuple[str, ...] = ()) -> tuple[str, ...]:
    """The columns fieldcheck writes that are no record column (results, ratings, units, ids),
    but those in ``keep``: never kept as found on site, never written back beside new results."""
    from fieldcheck.records.columns import COLUMNS

    return tuple(c for c in written_by_fieldcheck() if c not in COLUMNS and c not in keep)


def add_csv_options(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--ignore-unknown-columns",
        action="store_true",
        help="leave out CSV columns fieldcheck does not know (refused otherwise)",
    )


def open_posts(args: argparse.Namespace, path: str, carried: bool = False):
    """The CSV file of posts, header checked (a problem is a UsageError: one sentence, exit 2).
    ``carried``: the ignored columns are written beside the results (rate --batch)."""
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.records.csv_file import CsvProblem
    from fieldcheck.records.csv_file import open_posts as _open

    try:
        table = _open(
            path,
            also=written_by_fieldcheck(),
            ignore_unknown=getattr(args, "ignore_unknown_columns", False),
        )
    except CsvProblem as exc:
        raise UsageError(str(exc)) from None
    if table.ignored:
        print(
            f"fieldcheck: left out the columns {', '.join(table.ignored)} of {path} "
            "(--ignore-unknown-columns)"
            + ("; carried through unread to the results." if carried else "."),
            file=sys.stderr,
        )
    return table


def read_all_with_ignored(table) -> tuple[list[dict[str, str]], list[list[str]]]:
    """Every row and the cells of its ignored columns (--ignore-unknown-columns), which a
    results file carries through unread (a CsvProblem on a later line is a UsageError too)."""
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.records.csv_file import CsvProblem

    rows: list[dict[str, str]] = []
    extras: list[list[str]] = []
    try:
        for row, extra in table.with_ignored():
            rows.append(row)
            extras.append(extra)
    except CsvProblem as exc:
        raise UsageError(str(exc)) from None
    return rows, extras
