"""The explain layer: one post of a rating in words and numbers, for the CLI, the interface and
the report alike.

- :func:`summary` is the JSON object of ``fieldcheck rate --json`` (the core keys, each stage's
  keys in stage order, then what would make a failing post pass);
- :func:`warnings` the warnings of the post's flags;
- :func:`working` the working, step by step with clauses (the column's steps, each stage's,
  then the checks and the action).

A rating of a large batch keeps no intermediates: these re-rate the one post alone
(rating.detail), the same code on a length-one batch. Remedies (remedies.py) and capacity curves
(curves.py) belong to this layer too; they call the engine again on variants of a post.
"""

from __future__ import annotations

import numpy as np

from fieldcheck.engine import bearing_screen, en338, materials, remedies
from fieldcheck.engine.batch import EC5, METHOD_NAMES
from fieldcheck.engine.cautions import CAUTIONS
from fieldcheck.engine.customary import LBF
from fieldcheck.engine.ec5_rating import EC5_WARNINGS, clause_for
from fieldcheck.engine.rating import FLAGS, STAGES, detail
from fieldcheck.engine.result import ACTION_TEXT, ACTIONS, DUE_DAYS, NOT_RATED, Rating, Step
from fieldcheck.engine.working import closing_steps, column_steps


def num(x: float, nd: int) -> float | None:
    """Rounded, or None for NaN and infinities (JSON has neither)."""
    x = float(x)
    return round(x, nd) if np.isfinite(x) else None


