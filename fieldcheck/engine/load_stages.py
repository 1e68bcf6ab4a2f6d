"""The loads a post carries: the load-combinations stage and the bracing stage of the rating.

``LOADS`` (before the ground stage, rating.STAGES): the governing load combination of the post
and a load shared under a stiff cap. The combinations themselves are rated around the stages
(combinations.py: every combination for every check, each check its largest ratio); the batch
the stages see holds one combination per post (load_n, cd or lam, combo), and the rating's
batch the governing one. This stage names it: the ``load_combination`` key of the summary,
its line of the working, and the warning for a shared load.

``BRACING`` (after the ground stage): what the bracing of a shore must carry, from
:func:`fieldcheck.engine.loads.lateral_demand`, in ``values['lateral_n']`` (a demand, not a
capacity check); the ``bracing`` key of the summary and its line of the working.
"""

from __future__ import annotations

from functools import cache

import numpy as np

from fieldcheck.engine import bearing_screen, loads
from fieldcheck.engine import quantities as q
from fieldcheck.engine.batch import EC5, LRFD, PostBatch
from fieldcheck.engine.blocks import filled
from fieldcheck.engine.combinations import LOAD_FIELDS
from fieldcheck.engine.customary import LBF
from fieldcheck.engine.loads import combination_rows
from fieldcheck.engine.refdata import table
from fieldcheck.engine.result import Rating, Step
from fieldcheck.engine.stage import Flag, FlagSet, Stage


@cache
def lateral_rows() -> tuple[dict[str, str], ...]:
    """Rows of data/shore_lateral.csv; PostBatch.lateral_rule indexes this tuple."""
    return tuple(table("shore_lateral"))


def _lbf(x: float) -> float | None:
    return None if np.isnan(x) else round(float(x) / LBF, 1)


def _kn(x: float) -> float | None:
    return None if np.isnan(x) else round(float(x) / 1000.0, 4)


def _factor_name(method: int) -> str:
    return {LRFD: "lambda", EC5: "kmod"}.get(method, "CD")


# ---- the load-combinations stage -------------------------------------------------------------


def _no_checks(b: PostBatch, checks: dict, values: dict) -> None:
    """Nothing to add: the combinations are rated around the stages (combinations.py)."""


def _load_flags(b: PostBatch, values: dict, flag: FlagSet) -> None:
    flag("shared", b.shared_by > 1)
    bearing_screen.raise_flags(b, values, flag)  # a cap or sill not identified


def load_combination(r: Rating, i: int) -> dict:
    """The governing combination of post i (or the load as given) with its factor."""
    b = r.batch
    method = int(b.method[i])
    fname = _factor_name(method)
    factor = float({LRFD: b.lam, EC5: b.kmod}.get(method, b.cd)[i])
    k = int(b.combo[i])
    out = {
        "factor_name": fname,
        "factor": round(factor, 4),
        "load_lbf": _lbf(b.load_n[i]),
        "load_kN": _kn(b.load_n[i]),
        "shared_by": int(b.shared_by[i]),
    }
    if k < 0:
        out.update(name="as given (--load)", key=None, clause="")
    else:
        row = combination_rows()[k]
        clause = row["clause"] + ("; NDS 2018 §2.3.2" if fname == "CD" else "")
        out.update(name=loads.combination_name(k, b, i), key=row["key"], clause=clause)
    return out


def _load_summary(r: Rating, i: int, out: dict) -> None:
    out["load_combination"] = load_combination(r, i)


def load_steps(r: Rating, i: int) -> list[Step]:
    b = r.batch
    s: list[Step] = []
    lc = load_combination(r, i)
    if lc["key"] is not None:
        s.append(
            Step(
                f"Governing load combination (every combination rated for every check; this "
                f"one gives the largest ratio of the governing check, {lc['factor_name']})",
                f"{lc['name']}: {q.force(b.load_n[i] * b.shared_by[i])}, {lc['factor_name']} = "
                f"{lc['factor']}",
                lc["clause"],
            )
        )
    if b.shared_by[i] > 1:
        s.append(
            Step(
                "Load per post, shared equally under a stiff cap",
                f"1/{int(b.shared_by[i])}: {q.force(b.load_n[i])}",
                "judgement",
            )
        )
    return s


