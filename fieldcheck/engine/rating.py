"""PostBatch -> Rating: every check, the governing check, the ratio, an action, the working.

One pass over arrays rates one post or a million. Per-post text (warnings, working, the JSON
summary) is produced on demand for the posts a person looks at, never for the whole batch.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass, field

import numpy as np

from fieldcheck.engine import nds
from fieldcheck.engine.batch import EC5, LRFD, METHOD_NAMES, PostBatch, distinct, filled
from fieldcheck.engine.cautions import CAUTIONS
from fieldcheck.engine.customary import LBF
from fieldcheck.engine.restraint import MODE_KEYS, MODES, end_pair, modes_of_pairs

# Action categories (our own wording; ratio bands are judgement, common practice, no source).
# Code 4, NOT_RATED, is a state of its own: a decision input (the load) is missing, so no
# decision is made. It is never no-action or monitor and carries no due date. It sits after
# make-safe-now in the tuples so that ACTIONS[code] works; compare with NOT_RATED, never with >=.
ACTIONS = ("no-action", "monitor", "repair-or-brace", "make-safe-now", "not-rated")
ACTION_TEXT = (
    "No action: adequate as found.",
    "Monitor: re-inspect at the next visit and after any change; read the warnings.",
    "Repair or brace before the due date; restrict the load until then.",
    "Make safe now: clear the area under the load and call the engineer.",
    "Not rated: load missing. No decision can be made: give the load on the post (or the "
    "tributary area and the loads on it) and rate it again; until then treat it as unrated.",
)
DUE_DAYS = (None, 90, 14, 0, None)  # judgement defaults, editable later
NOT_RATED = 4
# Why a post is not rated (the state key of the --json output); one reason today.
STATE_RATED = "rated"
STATE_LOAD_MISSING = "not rated: load missing"
RATIO_BANDS = (0.8, 1.0, 1.25)  # <= 0.8 none, <= 1.0 monitor, <= 1.25 repair, above: make safe

# Warning flags (bit positions). Condition, load and ground modules add theirs after these.
FLAG_TEXT: dict[int, str] = {}


def _flag(bit: int, text: str) -> int:
    FLAG_TEXT[bit] = text
    return 1 << bit


F_NO_LOAD = _flag(
    0, "No load given: the capacity is shown, but no decision can be made without the load."
)
F_SLENDER_CONSTRUCTION = _flag(
    1,
    "le/d exceeds 50: admissible only as a construction-stage member (NDS 2018 §3.7.1.4 allows "
    "75).",
)
F_SLENDER_LIMIT = _flag(
    2,
    "le/d exceeds the NDS 2018 §3.7.1.4 limit (50, or 75 during construction): brace it or "
    "replace it.",
)
F_END_PLATE = _flag(
    3,
    "End-grain bearing stress exceeds 0.75 Fc*: bear the end on a steel plate (NDS 2018 "
    "§3.10.1.3).",
)
F_DRY_ASSUMED = _flag(4, "Moisture not measured: dry service (19 % or less) assumed.")
F_WET = _flag(
    5, "Wet service: moisture above 19 %, wet-service factors CM applied (NDS Supplement)."
)
F_ASSUMED_MATERIAL = _flag(
    6, "Species or grade unknown: lowest plausible values and a knowledge factor applied (ASCE 41)."
)
F_CAP_UNCHECKED = _flag(7, "Bearing on the cap or beam above not checked: give what it is.")
F_SILL_UNCHECKED = _flag(8, "Bearing on the sill or plate below not checked: give what it is.")
F_THEORETICAL_K = _flag(
    9, "Theoretical K used instead of the NDS recommended design Ke, as you chose."
)
F_SWAY_BRACES = _flag(
    10,
    "Braces ignored for a sway case (the ends can move sideways): full height used, conservative.",
)
F_MECHANISM = _flag(
    11, "The end conditions make a mechanism: the post cannot carry load as described."
)
F_BUILT_UP = _flag(
    12, "Built-up post: Kf applied about the axis across the plies (NDS 2018 §15.3)."
)
F_BASE_FIXITY = _flag(
    13,
    "Sway case (flagpole or an end free to move sideways): the rating rests on the fixed end "
    "being truly fixed against rotation (NDS 2018 Appendix G); a base that can rotate makes the "
    "post a mechanism. Confirm the fixity (embedment, bolted base, moment connection) on site.",
)


@dataclass
class Check:
    name: str
    label: str
    clause: str
    capacity_n: np.ndarray
    demand_n: np.ndarray

    @property
    def ratio(self) -> np.ndarray:
        with np.errstate(divide="ignore", invalid="ignore"):
            return self.demand_n / self.capacity_n


@dataclass
class Step:
    """One line of the working: what, its value and unit, and where it comes from."""

    label: str
    value: str
    clause: str = ""


@dataclass
class Rating:
    batch: PostBatch
    checks: dict[str, Check]
    capacity_n: np.ndarray
    demand_n: np.ndarray
    ratio: np.ndarray
    governing: np.ndarray  # index into check_names
    action: np.ndarray
    flags: np.ndarray
    values: dict[str, np.ndarray] = field(default_factory=dict)  # intermediates by name
    partial: bool = False  # large batch: the rating and rate(keep=) only; per-post text re-rates

    def detail(self, i: int) -> Rating:
        """A full rating of post i alone (same code, length-one batch), for its text."""
        return _rate_block(self.batch.take(np.array([i])))

    @property
    def check_names(self) -> tuple[str, ...]:
        return tuple(self.checks)

    @property
    def n(self) -> int:
        return self.batch.n

    def __getattr__(self, name: str) -> np.ndarray:
        values = self.__dict__.get("values", {})
        if name in values:
            return values[name]
        raise AttributeError(name)

    # ---- per post, on demand -------------------------------------------------------------
    def governing_name(self, i: int) -> str:
        return self.check_names[int(self.governing[i])]

    def state(self, i: int) -> str:
        """ "rated", or "not rated: load missing" (a decision input is missing: no decision)."""
        return STATE_LOAD_MISSING if int(self.action[i]) == NOT_RATED else STATE_RATED

    def rated(self) -> np.ndarray:
        """Boolean array: True where a decision was made (False: not rated, load missing)."""
        return self.action != NOT_RATED

    def warnings(self, i: int) -> list[str]:
        if self.partial:
            return self.detail(i).warnings(0)
        f = int(self.flags[i])
        return [text for bit, text in sorted(FLAG_TEXT.items()) if f >> bit & 1]

    def working(self, i: int) -> list[Step]:
        from fieldcheck.engine.working import working_steps

        if self.partial:
            return self.detail(i).working(0)
        return working_steps(self, i)

    def summary(self, i: int) -> dict:
        """The JSON object of `fieldcheck rate --json` for post i (ARCHITECTURE.md §4 keys)."""
        if self.partial:
            return self.detail(i).summary(0)
        v = self.values
        ax = int(v["axis"][i])
        ratio = float(self.ratio[i])
        cap = float(self.capacity_n[i])
        checks = []
        for name, c in self.checks.items():
            capn = float(c.capacity_n[i])
            if np.isnan(capn):
                continue
            r = float(c.ratio[i])
            checks.append(
                {
                    "name": name,
                    "label": c.label,
                    "capacity_kN": _num(capn / 1000.0, 4),
                    "capacity_lbf": _num(capn / LBF, 1),
                    "demand_kN": _num(c.demand_n[i] / 1000.0, 4),
                    "ratio": _num(r, 4),
                    "clause": c.clause,
                }
            )
        act = int(self.action[i])
        out = {
            "method": METHOD_NAMES[int(self.batch.method[i])],
            "state": self.state(i),
            "allowable_load_lbf": _num(cap / LBF, 1),
            "allowable_load_kN": _num(cap / 1000.0, 4),
            "demand_lbf": _num(self.demand_n[i] / LBF, 1),
            "demand_kN": _num(self.demand_n[i] / 1000.0, 4),
            "demand_capacity_ratio": _num(ratio, 4),
            "governing_check": self.governing_name(i),
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
            "warnings": self.warnings(i),
            "cautions": list(CAUTIONS),
        }
        for hook in SUMMARY_HOOKS:  # other engine modules add their keys (loads, ground, remedies)
            hook(self, i, out)
        return finite(out)


def _prod(first: np.ndarray, *factors: np.ndarray) -> np.ndarray:
    """first x every factor, skipping the ones that are filled(1.0, n) (exactly 1.0)."""
    out = first
    for f in factors:
        if f is not filled(1.0, f.shape[0]):
            out = out * f
    return out if out is not first else first.copy()


def set_flag(flags: np.ndarray, bit: int, where: np.ndarray) -> None:
    """OR the flag value ``bit`` into ``flags`` where ``where`` holds (in place).

    A product of the mask, not a ufunc masked with ``where=``: numpy's masked loops are about
    ten times slower on a mixed mask, and the flags are set some forty times per block.
    """
    if where.any():
        flags |= np.multiply(where, bit, dtype=np.int64)


def _num(x: float, nd: int) -> float | None:
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


# Large batches are rated in blocks that stay in the CPU cache, on this thread and one helper
# (numpy releases the GIL inside array operations); the arithmetic is the same for every block.
BLOCK = 1 << 16


def _absent(a: np.ndarray) -> bool:
    """A check not made anywhere in a block: one NaN broadcast over it."""
    return a.strides == (0,) and a.size > 0 and bool(np.isnan(a[0]))


def rate(b: PostBatch, keep: tuple[str, ...] = ()) -> Rating:
    """Rate every post of the batch: one pass of array arithmetic, blockwise for large batches.

    A batch of one block keeps every intermediate value. A larger batch keeps the rating (the
    checks, capacity, ratio, governing check, action, flags) and the intermediates named in
    ``keep`` (for columns over the whole batch, e.g. report.batch_csv.KEEP); per-post text
    re-rates that post alone (Rating.detail: the single-post path is the batch path).
    """
    n = b.n
    if n <= BLOCK:
        return _rate_block(b)
    starts = range(0, n, BLOCK)
    first = _rate_block(b.take(slice(0, BLOCK)))
    # Results are written block by block into arrays of the batch's length. Two kinds are made
    # only when a block needs them (each full-length array costs page faults): a check's
    # capacities stay one broadcast NaN until a block makes that check, and a demand stays the
    # batch's own load column until a block's demand differs from its load.
    load = b.load_n
    nan = filled(np.nan, n)
    out = {k: np.empty(n, dtype=np.asarray(first.values[k]).dtype) for k in keep}
    core = {
        k: np.empty(n, dtype=getattr(first, k).dtype)
        for k in ("capacity_n", "ratio", "governing", "action", "flags")
    }
    clauses = {k: c.clause for k, c in first.checks.items()}
    made: dict[tuple[str, str], np.ndarray] = {}
    lock = threading.Lock()

    def made_once(key: tuple[str, str], fill) -> np.ndarray:
        with lock:  # whichever thread needs it first makes it
            if key not in made:
                made[key] = fill()
            return made[key]

    def put(start: int, r: Rating | None = None) -> None:
        r = r if r is not None else _rate_block(b.take(slice(start, start + BLOCK)))
        sl = slice(start, start + r.n)
        own_load = r.batch.load_n
        for k, c in r.checks.items():
            if not _absent(c.capacity_n):
                made_once((k, "capacity"), lambda: np.full(n, np.nan))[sl] = c.capacity_n
            if c.demand_n is not own_load:
                made_once((k, "demand"), load.copy)[sl] = c.demand_n
            if c.clause not in clauses[k]:
                with lock:
                    clauses[k] += f" / {c.clause}"
        for k, a in out.items():
            a[sl] = r.values[k]
        for k, a in core.items():
            a[sl] = getattr(r, k)
        if r.demand_n is not own_load:
            made_once(("", "demand"), load.copy)[sl] = r.demand_n

    put(0, first)
    _share_blocks(put, starts[1:])
    checks = {
        k: Check(
            c.name,
            c.label,
            clauses[k],
            made.get((k, "capacity"), nan),
            made.get((k, "demand"), load),
        )
        for k, c in first.checks.items()
    }
    demand = made.get(("", "demand"), load)
    return Rating(batch=b, checks=checks, values=out, partial=True, demand_n=demand, **core)


def _share_blocks(work, starts) -> None:
    """Run work(start) for every block start on this thread and one helper thread.

    This thread takes part rather than waiting on a pool of two: its memory arena keeps the
    block's freed temporaries for the next block, where fresh pool threads handed memory back
    to the system and faulted it in again (measured by bench/engine.py: a third slower).
    """
    todo = iter(starts)
    lock = threading.Lock()
    errors: list[BaseException] = []

    def run() -> None:
        while not errors:
            with lock:
                start = next(todo, None)
            if start is None:
                return
            try:
                work(start)
            except BaseException as exc:  # raised again on the calling thread
                errors.append(exc)

    helper = threading.Thread(target=run, name="fieldcheck-rate", daemon=True)
    helper.start()
    run()
    helper.join()
    if errors:
        raise errors[0]


def _unbraced(lu: np.ndarray, h: np.ndarray, sway: np.ndarray) -> np.ndarray:
    """Unbraced length: the given one, or the full height where none is given or the ends sway."""
    if np.isnan(lu).all():
        return h.copy()  # a fresh array: braced solutions write into it
    return np.where(sway | np.isnan(lu), h, lu)


def _axis_ke(
    ke_given: np.ndarray, braced: np.ndarray, sway: np.ndarray, k_ends: np.ndarray
) -> np.ndarray:
    """Ke about one axis: as given; 1.0 between brace points of a no-sway post; else the ends."""
    if np.isnan(ke_given).all() and not braced.any():
        return k_ends.copy()
    return np.where(np.isnan(ke_given), np.where(braced & ~sway, 1.0, k_ends), ke_given)


def _rate_block(b: PostBatch) -> Rating:
    """Rate one block of posts (every check, all intermediates kept)."""
    n = b.n
    lrfd = b.method == LRFD
    measured = ~np.isnan(b.moisture_pct)
    wet = measured & (b.moisture_pct > 19.0)  # NDS Supplement: dry service is 19 % or less

    # ---- adjusted design values (NDS 2018 Table 4.3.1) --------------------------------------
    # a factor of exactly 1.0 for the whole block is the shared filled(1.0, n): _prod skips it
    one = filled(1.0, n)
    if wet.any():
        cm_fc, cm_e = nds.wet_service_factors(b.product, b.fc_mpa, b.cf_fc, wet, b.wet_tabulated)
    else:
        cm_fc = cm_e = one
    if np.isnan(b.temp_c).all():
        ct_f = ct_e = one
    else:
        ct_f, ct_e = nds.temperature_factors(b.temp_c, wet)
    ci_f, ci_e = nds.incising_factors(b.incised) if b.incised.any() else (one, one)
    # ASD: x CD (NDS 2018 §2.3.2); LRFD: x KF phi lambda (NDS 2018 Appendix N)
    any_lrfd = bool(lrfd.any())
    time_fc = np.where(lrfd, nds.KF_FC * nds.PHI_C * b.lam, b.cd) if any_lrfd else b.cd
    fc_star = _prod(b.fc_mpa, cm_fc, ct_f, b.cf_fc, ci_f, time_fc)  # NDS 2018 §3.7.1: Fc*
    emin_p = _prod(
        b.emin_mpa,
        cm_e,
        ct_e,
        ci_e,
        np.where(lrfd, nds.KF_EMIN * nds.PHI_S, 1.0) if any_lrfd else one,
    )

    # ---- effective lengths (NDS 2018 §3.7.1.2, Appendix G) ----------------------------------
    mode, sway, k_ends = modes_of_pairs(end_pair(b.bottom, b.top), b.theoretical_k)
    k_solved = np.full(n, np.nan)
    springs = ~(np.isnan(b.r_top) & np.isnan(b.r_bottom))
    if springs.any():  # spring-restrained ends: K solved numerically (stability.py)
        from fieldcheck.engine.spring_ends import SPRING_MODE, spring_ke

        idx = np.flatnonzero(springs)
        kd, ks, sway_s = spring_ke(b, idx)
        k_ends[idx], k_solved[idx], sway[idx] = kd, ks, sway_s
        mode[idx] = np.where(np.isnan(kd), -1, SPRING_MODE)
    h = b.height_mm
    lu1 = _unbraced(b.lu1_mm, h, sway)
    lu2 = _unbraced(b.lu2_mm, h, sway)
    # between brace points a braced (no-sway) segment is taken as pinned-pinned, Ke = 1.0
    ke1 = _axis_ke(b.ke1, b.braced1, sway, k_ends)
    ke2 = _axis_ke(b.ke2, b.braced2, sway, k_ends)
    # braces on a post that sways or has spring ends: solved with the braces (stability.py), K
    # over the full height, with the NDS margins of the bracketing ideal cases (design_k)
    solve_braced = (b.braced1 | b.braced2) & (sway | springs) & np.isnan(b.ke1) & np.isnan(b.ke2)
    braced_solved = np.zeros(n, dtype=bool)
    if solve_braced.any():
        from fieldcheck.engine.spring_ends import braced_ke

        for axis, ke_ax, lu_ax, braced_ax in ((1, ke1, lu1, b.braced1), (2, ke2, lu2, b.braced2)):
            idx = np.flatnonzero(solve_braced & braced_ax)
            if idx.size:
                kd, _ = braced_ke(b, idx, axis)
                good = ~np.isnan(kd)
                ke_ax[idx[good]], lu_ax[idx[good]] = kd[good], h[idx[good]]
                braced_solved[idx[good]] = True
    # ---- the post as found: residual section and strength ratios (engine/condition.py) ------
    # loss in the middle part enters the stability check through d_eff = sqrt(12 I / A);
    # knots and slope reduce Fc* by the lowest strength ratio (exactly 1.0 and d for a sound post)
    cond = _condition.residual(b, ke1 * lu1, ke2 * lu2)
    fc_star = _prod(fc_star, cond["strength_ratio"])
    le_d1 = ke1 * lu1 / cond["d_eff1"]
    le_d2 = ke2 * lu2 / cond["d_eff2"]

    # ---- column stability (NDS 2018 §3.7.1; built-up §15.3) ---------------------------------
    c = nds.C_BY_PRODUCT.take(b.product.astype(np.intp))
    fce1 = nds.euler_stress(emin_p, le_d1)
    fce2 = nds.euler_stress(emin_p, le_d2)
    cp1 = nds.column_stability_factor(fce1, fc_star, c)
    cp2 = b.kf * nds.column_stability_factor(fce2, fc_star, c)  # NDS 2018 §15.3.2: Kf
    axis2 = cp2 < cp1
    cp = np.where(axis2, cp2, cp1)
    area = cond["area"]  # residual area of the middle part (NDS 2018 §3.6.3 as remembered [M])
    kappa = b.knowledge
    p_column = cp * fc_star * area * kappa

    # ---- end-grain bearing on the post (NDS 2018 §3.10.1) ------------------------------------
    # each end's residual area x contact share; a crushed or broomed end bears on part of it
    crushed = b.crushed_end.any()
    a_top = _prod(
        cond["area_top"],
        b.end_contact,
        np.where(b.crushed_end & 1, _condition.CRUSHED_AREA, 1.0) if crushed else one,
    )
    a_bot = _prod(
        cond["area_bottom"],
        b.end_contact,
        np.where(b.crushed_end & 2, _condition.CRUSHED_AREA, 1.0) if crushed else one,
    )
    a_contact = np.minimum(a_top, a_bot)
    p_end = fc_star * a_contact * kappa

    # ---- bearing perpendicular to grain on the cap and the sill (NDS 2018 §3.10.2, §3.10.4) --
    # CD does not apply to Fc-perp (NDS 2018 Table 2.3.2 footnote); LRFD KF phi (Appendix N);
    # lambda on Fc-perp applied only where it reduces (judgement: not verified).
    perp_time = (
        np.where(lrfd, nds.KF_FCP * nds.PHI_FCP * np.minimum(b.lam, 1.0), 1.0) if any_lrfd else one
    )
    cm_bear = np.where(b.bearing_wet, 0.67, 1.0) if b.bearing_wet.any() else one
    lb_top = np.where(b.top_lb_mm > 0, b.top_lb_mm, b.d1_mm)  # NaN compares False: the post's width
    lb_bot = np.where(b.bottom_lb_mm > 0, b.bottom_lb_mm, b.d1_mm)
    cb_top = nds.bearing_area_factor(lb_top, b.top_cb)
    cb_bot = nds.bearing_area_factor(lb_bot, b.bottom_cb)
    p_cap = _prod(b.top_fc_perp_mpa, cm_bear, ct_f, perp_time, cb_top, a_top)
    p_sill = _prod(b.bottom_fc_perp_mpa, cm_bear, ct_f, perp_time, cb_bot, a_bot)

    load = b.load_n
    checks = {
        "column": Check(
            "column", "column buckling and crushing", "NDS 2018 §3.7.1", p_column, load
        ),
        "end_bearing": Check(
            "end_bearing", "end-grain bearing of the post", "NDS 2018 §3.10.1", p_end, load
        ),
        "cap_bearing": Check(
            "cap_bearing",
            "bearing on the cap or beam above",
            "NDS 2018 §3.10.2, §3.10.4",
            p_cap,
            load,
        ),
        "sill_bearing": Check(
            "sill_bearing",
            "bearing on the sill or plate below",
            "NDS 2018 §3.10.2, §3.10.4",
            p_sill,
            load,
        ),
    }
    values = {
        "fc_star": fc_star,
        "emin_prime": emin_p,
        "cm_fc": cm_fc,
        "cm_e": cm_e,
        "ct_f": ct_f,
        "ct_e": ct_e,
        "ci_f": ci_f,
        "ci_e": ci_e,
        "time_fc": time_fc,
        "mode": mode,
        "ke1": ke1,
        "ke2": ke2,
        "lu1": lu1,
        "lu2": lu2,
        "le_d1": le_d1,
        "le_d2": le_d2,
        "fce1": fce1,
        "k_solved": k_solved,
        "fce2": fce2,
        "cp1": cp1,
        "cp2": cp2,
        "cp": cp,
        "c": c,
        "area": area,
        "axis": np.add(axis2, 1, dtype=np.int8),
        "cb_top": cb_top,
        "cb_bot": cb_bot,
        "perp_time": perp_time,
        "cm_bear": cm_bear,
        "a_contact": a_contact,
        "a_top": a_top,
        "a_bottom": a_bot,
        "wet": wet,
        "sway": sway,
    }
    values.update(cond)
    values["area"] = area
    _condition.add_checks(b, checks, values)  # eccentric load and bow; net-section crushing
    if np.any(b.method == EC5):
        from fieldcheck.engine.ec5_rating import apply_ec5

        apply_ec5(b, checks, values)
    for hook in CHECK_HOOKS:  # other engine modules add their checks (ground, ...)
        hook(b, checks, values)

    # ---- slenderness limit (NDS 2018 §3.7.1.4) ----------------------------------------------
    le_d_max = np.maximum(values["le_d1"], values["le_d2"])
    con = distinct(b.construction)
    if con.size == 1 and n > 1:  # one answer for the block
        limit = filled(nds.LE_D_LIMIT_CONSTRUCTION if con[0] else nds.LE_D_LIMIT, n)
    else:
        limit = np.where(b.construction, nds.LE_D_LIMIT_CONSTRUCTION, nds.LE_D_LIMIT)
    values["le_d_max"], values["le_d_limit"] = le_d_max, limit

    flags = np.zeros(n, dtype=np.int64)
    has_load = ~np.isnan(load)
    over = le_d_max > limit

    def flag(bit: int, where: np.ndarray) -> None:
        set_flag(flags, bit, where)

    u = distinct  # a field nobody gave: its one value stands for the block (a mask of length one)
    flag(F_NO_LOAD, ~has_load)
    if u(b.construction).any():
        flag(F_SLENDER_CONSTRUCTION, b.construction & (le_d_max > nds.LE_D_LIMIT) & ~over)
    flag(F_SLENDER_LIMIT, over)
    # NDS 2018 §3.10.1.3: fc > 0.75 Fc* needs a steel plate (NaN load compares False)
    flag(F_END_PLATE, ~u(b.end_plate) & (load > nds.END_BEARING_PLATE_RATIO * fc_star * a_contact))
    flag(F_DRY_ASSUMED, ~measured)
    flag(F_WET, wet)
    if (u(kappa) < 1.0).any():
        flag(F_ASSUMED_MATERIAL, (kappa < 1.0) & (b.material_assumed | (b.data_level < 0)))
    flag(F_CAP_UNCHECKED, np.isnan(u(b.top_fc_perp_mpa)))
    flag(F_SILL_UNCHECKED, np.isnan(u(b.bottom_fc_perp_mpa)))
    flag(F_THEORETICAL_K, u(b.theoretical_k))
    if (u(b.braced1) | u(b.braced2)).any():
        flag(F_SWAY_BRACES, sway & (b.braced1 | b.braced2) & ~braced_solved)
    flag(F_MECHANISM, mode == -1)
    flag(F_BASE_FIXITY, sway & (mode != -1))  # judgement: the K of a sway case needs the fixity
    flag(F_BUILT_UP, u(b.kf) < 1.0)
    for hook in FLAG_HOOKS:
        flags |= hook(b, values)

    rating = Rating(
        batch=b,
        checks=checks,
        capacity_n=p_column,
        demand_n=load,
        ratio=p_column,
        governing=np.zeros(n, dtype=np.int8),
        action=np.zeros(n, dtype=np.int8),
        flags=flags,
        values=values,
    )
    return finish(rating)


def finish(r: Rating) -> Rating:
    """Governing check, ratio and action from the checks (run again after adding checks).

    The governing check has the largest demand/capacity ratio; with one demand for every check
    (the usual case) that is the smallest capacity, found without a ratio per check. A check
    with a NaN capacity was not made and never governs.
    """
    checks = list(r.checks.values())
    demand = checks[0].demand_n
    if all(c.demand_n is demand for c in checks):
        # the smallest capacity that was computed (fmin passes over NaN: a check not made never
        # governs); a NaN first (column) capacity stays NaN, as for a mechanism
        # in check order, a strictly smaller capacity takes over (ties keep the earlier check);
        # fmin passes over NaN, so a check not made never governs. The governing index is
        # updated by arithmetic on int8 (gov += lower * (k - gov)), cheaper than a masked copy.
        first = checks[0].capacity_n
        cap = first
        gov = np.zeros(r.n, dtype=np.int8)
        for k in range(1, len(checks)):
            c = checks[k].capacity_n
            if _absent(c):
                continue
            lower = c < cap  # NaN compares False
            if lower.any():
                gov += lower * (np.int8(k) - gov)
            cap = np.fmin(cap, c)
        nan_first = np.isnan(first)
        if nan_first.any():  # no column capacity (a mechanism): NaN, as the column check says
            cap = np.where(nan_first, first, cap)
            gov = np.where(nan_first, np.int8(0), gov)
        with np.errstate(divide="ignore", invalid="ignore"):
            ratio = demand / cap
    else:
        caps = np.stack([c.capacity_n for c in checks])
        demands = np.stack([c.demand_n for c in checks])
        with np.errstate(divide="ignore", invalid="ignore"):
            ratios = demands / caps
        has_load = ~np.isnan(r.batch.load_n)
        by_ratio = np.argmax(np.where(np.isnan(ratios), -np.inf, ratios), axis=0)
        by_cap = np.argmin(np.where(np.isnan(caps), np.inf, caps), axis=0)
        gov = np.where(has_load, by_ratio, by_cap).astype(np.int8)
        cols = np.arange(r.n)
        cap, demand, ratio = caps[gov, cols], demands[gov, cols], ratios[gov, cols]
    r.governing = gov
    r.capacity_n, r.demand_n, r.ratio = cap, demand, ratio
    r.action = action_from(r.ratio, r.flags, r.values.get("le_d_max"), r.values.get("le_d_limit"))
    return r


def action_from(ratio, flags, le_d_max=None, limit=None) -> np.ndarray:
    """Action category from the ratio bands and the condition flags (judgement)."""
    lo, mid, hi = RATIO_BANDS
    act = (ratio > lo).astype(np.int8)  # NaN compares False
    act += ratio > mid
    act += ratio > hi
    if le_d_max is not None:
        _at_least(act, 2, le_d_max > limit)
    present = int(np.bitwise_or.reduce(flags)) if flags.size else 0  # every flag raised anywhere
    for level in (1, 2, 3):  # the flags that raise the action, one mask per level
        bits = _escalation_bits(level) & present
        if bits:
            _at_least(act, level, (flags & bits) != 0)
    # no ratio (the load is missing): not rated, a state of its own, unless the condition alone
    # already calls for repair or making safe (those need no load); never no-action or monitor
    unrated = np.isnan(ratio)
    if unrated.any():
        act[unrated & (act < 2)] = NOT_RATED
    return act


def _escalation_bits(level: int) -> int:
    """Every flag bit that raises the action to ``level`` (ESCALATIONS and the mechanism)."""
    bits = F_MECHANISM if level == 3 else 0
    for b, lv in ESCALATIONS:
        if lv == level:
            bits |= b
    return bits


def _at_least(act: np.ndarray, level: int, where: np.ndarray) -> None:
    """act = max(act, level) where ``where`` holds (int8, in place; a product, no masked loop)."""
    if np.any(where):
        np.maximum(act, np.multiply(where, level, dtype=np.int8), out=act)


# (flag bits, minimum action level): condition flags register here (condition.py).
ESCALATIONS: list[tuple[int, int]] = []
# hook(batch, checks, values) -> None: adds Check objects (and values) after the core checks
CHECK_HOOKS: list = []
# hook(batch, values) -> int64 flag array, OR-ed into the flags
FLAG_HOOKS: list = []
# hook(rating, i, summary_dict) -> None: adds keys to Rating.summary(i)
SUMMARY_HOOKS: list = []


def register_summary_hook(fn) -> None:
    if fn not in SUMMARY_HOOKS:
        SUMMARY_HOOKS.append(fn)


def register_check_hook(fn) -> None:
    if fn not in CHECK_HOOKS:
        CHECK_HOOKS.append(fn)


def register_flag_hook(fn) -> None:
    if fn not in FLAG_HOOKS:
        FLAG_HOOKS.append(fn)


def new_flag(bit: int, text: str) -> int:
    """Claim a warning bit (0-62) with its text; each module keeps its own range."""
    if bit in FLAG_TEXT and FLAG_TEXT[bit] != text:
        raise ValueError(f"flag bit {bit} already used")
    return _flag(bit, text)


def mode_label(i_mode: int) -> str:
    if i_mode == -2:
        return (
            "spring-restrained ends: K solved numerically (stability.py), design value per "
            "NDS 2018 Appendix G margins"
        )
    if i_mode < 0:
        return "mechanism"
    key = MODE_KEYS[i_mode]
    return f"NDS case ({key}) {MODES[key][0]}"


from fieldcheck.engine import condition as _condition  # noqa: E402  (registers its flags and hooks)
