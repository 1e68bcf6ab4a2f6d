"""What would make a failing post pass: ranked options, each re-rated by the same engine.

For every post that fails (ratio > 1) or is marked for repair (action >= 2), candidate variants
are built as one PostBatch (take / replace / concat, no per-post loops) and rated in ONE call of
:func:`fieldcheck.engine.rating.rate`. An option is offered only if its variant passes when
re-rated: ratio <= 1 and action < 2 (a post with no load gets no remedies: nothing can be shown
to pass). Per kind, the cheapest variant that passes is kept.

Kinds, in our cost order (judgement: brace < plate < pad < second post < replace), then by
capacity:

- ``brace-weak``: a brace at mid-height across the thin side (axis 2), NDS 2018 §3.7.1.1 longest
  unbraced segment; only where that axis is not braced yet.
- ``brace-both``: mid-height braces in both directions (where the wide side is not braced yet and
  a weak-axis brace alone does not pass; WAC 296-155-687(2) asks single-post shores to be braced
  both ways).
- ``plate``: steel bearing plates at cap and sill, length along their grain from the post width
  up to 12 in (lifts the end-grain plate warning, NDS 2018 §3.10.1.3, and spreads the bearing on
  the cap and sill, §3.10.2; see engine/ground.py); where end bearing, cap or sill limits.
- ``pad``: a larger square pad or mudsill, thick enough for the load to spread over it at 1:1
  (judgement; thickness up to 18 in), where the soil check governs and the soil has a value.
- ``second-post``: one more post of the same kind beside it, sharing the load equally; only true
  under a cap stiff enough to share it (judgement, the description says so).
- ``replace``: the smallest stock section (4x4 ... 12x12 nominal) and the lowest stock grade
  (No.2, No.1, Select Structural) of the post's species group that passes (douglas-fir-larch
  when the species is unknown: judgement, common stock); a new, sound post set plumb and
  centred: the condition of its own wood and stance back to the defaults (and cleared from the
  record, ``REPLACED_CONDITION_COLUMNS``), but not a settling sill, a moving post or crushing in
  progress, which a new post in the same place still has; same height, ends, bracing, service
  and loads (every combination rated, as for the post it replaces). Not for EC5 posts.

API: ``remedies(batch, rating=None) -> Remedies`` (arrays for all offered options, sorted by post
then rank) with ``Remedies.for_post(i) -> list[Remedy]``. Each Remedy has ``changes`` (PostBatch
fields -> value) and ``record_changes`` (column -> new text, SI with its unit, e.g.
{"brace_weak": "1524 mm"}) so an interface can save it as a new revision of the record.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields
from functools import cache

import numpy as np

from fieldcheck.engine import combinations, materials, nds, sections
from fieldcheck.engine import quantities as q
from fieldcheck.engine.batch import DIMENSION, EC5, LRFD, RECT, TIMBER, PostBatch, make_batch
from fieldcheck.engine.combinations import LOAD_FIELDS, NOMINAL_FIELDS
from fieldcheck.engine.customary import FT, IN, LBF
from fieldcheck.engine.rating import FLAGS, action_from, rate
from fieldcheck.engine.result import ACTIONS, NOT_RATED, Rating

KINDS = (
    "brace-weak",
    "brace-both",
    "plate",
    "pad",
    "second-post",
    "replace",
)  # cost order, judgement
BRACE_WEAK, BRACE_BOTH, PLATE, PAD, SECOND, REPLACE = range(6)
STOCK_SIZES = ((4, 4), (4, 6), (6, 6), (6, 8), (8, 8), (8, 10), (10, 10), (10, 12), (12, 12))
STOCK_GRADES = ("no2", "no1", "select-structural")  # cheapest first, judgement
DEFAULT_SPECIES = "douglas-fir-larch"  # replacement stock when the species is unknown, judgement
PLATE_IN = (0.0, 6.0, 8.0, 10.0, 12.0)  # 0: as long as the post is wide
PAD_FT = (1.0, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0)
PAD_T_MAX_MM = 18 * IN  # thickest pad or crib we offer (three layers of 6x6), judgement
MAX_SHARED = 4

# fields a new post keeps from the one it replaces (everything else takes its default: sound wood)
_KEEP_ON_REPLACE = (
    "height_mm",
    "lu1_mm",
    "lu2_mm",
    "braced1",
    "braced2",
    "top",
    "bottom",
    "ke1",
    "ke2",
    "theoretical_k",
    "method",
    "cd",
    "lam",
    "kmod",
    "gamma_m",
    "moisture_pct",
    "temp_c",
    "construction",
    "load_n",
    # the loads as given: a new post is rated under every combination, as the old one was
    *LOAD_FIELDS,
    "duration_assumed",
    "end_plate",
    "top_not_wood",
    "bottom_not_wood",
    "top_fc_perp_mpa",
    "top_cb",
    "bottom_fc_perp_mpa",
    "bottom_cb",
    "bearing_wet",
    "pad_area_mm2",
    "pad_l1_mm",
    "pad_l2_mm",
    "pad_t_mm",
    "soil_kpa",
    "soil_flags",
    "plate_lb_mm",
    "combo",
    "lateral_rule",
    "lateral_edge_mm",
    "lean_mm",
    "species_code",
    "shared_by",
    # what is happening around the post, not in its wood: a new post in the same place is still
    # on a settling sill, still moving, still crushing into its cap or sill (make safe now)
    "crushing_active",
    "settling_sill",
    "post_moving",
)
# the record's columns that describe the old post's own wood and how it stands, cleared when it
# is replaced (a new, sound post set plumb and centred under the load); the other condition
# columns (crushing, settling_sill, moving) stay, as the fields above do.
# tests/engine/test_remedies_offered_pass.py checks this against the records' condition columns
REPLACED_CONDITION_COLUMNS = (
    "decay_wide",
    "decay_wide2",
    "decay_narrow",
    "decay_narrow2",
    "decay_at",
    "decay_margin",
    "hollow",
    "hollow_at",
    "char_wide",
    "char_wide2",
    "char_narrow",
    "char_narrow2",
    "char_at",
    "wane",
    "wane_corners",
    "notch",
    "notch_face",
    "notch_height",
    "hole",
    "hole_face",
    "hole_height",
    "knot",
    "knot_face",
    "slope",
    "slope_table",
    "beyond_grade",
    "split",
    "split_faces",
    "split_at",
    "crushed_end",
    "bow_weak",
    "bow_strong",
    "plumb_weak",
    "plumb_strong",
    "offset_weak",
    "offset_strong",
    "stress_wave",
    "stress_wave_path",
    "stress_wave_sound",
    "stress_wave_suspect",
    "stress_wave_advanced",
    "density",
    "data_level",
)


@dataclass(frozen=True)
class Remedy:
    kind: str
    description: str
    capacity_n: float
    ratio: float
    action: str
    changes: dict  # PostBatch field -> new value (SI)
    record_changes: dict[str, str]  # record column -> new text
    resets_condition: bool = False  # a new post: the condition columns no longer apply

    def as_dict(self) -> dict:
        return {
            "kind": self.kind,
            "description": self.description,
            "capacity_lbf": round(self.capacity_n / LBF, 1),
            "capacity_kN": round(self.capacity_n / 1000, 4),
            "ratio": round(self.ratio, 4),
            "action": self.action,
            "record_changes": dict(self.record_changes),
            "resets_condition": self.resets_condition,
        }


@cache
def _stock(species: str) -> tuple[tuple, dict[str, np.ndarray]]:
    """Stock replacement posts of one species group, cheapest first: ((size, grade), ...) and
    their PostBatch material fields as arrays (NDS Supplement values via materials.py)."""
    opts, cols = (
        [],
        {
            k: []
            for k in (
                "d1_mm",
                "d2_mm",
                "fc_mpa",
                "fc_perp_mpa",
                "fb_mpa",
                "e_mpa",
                "emin_mpa",
                "cf_fc",
                "cf_fb",
                "product",
                "wet_tabulated",
                "class_unknown",
            )
        },
    )
    for a, b in STOCK_SIZES:
        d1, d2 = sections.nominal_dressed_mm(a, b)
        cat = materials.size_class(min(a, b), max(a, b))  # NDS 2018 §4.1.3
        for g in STOCK_GRADES:
            try:
                rv = materials.reference_values(species, g, cat, max(a, b))
                cf_fc, cf_fb = materials.size_factors(species, g, max(a, b), min(a, b))
            except ValueError:
                continue  # grade not held for this size
            opts.append((f"{a}x{b}", g))
            for k, v in (
                ("d1_mm", d1),
                ("d2_mm", d2),
                ("fc_mpa", rv["fc"]),
                ("fc_perp_mpa", rv["fc_perp"]),
                ("fb_mpa", rv["fb"]),
                ("e_mpa", rv["e"]),
                ("emin_mpa", rv["emin"]),
                ("cf_fc", cf_fc),
                ("cf_fb", cf_fb),
                ("product", DIMENSION if cat == "dimension" else TIMBER),
                ("wet_tabulated", rv["wet_tabulated"]),
                ("class_unknown", False),  # a stock size names its grading class
            ):
                cols[k].append(v)
    return tuple(opts), {k: np.asarray(v) for k, v in cols.items()}


@dataclass
class Remedies:
    """Every option offered, as arrays sorted by post then rank; ``for_post(i)`` for the text."""

    source: PostBatch  # the batch the remedies are for
    failing: np.ndarray  # posts of the source that fail or need repair
    post: np.ndarray  # source index of each option
    kind: np.ndarray
    capacity_n: np.ndarray
    ratio: np.ndarray
    action: np.ndarray
    v1: np.ndarray  # brace height / plate length / pad side / posts sharing / stock option
    v2: np.ndarray  # pad thickness / brace-both: 1 if the weak axis gets a brace too
    candidates: PostBatch  # the variant of each option
    species: np.ndarray = field(default_factory=lambda: np.array([], dtype=object))  # replace stock
    # the post's largest load over its combinations, whichever one it was rated at (rate --json
    # hands over the governing check's, the report the largest): what a brace's force is from
    largest_n: np.ndarray = field(default_factory=lambda: np.zeros(0))

    def __len__(self) -> int:
        return int(self.post.shape[0])

    def for_post(self, i: int) -> list[Remedy]:
        rows = np.flatnonzero(self.post == i)
        return [self._remedy(int(j)) for j in rows]

    def _remedy(self, j: int) -> Remedy:
        i = int(self.post[j])
        k = int(self.kind[j])
        src, cand = self.source.take(np.array([i])), self.candidates.take(np.array([j]))
        changes = {}
        for f in fields(PostBatch):
            a, b = getattr(src, f.name)[0], getattr(cand, f.name)[0]
            if not (a == b or (isinstance(a, float) and np.isnan(a) and np.isnan(b))):
                changes[f.name] = b.item() if hasattr(b, "item") else b
        v1, v2 = float(self.v1[j]), float(self.v2[j])
        load = float(self.largest_n[j])
        resets = False
        if k == BRACE_WEAK:
            desc = (
                f"Brace at mid-height, {q.length(v1, 0, 1)} from the bottom, across the thin "
                "side; tie the "
                "brace to "
                "something that cannot move (it must carry at least 2 % of the load, "
                f"{q.force(0.02 * load, 2)})."
            )
            rec = {"brace_weak": f"{v1:.0f} mm"}
        elif k == BRACE_BOTH:
            desc = (
                f"Brace at mid-height, {q.length(v1, 0, 1)} from the bottom, in both "
                "directions; each brace "
                "tied to "
                "something that cannot move, carrying at least 2 % of the load "
                f"({q.force(0.02 * load, 2)})."
            )
            rec = {"brace_strong": f"{v1:.0f} mm"}
            if v2:
                rec["brace_weak"] = f"{v1:.0f} mm"
        elif k == PLATE:
            desc = (
                f"Steel bearing plates at the cap and the sill, {q.length(v1, 0, 1)} long along "
                "their "
                "grain, at least "
                "1/2 in thick (judgement: an engineer confirms the plate)."
            )
            rec = {"plate": f"{v1:.0f} mm", "end_plate": "yes"}
        elif k == PAD:
            desc = (
                f"A pad or mudsill {q.length(v1, 0, 1)} square and at least "
                f"{q.length(v2, 0, 1)} thick (the load "
                "spreads 1:1 "
                "through it, judgement) on the same soil, prepared and level."
            )
            rec = {"pad": f"{v1:.0f} x {v1:.0f} mm", "pad_thickness": f"{v2:.0f} mm"}
        elif k == SECOND:
            n = int(v1)
            desc = (
                f"A second post of the same size beside it, {n} posts sharing the load equally; "
                "true only "
                "under a cap stiff enough to share it (judgement): check the cap."
            )
            rec = {"shared_by": str(n)}
        else:
            size, grade = _stock(self.species[j])[0][int(v1)]
            sp = self.species[j]
            desc = (
                f"Replace with a new {size} {sp} {grade} post (sound, grade-stamped), set plumb "
                "and centred under the load; same height, ends and bracing."
            )
            rec = {
                "size": size,
                "section": "",
                "diameter": "",
                "plies": "",
                "ply": "",
                "fastening": "",
                "species": sp,
                "grade": grade,
                "cap_bearing": "",
                "sill_bearing": "",
                "end_contact": "",
                "incised": "",
                **dict.fromkeys(REPLACED_CONDITION_COLUMNS, ""),
            }
            resets = True
        return Remedy(
            KINDS[k],
            desc,
            float(self.capacity_n[j]),
            float(self.ratio[j]),
            ACTIONS[int(self.action[j])],
            changes,
            rec,
            resets,
        )


# a cap or sill nobody identified (engine/bearing_screen.py) is cleared by identifying it, not by
# any change to the post: it neither calls for a remedy nor keeps an option from passing
UNIDENTIFIED = FLAGS.mask("cap_soft", "sill_soft")


def _own_action(r: Rating) -> np.ndarray:
    """The action without the flags of an unidentified cap or sill (see UNIDENTIFIED)."""
    if not (r.flags & UNIDENTIFIED).any():
        return r.action
    return _action_without(r.ratio, r.flags)


def own_action_at(r: Rating, i: int) -> int:
    """:func:`_own_action` of post i alone."""
    if not int(r.flags[i]) & UNIDENTIFIED:
        return int(r.action[i])
    return int(_action_without(r.ratio[i : i + 1], r.flags[i : i + 1])[0])


def _action_without(ratio: np.ndarray, flags: np.ndarray) -> np.ndarray:
    """rating.action_from without UNIDENTIFIED; the le/d limit as its flag records it (a large
    batch keeps no le/d values): the same test, le/d over the limit."""
    over = ((flags & FLAGS.bit["slender_limit"]) != 0).astype(np.float64)
    return action_from(ratio, flags & ~UNIDENTIFIED, over, 0.5)


def remedies(batch: PostBatch, rating: Rating | None = None) -> Remedies:
    """Ranked options that make each failing post pass, all rated in one engine call."""
    r = rating if rating is not None else rate(batch)
    # a post not rated (load missing) has no decision to remedy: it is left out
    act = _own_action(r)
    failing = np.flatnonzero((r.ratio > 1.0) | ((act >= 2) & (act != NOT_RATED)))
    sub = batch.take(failing)
    k = sub.n
    np.arange(k)
    parts: list[PostBatch] = []
    tags: list[
        tuple[np.ndarray, int, np.ndarray, np.ndarray, np.ndarray, np.ndarray]
    ] = []  # loc, kind, opt, v1, v2, sp

    def add(part, where, kind, opt, v1, v2, sp=None):
        if part.n:
            parts.append(part)
            n = part.n
            tags.append(
                (
                    where,
                    np.full(n, kind),
                    opt,
                    v1,
                    np.broadcast_to(v2, (n,)).astype(float),
                    sp if sp is not None else np.full(n, "", dtype=object),
                )
            )

    h = sub.height_mm
    brace = np.round(h / 2.0)  # whole mm, so the record gives the same unbraced length
    lu = np.maximum(brace, h - brace)  # NDS 2018 §3.7.1.1: longest unbraced segment
    w = np.flatnonzero(~sub.braced2)
    add(
        sub.take(w).replace(lu2_mm=lu[w], braced2=True),
        w,
        BRACE_WEAK,
        np.zeros(w.size),
        brace[w],
        0.0,
    )
    w = np.flatnonzero(~sub.braced1)
    part = sub.take(w)
    weak_too = ~part.braced2
    part = part.replace(
        lu1_mm=lu[w], braced1=True, lu2_mm=np.where(weak_too, lu[w], part.lu2_mm), braced2=True
    )
    add(part, w, BRACE_BOTH, np.zeros(w.size), brace[w], weak_too.astype(float))

    # steel bearing plates where end bearing, the cap or the sill limits (not EC5)
    sub_flags = r.flags[failing]
    bearing_ratio = np.zeros(k)
    for name in ("cap_bearing", "sill_bearing", "end_bearing"):
        c = r.checks.get(name)
        if c is not None:
            bearing_ratio = np.fmax(bearing_ratio, c.ratio[failing])
    w = np.flatnonzero(((sub_flags & FLAGS.bit["end_plate"]) != 0) | (bearing_ratio > 1.0))
    w = w[sub.method[w] != EC5]
    for o, length_in in enumerate(PLATE_IN):
        lb = np.ceil(np.maximum(sub.d1_mm[w], length_in * IN))
        add(
            sub.take(w).replace(plate_lb_mm=lb, end_plate=True),
            w,
            PLATE,
            np.full(w.size, o),
            lb,
            0.0,
        )

    # a larger pad where the soil check limits and the soil has a presumptive value
    soil = r.checks.get("soil_bearing")
    if soil is not None:
        sr = soil.ratio[failing]
        w = np.flatnonzero(sr > 1.0)
        for o, ft in enumerate(PAD_FT):
            s = np.ceil(ft * FT)
            t = np.ceil(
                np.maximum((s - sub.d2_mm[w]) / 2.0, np.nan_to_num(sub.pad_t_mm[w], nan=0.0))
            )
            t = np.maximum(t, 1.0)
            ok = t <= PAD_T_MAX_MM
            ww, tt = w[ok], t[ok]
            add(
                sub.take(ww).replace(pad_area_mm2=s * s, pad_l1_mm=s, pad_l2_mm=s, pad_t_mm=tt),
                ww,
                PAD,
                np.full(ww.size, o),
                np.full(ww.size, s),
                tt,
            )

    # a second post beside it
    w = np.flatnonzero(~np.isnan(sub.load_n) & (sub.shared_by < MAX_SHARED))
    part = sub.take(w)
    n_new = part.shared_by.astype(float) + 1.0
    share = part.shared_by / n_new  # each post's share, the loads as given and the nominal ones
    shared = {f: getattr(part, f) * share for f in NOMINAL_FIELDS}
    add(
        part.replace(load_n=part.load_n * share, shared_by=n_new.astype(np.int8), **shared),
        w,
        SECOND,
        np.zeros(w.size),
        n_new,
        0.0,
    )

    # replacement with stock sections and grades of the same species
    not_ec5 = sub.method != EC5
    codes = sub.species_code
    per_factor = combinations.largest_load_per_factor(sub)
    for code in np.unique(codes[not_ec5]):
        sp = materials.SPECIES[code] if code >= 0 else DEFAULT_SPECIES
        opts, mat = _stock(sp)
        m = len(opts)
        if not m:
            continue
        w = np.flatnonzero(not_ec5 & (codes == code))
        rep = np.repeat(w, m)
        o = np.tile(np.arange(m), w.size)
        # skip stock that cannot pass: at every combination, capacity <= Fc x CF x (CD, or KF
        # phi lambda) x A (NDS 2018 §3.7.1, Cp <= 1 and the other factors <= 1), so a largest
        # load / factor above Fc x CF (x KF phi) x A fails; the same answer, fewer rows to rate
        unit = np.where(sub.method[rep] == LRFD, nds.KF_FC * nds.PHI_C, 1.0)
        bound = mat["fc_mpa"][o] * mat["cf_fc"][o] * unit * mat["d1_mm"][o] * mat["d2_mm"][o]
        can = ~(per_factor[rep] > bound)
        rep, o = rep[can], o[can]
        keep = {name: getattr(sub, name)[rep] for name in _KEEP_ON_REPLACE}
        new = {name: v[o] for name, v in mat.items()}
        # a spring end R = k L / (E I) scales with the new post's stiffness (k, L unchanged)
        ei_old = sub.e_mpa[rep] * sub.d1_mm[rep] * sub.d2_mm[rep] ** 3
        ei_new = new["e_mpa"] * new["d1_mm"] * new["d2_mm"] ** 3
        for end in ("r_top", "r_bottom"):
            keep[end] = getattr(sub, end)[rep] * ei_old / ei_new
        if code < 0:
            keep["species_code"] = np.full(rep.size, materials.SPECIES.index(DEFAULT_SPECIES))
        part = make_batch(n=rep.size, shape=RECT, **keep, **new)
        add(
            part,
            rep,
            REPLACE,
            o.astype(float),
            o.astype(float),
            0.0,
            np.full(rep.size, sp, dtype=object),
        )

    if not parts:
        return _empty(batch, failing)
    cand = PostBatch.concat(parts)
    rr = rate(cand)  # every variant of every failing post in one engine pass
    where = np.concatenate([t[0] for t in tags])
    kind = np.concatenate([t[1] for t in tags])
    opt = np.concatenate([t[2] for t in tags])
    v1 = np.concatenate([t[3] for t in tags])
    v2 = np.concatenate([t[4] for t in tags])
    spc = np.concatenate([t[5] for t in tags])
    rr_act = _own_action(rr)
    ok = (rr.ratio <= 1.0) & (rr_act < 2)  # never offer an option that would itself fail
    idx = np.flatnonzero(ok)
    # per (post, kind): the cheapest option that passes
    order = idx[np.lexsort((opt[idx], kind[idx], where[idx]))]
    key = where[order] * len(KINDS) + kind[order]
    first = np.r_[True, key[1:] != key[:-1]] if order.size else np.zeros(0, bool)
    chosen = order[first]
    # brace-both only where a weak-axis brace alone does not do (it is the same brace and more)
    weak_ok = np.zeros(k, bool)
    weak_ok[where[chosen][kind[chosen] == BRACE_WEAK]] = True
    chosen = chosen[~((kind[chosen] == BRACE_BOTH) & weak_ok[where[chosen]])]
    # rank: post, then cost order of the kind, then capacity (largest first)
    chosen = chosen[np.lexsort((-rr.capacity_n[chosen], kind[chosen], where[chosen]))]
    return Remedies(
        source=batch,
        failing=failing,
        post=failing[where[chosen]],
        kind=kind[chosen],
        capacity_n=rr.capacity_n[chosen],
        ratio=rr.ratio[chosen],
        # the action the post has once the change is made, as its record will be rated: with an
        # unidentified cap or sill that is still repair (the option is offered all the same:
        # identifying the cap or sill clears it)
        action=rr.action[chosen],
        v1=v1[chosen],
        v2=v2[chosen],
        candidates=cand.take(chosen),
        species=spc[chosen],
        largest_n=combinations.largest_load(sub)[where[chosen]],
    )


def _empty(batch: PostBatch, failing: np.ndarray) -> Remedies:
    z = np.zeros(0)
    return Remedies(
        batch,
        failing,
        z.astype(np.intp),
        z.astype(np.int8),
        z,
        z,
        z.astype(np.int8),
        z,
        z,
        batch.take(np.zeros(0, dtype=np.intp)),
        np.zeros(0, dtype=object),
    )