# the load-combinations stage: which combination governs the post and what each post carries of
# a shared load (ASCE 7 §2.4.1 / §2.3.1 with NDS 2018 §2.3.2 and Appendix N)
LOADS = Stage(
    name="loads",
    inputs=(
        *LOAD_FIELDS,
        "method",
        "load_n",
        "cd",
        "lam",
        "kmod",
        "combo",
        "shared_by",
        "top_fc_perp_mpa",
        "bottom_fc_perp_mpa",
        "top_not_wood",
        "bottom_not_wood",
        "top_lb_mm",
        "bottom_lb_mm",
        "plate_lb_mm",
    ),
    checks=(),
    flags=(
        Flag(
            "shared",
            "Load shared by posts side by side: each carries an equal share only under a stiff "
            "cap (judgement); check the cap.",
        ),
        *bearing_screen.FLAGS,
    ),
    run=_no_checks,
    raise_flags=_load_flags,
    summary=_load_summary,
    steps=load_steps,
)


# ---- the bracing stage -----------------------------------------------------------------------


def _bracing_demand(b: PostBatch, checks: dict, values: dict) -> None:
    """What the bracing must carry, not a capacity (loads.lateral_demand)."""
    if not np.any(b.lateral_rule >= 0):  # no shore of this block has a lateral rule
        nan = filled(np.nan, b.n)
        values.update(lateral_n=nan, lateral_min_n=nan, lateral_thrust_n=nan)
        return
    lat = np.full(b.n, np.nan)
    lat_min = np.full(b.n, np.nan)
    lat_thrust = np.full(b.n, np.nan)
    has_load = ~np.isnan(b.load_n)
    for r, row in enumerate(lateral_rows()):
        m = (b.lateral_rule == r) & has_load
        if not m.any():
            continue
        edge = b.lateral_edge_mm[m]
        lean = np.nan_to_num(b.lean_mm[m], nan=0.0)
        d = loads.lateral_demand(
            b.load_n[m],
            row["key"],
            offset_mm=lean,
            height_mm=b.height_mm[m],
            dead_n=b.load_n[m],
            floor_edge_mm=np.nan_to_num(edge, nan=0.0) if row["key"] == "cal-osha" else None,
        )
        bad = np.isnan(edge) if row["key"] == "cal-osha" else np.zeros(edge.shape, bool)
        lat[m] = np.where(bad, np.nan, d.total_n)
        lat_min[m] = np.where(bad, np.nan, d.minimum_n)
        lat_thrust[m] = d.thrust_n
    values.update(lateral_n=lat, lateral_min_n=lat_min, lateral_thrust_n=lat_thrust)


def bracing_summary(r: Rating, i: int) -> dict | None:
    b, v = r.batch, r.values
    k = int(b.lateral_rule[i])
    if k < 0:
        return None
    row = lateral_rows()[k]
    return {
        "rule": row["key"],
        "clause": row["source"],
        "minimum_lbf": _lbf(v["lateral_min_n"][i]),
        "thrust_lbf": _lbf(v["lateral_thrust_n"][i]),
        "total_lbf": _lbf(v["lateral_n"][i]),
        "total_kN": _kn(v["lateral_n"][i]),
        "note": "what the bracing must carry in each direction; not a capacity check",
    }


def _bracing_summary(r: Rating, i: int, out: dict) -> None:
    br = bracing_summary(r, i)
    if br is not None:
        out["bracing"] = br


def bracing_steps(r: Rating, i: int) -> list[Step]:
    v = r.values
    br = bracing_summary(r, i)
    if br is None or br["total_lbf"] is None:
        return []
    return [
        Step(
            "Bracing must carry (minimum + out-of-plumb thrust)",
            f"{q.force(v['lateral_min_n'][i])} + {q.force(v['lateral_thrust_n'][i])} = "
            f"{q.force(v['lateral_n'][i])}",
            br["clause"] + "; statics P x lean / h",
        )
    ]


# what the bracing of a shore must carry (a demand for the bracing, not a check of the post)
BRACING = Stage(
    name="bracing",
    inputs=("lateral_rule", "lateral_edge_mm", "lean_mm", "load_n", "height_mm"),
    checks=(),
    flags=(),
    run=_bracing_demand,
    summary=_bracing_summary,
    steps=bracing_steps,
)