def finite(obj):
    """obj with every NaN or infinite float replaced by None, through dicts and lists: the JSON
    of a rating never holds NaN or Infinity (an unrated or impossible value is null)."""
    if isinstance(obj, float | np.floating):
        return float(obj) if np.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: finite(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [finite(v) for v in obj]
    return obj


# an EC5 post's warnings in EN 1995-1-1's terms, wherever they differ from the NDS ones
EC5_TEXTS = {**EC5_WARNINGS, **bearing_screen.EC5_WARNINGS}


def warnings(r: Rating, i: int) -> list[str]:
    """The warnings of post i, in the order of the flag table (an EC5 post's in EN 1995-1-1's
    terms: ec5_rating.EC5_WARNINGS)."""
    return flag_texts(int(r.flags[i]), int(r.batch.method[i]))


# a cap or sill screened as not identified says more than "not checked": that one is left out
_SAID_BY = (
    (FLAGS.bit["cap_soft"], FLAGS.bit["cap_unchecked"]),
    (FLAGS.bit["sill_soft"], FLAGS.bit["sill_unchecked"]),
)


def flag_texts(flags: int, method: int) -> list[str]:
    """The warnings of a flag mask under a method (an EC5 post's in EN 1995-1-1's terms)."""
    for more, less in _SAID_BY:
        if flags & more:
            flags &= ~less
    if method != EC5:
        return FLAGS.texts(flags)
    return [EC5_TEXTS.get(f.name, f.text) for k, f in enumerate(FLAGS.flags) if flags >> k & 1]


def action_reasons(r: Rating, i: int) -> list[str]:
    """The warnings that set post i's action (each flag raised whose least action is that
    action, monitor and up), in the post's method's words: why a post whose ratio passes is
    to be monitored, repaired or made safe. Empty where the ratio band alone sets it."""
    act = int(r.action[i])
    if not 1 <= act < NOT_RATED:
        return []
    bits = 0
    for k, f in enumerate(FLAGS.flags):
        if f.escalates_to == act:
            bits |= 1 << k
    return flag_texts(int(r.flags[i]) & bits, int(r.batch.method[i]))


def status_line(summary: dict) -> str | None:
    """Each reference value's status in words, for any place a rating reaches a person ('all
    secondary' or 'Fb memory, Fc secondary, ...'); None where the summary has none."""
    st = summary.get("value_statuses")
    if st:
        return materials.status_text(st)
    st = summary.get("strength_values_status")  # EC5: the EN 338 / EN 14080 values'
    if st:
        return materials.status_text({en338.SYMBOLS.get(k, k): v for k, v in st.items()})
    return None


def working(r: Rating, i: int) -> list[Step]:
    """The working of post i: the column's steps, each stage's, the checks and the action."""
    r, i = detail(r, i)
    steps = column_steps(r, i)
    for stage in STAGES:
        if stage.steps is not None:
            steps.extend(stage.steps(r, i))
    steps.extend(closing_steps(r, i))
    return steps


def summary(r: Rating, i: int, with_remedies: bool = True) -> dict:
    """The JSON object of ``fieldcheck rate --json`` for post i.

    ``with_remedies=False`` leaves out what would make it pass (one more engine call per
    failing post): for callers that find the remedies of many posts at once
    (remedies.remedies) and add them with :func:`remedy_keys`.
    """
    r, i = detail(r, i)
    v = r.values
    ax = int(v["axis"][i])
    cap = float(r.capacity_n[i])
    checks = []
    for name, c in r.checks.items():
        capn = float(c.capacity_n[i])
        if np.isnan(capn):
            continue
        combo, factor = r.check_combination(name, i)
        checks.append(
            {
                "name": name,
                "label": c.label,
                "combination": combo,
                "duration_factor": num(factor, 4),
                "capacity_kN": num(capn / 1000.0, 4),
                "capacity_lbf": num(capn / LBF, 1),
                "demand_kN": num(c.demand_n[i] / 1000.0, 4),
                "ratio": num(float(c.ratio[i]), 4),
                "clause": clause_for(c.clause, int(r.batch.method[i])),
            }
        )
    act = int(r.action[i])
    out = {
        "method": METHOD_NAMES[int(r.batch.method[i])],
        "state": r.state(i),
        "allowable_load_lbf": num(cap / LBF, 1),
        "allowable_load_kN": num(cap / 1000.0, 4),
        "demand_lbf": num(r.demand_n[i] / LBF, 1),
        "demand_kN": num(r.demand_n[i] / 1000.0, 4),
        "demand_capacity_ratio": num(float(r.ratio[i]), 4),
        "governing_check": r.governing_name(i),
        "governing_combination": r.combination_name(i),
        "governing_axis": ax,
        "effective_length_factor": round(float(v["ke1" if ax == 1 else "ke2"][i]), 4),
        "effective_length_factors": [
            round(float(v["ke1"][i]), 4),
            round(float(v["ke2"][i]), 4),
        ],
        "slenderness_ratio": round(float(v["le_d_max"][i]), 3),
        "slenderness_ratios": [round(float(v["le_d1"][i]), 3), round(float(v["le_d2"][i]), 3)],
        "slenderness_limit": float(v["le_d_limit"][i]),
        "stability_factor": round(float(v["cp"][i]), 6),
        "within_slenderness_limit": bool(v["le_d_max"][i] <= v["le_d_limit"][i]),
        "action": ACTIONS[act],
        "action_text": ACTION_TEXT[act],
        "due_days": DUE_DAYS[act],
        "checks": checks,
        "warnings": warnings(r, i),
        "cautions": list(CAUTIONS),
    }
    # each NDS reference value's status (read, secondary, memory), where the value came from a
    # table (EC5: strength_values_status, the EC5 stage's)
    st = materials.unpack_statuses(int(r.batch.value_status[i]))
    if st and int(r.batch.method[i]) != EC5:
        out["value_statuses"] = {materials.STATUS_NAMES[k]: v for k, v in st.items()}
    for stage in STAGES:  # each stage's keys (the condition, the ground and the loads)
        if stage.summary is not None:
            stage.summary(r, i, out)
    if with_remedies:
        remedy_keys(r, i, out)
    return finite(out)


def remedy_keys(r: Rating, i: int, out: dict, found: remedies.Remedies | None = None) -> None:
    """The summary's ``remedies`` (and ``remedies_note``) for post i: from ``found`` (remedies
    of the whole batch) or found now for post i alone."""
    if not (r.ratio[i] > 1.0 or 2 <= remedies.own_action_at(r, i) < NOT_RATED):
        out["remedies"] = []
        if 2 <= r.action[i] < NOT_RATED:  # only a cap or sill nobody identified calls for it
            out["remedies_note"] = (
                "Identify the cap or sill (see the warning); the post itself needs no change."
            )
        return
    if found is None:
        found, j = remedies.remedies(r.batch.take(np.array([i]))), 0
    else:
        j = i
    out["remedies"] = [x.as_dict() for x in found.for_post(j)]
    if out["remedies"] and int(r.flags[i]) & remedies.UNIDENTIFIED:
        out["remedies_note"] = (
            "Identify the cap or sill as well (see the warning): until then a change that "
            "leaves the load on it as it is leaves the post at repair or brace (each option's "
            "action says what it leaves)."
        )
    if not out["remedies"]:
        out["remedies_note"] = (
            "No single change we model makes this post pass (or it has no load): make it safe "
            "and ask the engineer."
            if not np.isnan(r.batch.load_n[i])
            else "Give the load to see what would make it pass."
        )
