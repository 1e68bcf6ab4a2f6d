"""Loads on posts and shores: tributary areas, presets, ASCE 7 combinations, soil, lateral.

Pure numpy, SI inside, like the rest of the engine:

- lengths in mm, areas in mm^2;
- area loads (dead, live, snow) and soil pressures in kPa (kN/m^2 = 1e-3 N/mm^2);
- line loads in N/mm (numerically equal to kN/m);
- forces in N.

Every function takes scalars or arrays (one value per post) and broadcasts them; results are
arrays of the broadcast shape (0-d for all-scalar input is returned as a 1-element array).
Presets come from data/ (live_loads, dead_loads, soil_bearing, shore_lateral, load_durations,
load_types, load_combinations) through :func:`fieldcheck.engine.refdata.table`; each row names
its source, edition and status.

Bad input raises ValueError with one sentence naming the field, the accepted range and an
example.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import cache

import numpy as np

from fieldcheck.engine.customary import FT, IN, LBF
from fieldcheck.engine.refdata import table

# Exact unit constants (definitions), used only to read US-customary source tables.
PSF_KPA = 0.0478802589803358  # 1 lbf/ft^2 in kPa = 4.4482216152605 N / (0.3048 m)^2 / 1000
PLF_N_PER_MM = LBF / FT  # 1 lbf/ft in N/mm
FT2_MM2 = FT**2  # 1 ft^2 in mm^2
KPA_N_PER_MM2 = 1e-3  # 1 kPa = 1e-3 N/mm^2

LOAD_TYPES = ("D", "L", "Lr", "S", "R", "W", "E")
LIVE_KINDS = ("occupancy", "storage", "impact")

# Soil flags (bit mask, one value per post).
SOIL_OK, SOIL_UNKNOWN, SOIL_UNPREPARED, SOIL_ASSUMED, SOIL_OVER = 0, 1, 2, 4, 8
SOIL_FLAG_NAMES = {
    SOIL_UNKNOWN: "unknown soil: no presumptive bearing value, capacity not assumed",
    SOIL_UNPREPARED: (
        "unprepared ground (mud, organic, uncompacted fill): no presumptive bearing value"
    ),
    SOIL_ASSUMED: "soil class not determined: 1,500 psf default chosen by the user",
    SOIL_OVER: "bearing pressure exceeds the presumptive value",
}


# --------------------------------------------------------------------------- input checks


def _arr(name: str, value, unit: str, example: str, *, allow_zero: bool = True) -> np.ndarray:
    """A float array; every value finite and >= 0 (or > 0), else one-sentence ValueError."""
    try:
        a = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number in {unit}, for example {example}.") from None
    if a.ndim == 0:
        a = a.reshape(1)
    bad = ~np.isfinite(a) | ((a < 0) if allow_zero else (a <= 0))
    if bad.any():
        first = a[bad][0]
        rng = ">= 0" if allow_zero else "> 0"
        raise ValueError(
            f"{name} must be a finite number {rng} {unit} (got {first:g}), for example {example}."
        )
    return a


def _keys(name: str, value, accepted: Sequence[str], example: str) -> np.ndarray:
    """An array of index positions into ``accepted`` for a key or a sequence of keys."""
    vals = np.atleast_1d(np.asarray(value, dtype=object))
    lookup = {k: i for i, k in enumerate(accepted)}
    out = np.empty(vals.shape, dtype=np.intp)
    for u in set(vals.tolist()):  # unique keys only, not per post
        key = str(u).strip().lower() if u is not None else ""
        if key not in lookup:
            raise ValueError(
                f"{name} {u!r} is not known; use one of {', '.join(accepted)} "
                f"(for example {example!r})."
            )
        out[vals == u] = lookup[key]
    return out


def _f(s: str) -> float:
    return float(s) if s.strip() else np.nan


# --------------------------------------------------------------------------- presets


@cache
def _rows(name: str) -> dict[str, dict[str, str]]:
    return {r["key"].strip().lower(): r for r in table(name)}


def live_load_keys() -> tuple[str, ...]:
    return tuple(_rows("live_loads"))


def dead_load_keys() -> tuple[str, ...]:
    return tuple(k for k, r in _rows("dead_loads").items() if r["per"] == "area")


def soil_keys() -> tuple[str, ...]:
    return tuple(_rows("soil_bearing"))


def live_load_kpa(occupancy):
    """Uniform live load in kPa for an occupancy key (or an array of keys).

    ASCE 7-16 Table 4.3-1 values (data/live_loads.csv); a str gives a float, a sequence an array.
    """
    keys = live_load_keys()
    idx = _keys("occupancy", occupancy, keys, "residential")
    psf = np.array([float(_rows("live_loads")[k]["psf"]) for k in keys])
    out = psf[idx] * PSF_KPA
    return float(out[0]) if isinstance(occupancy, str) else out


def dead_load_kpa(key):
    """Dead load in kPa of a build-up preset (HUD RSDG Table 3.2, FEMA US&R; data/dead_loads.csv).

    Roof and floor presets are per unit plan area; wall presets per unit wall elevation.
    Rubble is per inch of depth: use :func:`rubble_kpa`.
    """
    keys = dead_load_keys()
    idx = _keys("dead-load preset", key, keys, "floor-carpet")
    psf = np.array([float(_rows("dead_loads")[k]["psf"]) for k in keys])
    out = psf[idx] * PSF_KPA
    return float(out[0]) if isinstance(key, str) else out


def rubble_kpa(depth_mm) -> np.ndarray:
    """Weight of concrete/masonry rubble of the given depth, kPa (FEMA US&R: 10 psf per inch)."""
    d = _arr("rubble depth", depth_mm, "mm", "150 (6 in)")
    psf_per_in = float(_rows("dead_loads")["rubble-per-inch"]["psf"])
    return psf_per_in * PSF_KPA * d / IN  # FEMA US&R Rescue Specialist manual, 10 psf/in


# --------------------------------------------------------------------------- tributary area


INTERIOR, EDGE, CORNER = 0, 1, 2
POSITION_NAMES = ("interior", "edge", "corner")


def tributary_area_mm2(s1_mm, s2_mm, t1_mm, t2_mm) -> np.ndarray:
    """Tributary area from the spacings to the neighbouring supports on each side, mm^2.

    ``s1, s2``: distances to the next support on either side in one direction; ``t1, t2`` in
    the other. Use 0 where there is no neighbour (edge and corner posts) or the overhang length
    where the floor cantilevers past the post.
    A = (s1 + s2)/2 x (t1 + t2)/2  # common practice, no source
    """
    s1 = _arr("s1_mm", s1_mm, "mm", "3048 (10 ft)")
    s2 = _arr("s2_mm", s2_mm, "mm", "3048 (10 ft)")
    t1 = _arr("t1_mm", t1_mm, "mm", "3658 (12 ft)")
    t2 = _arr("t2_mm", t2_mm, "mm", "3658 (12 ft)")
    return (s1 + s2) / 2.0 * (t1 + t2) / 2.0  # common practice, no source


def tributary_area_grid_mm2(spacing1_mm, spacing2_mm, position="interior") -> np.ndarray:
    """Tributary area of a post in a regular grid, mm^2: interior s1 x s2, edge s1 x s2/2,
    corner s1/2 x s2/2 (no overhang).  # common practice, no source"""
    a = _arr("spacing1_mm", spacing1_mm, "mm", "3048 (10 ft)", allow_zero=False)
    b = _arr("spacing2_mm", spacing2_mm, "mm", "3658 (12 ft)", allow_zero=False)
    pos = _keys("position", position, POSITION_NAMES, "interior")
    share = np.array([1.0, 0.5, 0.25])[pos]
    return a * b * share


def area_load_n(q_kpa, area_mm2) -> np.ndarray:
    """Force in N from an area load (kPa) on an area (mm^2): P = q x A."""
    q = _arr("area load", q_kpa, "kPa", "1.92 (40 psf)")
    a = _arr("area", area_mm2, "mm^2", "11148364 (120 ft^2)")
    return q * KPA_N_PER_MM2 * a


def reaction_from_spans_n(w_n_per_mm, span_left_mm, span_right_mm=0.0) -> np.ndarray:
    """Load on a post under a beam from the simple spans either side of it, N.

    R = w x (L1/2 + L2/2) (simple spans, beam theory); an end post has span_right = 0.
    """
    w = _arr("line load", w_n_per_mm, "N/mm", "8.76 (600 plf)")
    l1 = _arr("span_left_mm", span_left_mm, "mm", "3658 (12 ft)")
    l2 = _arr("span_right_mm", span_right_mm, "mm", "3658 (12 ft)")
    return w * (l1 / 2.0 + l2 / 2.0)  # beam theory, simple spans


def reaction_two_span_continuous_n(w_n_per_mm, span_mm) -> np.ndarray:
    """Interior support of a beam continuous over two equal spans: R = 1.25 w L (beam theory);
    the end supports take 0.375 w L each."""
    w = _arr("line load", w_n_per_mm, "N/mm", "8.76 (600 plf)")
    span = _arr("span_mm", span_mm, "mm", "3658 (12 ft)")
    return 1.25 * w * span  # beam theory, two equal continuous spans


# --------------------------------------------------------------------------- live-load reduction


def live_reduction_factor(area_mm2, kll=4.0, floors=1, reducible=True) -> np.ndarray:
    """ASCE 7 §4.7.2 live-load reduction factor L/Lo for a member with tributary area A_T.

    L/Lo = 0.25 + 15/sqrt(K_LL A_T) (A_T in ft^2)  # ASCE 7-16 §4.7.2 Eq. 4.7-1
    only when K_LL A_T >= 400 ft^2; not below 0.50 for one floor, 0.40 for two or more floors
    (limits from memory, ASCE 7 §4.7.2). ``reducible=False`` (Lo > 100 psf, passenger garages,
    assembly: ASCE 7 §4.7.3-4.7.4) gives 1. For temporary shoring the default in the combination
    functions is no reduction (judgement).
    """
    a = _arr("tributary area for live-load reduction", area_mm2, "mm^2", "11148364 (120 ft^2)")
    k = _arr("K_LL", kll, "(1 to 4)", "4 (interior column)", allow_zero=False)
    if (k > 4).any():
        raise ValueError(
            "K_LL must be between 1 and 4 (ASCE 7 Table 4.7-1), for example "
            "4 for an interior column."
        )
    nf = _arr("floors supported", floors, "(count)", "1", allow_zero=False)
    kat_ft2 = k * a / FT2_MM2
    with np.errstate(divide="ignore"):
        f = 0.25 + 15.0 / np.sqrt(kat_ft2)  # ASCE 7-16 §4.7.2 Eq. 4.7-1
    floor = np.where(nf >= 2, 0.40, 0.50)  # ASCE 7 §4.7.2 limits, from memory
    # ASCE 7 §4.7.2: only where K_LL A_T >= 400 ft^2
    f = np.where(kat_ft2 >= 400.0, np.clip(f, floor, 1.0), 1.0)
    return np.where(np.asarray(reducible, dtype=bool), f, 1.0)


def reduced_live_kpa(lo_kpa, area_mm2, kll=4.0, floors=1, occupancy=None) -> np.ndarray:
    """Reduced live load L = Lo x factor (ASCE 7 §4.7.2), kPa.

    With an occupancy key, the `reducible` column of data/live_loads.csv decides; otherwise
    Lo > 100 psf (4.79 kPa) is not reduced (ASCE 7 §4.7.3).
    """
    lo = _arr("Lo", lo_kpa, "kPa", "1.92 (40 psf)")
    if occupancy is None:
        red = lo <= 100.0 * PSF_KPA + 1e-9
    else:
        keys = live_load_keys()
        idx = _keys("occupancy", occupancy, keys, "residential")
        red = np.array([_rows("live_loads")[k]["reducible"] == "yes" for k in keys])[idx]
    return lo * live_reduction_factor(area_mm2, kll, floors, reducible=red)


# --------------------------------------------------------------------------- combinations


@cache
def _durations() -> dict[str, float]:
    return {r["key"]: float(r["cd"]) for r in table("load_durations")}


@cache
def _default_durations() -> dict[str, str]:
    return {r["key"]: r["duration"].strip() for r in table("load_types")}


@cache
def _combos(method: str) -> tuple[dict[str, str], ...]:
    return tuple(r for r in table("load_combinations") if r["method"] == method)


GIVEN = "the load as given"  # the name of a load given directly (combo -1)


@cache
def combination_rows() -> tuple[dict[str, str], ...]:
    """Rows of data/load_combinations.csv; PostBatch.combo and Check.combo index this tuple."""
    return tuple(table("load_combinations"))


# the nominal loads of a PostBatch, by ASCE 7 load type (the order of the combination table)
NOMINAL_TYPES = (
    ("D", "nom_d_n"),
    ("L", "nom_l_n"),
    ("Lr", "nom_lr_n"),
    ("S", "nom_s_n"),
    ("R", "nom_r_n"),
    ("W", "nom_w_n"),
    ("E", "nom_e_n"),
)


def combination_name(combo: int, batch=None, i: int = 0) -> str:
    """The name of a combination row, or GIVEN for a load given directly (combo < 0). With a
    batch: the terms of the loads post i carries only (1.2D+1.6L, not 1.2D+1.6L+0.5Lr where
    there is no roof live load; the dead load is always named)."""
    if combo < 0:
        return GIVEN
    if batch is None:
        return combination_rows()[combo]["name"]
    return present_name(combo, present_bits(batch, np.array([i]))[0])


def present_bits(batch, idx: np.ndarray) -> np.ndarray:
    """Bit t set where post idx carries a nominal load of type t (NOMINAL_TYPES order)."""
    bits = np.zeros(len(idx), dtype=np.int64)
    for t, (_, f) in enumerate(NOMINAL_TYPES):
        bits |= (np.asarray(getattr(batch, f)).take(idx) > 0).astype(np.int64) << t
    return bits


def present_name(combo: int, bits: int) -> str:
    """The name of combination ``combo`` with the terms of the loads in ``bits`` only (the dead
    load always named; GIVEN for a load given directly)."""
    if combo < 0:
        return GIVEN
    name = combination_rows()[combo]["name"]
    present = {t for k, (t, _) in enumerate(NOMINAL_TYPES) if int(bits) >> k & 1}
    kept = [x for x in name.split("+") if _term_type(x) in ("D", None) or _term_type(x) in present]
    return "+".join(kept) if kept else name


def _term_type(term: str) -> str | None:
    """The load type a term of a combination name multiplies: 0.75(0.6W) -> W, 0.5Lr -> Lr."""
    letters = term.rstrip(")").lstrip("0123456789.(")
    return letters if letters in {t for t, _ in NOMINAL_TYPES} else None


@dataclass(frozen=True)
class Combinations:
    """Every combination of one method for n posts: the table a person reads.

    ``load_n[k, i]``: combined load of combination k on post i (N); ``factor[k, i]``: CD (ASD)
    or lambda (LRFD). No combination is picked here: capacity is not proportional to the
    factor for every check, so the engine rates every combination for every check and keeps
    the largest ratio of each (engine/combinations.py; the PostBatch nom_*_n fields).
    """

    method: str
    keys: tuple[str, ...]
    names: tuple[str, ...]
    clauses: tuple[str, ...]
    load_n: np.ndarray
    factor: np.ndarray
    live_reduction: np.ndarray  # factor applied to L (1 where not reduced)

    @property
    def n(self) -> int:
        return int(self.load_n.shape[1])

    def rows(self, i: int) -> list[dict]:
        """The table for post i: one dict per combination."""
        fname = "cd" if self.method == "asd" else "lambda"
        return [
            {
                "key": self.keys[k],
                "combination": self.names[k],
                "load_n": float(self.load_n[k, i]),
                fname: float(self.factor[k, i]),
                "clause": self.clauses[k],
            }
            for k in range(len(self.keys))
        ]


def _loads(D, L, Lr, S, R, W, E) -> tuple[dict[str, np.ndarray], int]:
    given = {"D": D, "L": L, "Lr": Lr, "S": S, "R": R, "W": W, "E": E}
    arrs = {k: _arr(f"{k} load", v, "N", "5338 (1,200 lbf)") for k, v in given.items()}
    try:
        shape = np.broadcast_shapes(*(a.shape for a in arrs.values()))
    except ValueError:
        raise ValueError(
            "the load arrays D, L, Lr, S, R, W and E must have the same length "
            "(one value per post), for example D=[2000, 2500]."
        ) from None
    if len(shape) != 1:
        raise ValueError(
            "each load must be a number or a one-dimensional array of N per "
            "post, for example D=[2000, 2500]."
        )
    return {k: np.broadcast_to(a, shape).astype(np.float64) for k, a in arrs.items()}, shape[0]


def _table_arrays(method: str, loads: dict[str, np.ndarray]):
    rows = _combos(method)
    coef = np.array([[float(r[t]) for t in LOAD_TYPES] for r in rows])  # (k, 7)
    stack = np.stack([loads[t] for t in LOAD_TYPES])  # (7, n)
    return rows, coef, stack, coef @ stack  # ASCE 7 §2.4.1 / §2.3.1: sum of coefficient x load


def asd_combinations(
    D=0.0,
    L=0.0,
    Lr=0.0,
    S=0.0,
    R=0.0,
    W=0.0,
    E=0.0,
    *,
    durations: Mapping[str, str | None] | None = None,
    live_reduction_area_mm2=None,
    kll=4.0,
    floors=1,
) -> Combinations:
    """ASCE 7 §2.4.1 ASD combinations for n posts, each with its CD (none is picked here).

    D, L, Lr, S, R, W, E: nominal (service) loads on each post in N, scalars or arrays of n.
    CD of each combination is that of the shortest-duration load present in it with a non-zero
    value (NDS 2018 §2.3.2, Table 2.3.2); default durations per load type in data/load_types.csv
    (D permanent 0.9, L ten years 1.0, S two months 1.15, Lr seven days 1.25, W and E ten minutes
    1.6). ``durations`` overrides them, e.g. ``{"L": "seven-days"}`` for a construction live load
    on a shore; R has no default and must be given when R is not zero.
    ``live_reduction_area_mm2``: the tributary area A_T to reduce L by ASCE 7 §4.7 (K_LL ``kll``,
    ``floors`` supported); None (default) = no reduction, judgement for temporary shoring.
    """
    loads, n = _loads(D, L, Lr, S, R, W, E)
    red = np.ones(n)
    if live_reduction_area_mm2 is not None:
        red = live_reduction_factor(live_reduction_area_mm2, kll, floors)
        red = np.broadcast_to(red, (n,)).copy()
        loads["L"] = loads["L"] * red  # ASCE 7 §4.7.2
    dur = dict(_default_durations())
    if durations:
        for t, d in durations.items():
            if t not in LOAD_TYPES:
                raise ValueError(
                    f"durations has an unknown load type {t!r}; use one of "
                    f"{', '.join(LOAD_TYPES)} (for example {{'L': 'seven-days'}})."
                )
            dur[t] = (d or "").strip().lower()
    cds = _durations()
    cd_type = np.empty(len(LOAD_TYPES))
    for j, t in enumerate(LOAD_TYPES):
        d = dur.get(t, "")
        if not d:
            if (loads[t] > 0).any():
                raise ValueError(
                    f"load {t} has no duration; give one of {', '.join(cds)} in durations "
                    f"(for example {{'{t}': 'seven-days'}})."
                )
            cd_type[j] = np.nan
        elif d not in cds:
            raise ValueError(
                f"duration {d!r} for load {t} is not known; use one of {', '.join(cds)} "
                "(for example 'ten-years')."
            )
        else:
            cd_type[j] = cds[d]
    rows, coef, stack, load = _table_arrays("asd", loads)
    # NDS 2018 §2.3.2: CD of the shortest-duration load in the combination (largest CD present)
    present = (coef[:, :, None] != 0) & (stack[None, :, :] > 0)  # (k, 7, n)
    cd = np.where(present, np.nan_to_num(cd_type, nan=0.0)[None, :, None], 0.0).max(axis=1)
    cd = np.where(cd > 0, cd, cds["permanent"])  # nothing present: dead load alone
    return _finish("asd", rows, load, cd, red)


def lrfd_combinations(
    D=0.0,
    L=0.0,
    Lr=0.0,
    S=0.0,
    R=0.0,
    W=0.0,
    E=0.0,
    *,
    live_kind: str = "occupancy",
    live_reduction_area_mm2=None,
    kll=4.0,
    floors=1,
) -> Combinations:
    """ASCE 7 §2.3.1 LRFD (strength) combinations, each with its lambda (none is picked here).

    lambda per combination from NDS 2018 Appendix N Table N3 (data/load_combinations.csv, from
    memory): 1.4D 0.6; 1.2D+1.6L+0.5(Lr or S or R) 0.8 for occupancy live load, 0.7 for
    storage, 1.25 for impact (``live_kind``); 1.2D+1.6(Lr or S or R)+(L or 0.5W) 0.8; wind and
    earthquake combinations 1.0. L is taken at 1.0 in combinations 3-5 (the 0.5L option of
    ASCE 7 is not used: conservative).
    """
    if live_kind not in LIVE_KINDS:
        raise ValueError(
            f"live_kind {live_kind!r} is not known; use one of {', '.join(LIVE_KINDS)} "
            "(for example 'occupancy')."
        )
    loads, n = _loads(D, L, Lr, S, R, W, E)
    red = np.ones(n)
    if live_reduction_area_mm2 is not None:
        red = live_reduction_factor(live_reduction_area_mm2, kll, floors)
        red = np.broadcast_to(red, (n,)).copy()
        loads["L"] = loads["L"] * red  # ASCE 7 §4.7.2
    rows, _, _, load = _table_arrays("lrfd", loads)
    lam = np.array([float(r[f"lam_{live_kind}"]) for r in rows])  # NDS 2018 App. N Table N3
    return _finish("lrfd", rows, load, np.broadcast_to(lam[:, None], load.shape).copy(), red)


def _finish(method, rows, load, factor, red) -> Combinations:
    return Combinations(
        method=method,
        keys=tuple(r["key"] for r in rows),
        names=tuple(r["name"] for r in rows),
        clauses=tuple(r["clause"] for r in rows),
        load_n=load,
        factor=factor,
        live_reduction=red,
    )


# --------------------------------------------------------------------------- wall removal


@dataclass(frozen=True)
class WallRemoval:
    """Loads when a bearing wall is replaced by a beam on two end posts (N, N/mm), per load type.

    ``line_n_per_mm``: the line load the wall carries, {"D": w_D, "L": w_L}; ``end_post_n``:
    each end post's share of the new beam (simple span, w Lb/2); ``shore_n``: load on each
    temporary shore during the work (see :func:`wall_removal`), per type; ``shore_line_n_per_mm``
    the line load on the most loaded temporary shore line.
    """

    line_n_per_mm: dict[str, np.ndarray]
    end_post_n: dict[str, np.ndarray]
    shore_line_n_per_mm: dict[str, np.ndarray]
    shore_n: dict[str, np.ndarray]
    temporary_lines: int

    def total(self, part: str) -> np.ndarray:
        d = getattr(self, part)
        return d["D"] + d["L"]


def wall_removal(
    span_left_mm,
    span_right_mm,
    dead_kpa,
    live_kpa,
    beam_span_mm,
    shore_spacing_mm=None,
    *,
    floors=1,
    wall_above_dead_n_per_mm=0.0,
    temporary_lines: int = 2,
) -> WallRemoval:
    """Joists spanning onto a bearing wall from each side; the wall replaced by a new beam.

    Line load on the wall: w = q x (L1/2 + L2/2) per floor, plus any wall weight above (dead)
    # common practice, no source: simple spans.
    New beam of span Lb, simple span: each end post carries R = w Lb / 2 (beam theory; beam
    self-weight not included: add it to ``wall_above_dead_n_per_mm``).
    Temporary shoring during the work (assumption, state it in the working): with
    ``temporary_lines=2`` a shore line is set close to the wall on each side and picks up that
    side's joists only, w_side = q x L_side/2 (the joists' other ends stay on their far
    supports); the wall weight above is split equally. With ``temporary_lines=1`` one line (or
    needle beams) at the wall carries the whole w. Each shore under its temporary header at
    spacing s carries w_line x s (interior shores of a header on simple spans; the end shores of
    a header carry about half). ``shore_spacing_mm=None``: shore loads are NaN.
    """
    l1 = _arr("span_left_mm", span_left_mm, "mm", "3658 (12 ft)")
    l2 = _arr("span_right_mm", span_right_mm, "mm", "3658 (12 ft)")
    qd = _arr("dead_kpa", dead_kpa, "kPa", "0.479 (10 psf)")
    ql = _arr("live_kpa", live_kpa, "kPa", "1.92 (40 psf)")
    lb = _arr("beam_span_mm", beam_span_mm, "mm", "3658 (12 ft)", allow_zero=False)
    nf = _arr("floors", floors, "(count)", "1", allow_zero=False)
    wa = _arr("wall_above_dead_n_per_mm", wall_above_dead_n_per_mm, "N/mm", "0.88 (60 plf)")
    if temporary_lines not in (1, 2):
        raise ValueError(
            f"temporary_lines must be 1 or 2 (got {temporary_lines!r}), for "
            "example 2 for a shore line on each side of the wall."
        )
    if shore_spacing_mm is None:
        s = np.array([np.nan])
    else:
        s = _arr("shore_spacing_mm", shore_spacing_mm, "mm", "1219 (4 ft)", allow_zero=False)

    half = (l1 + l2) / 2.0
    w = {
        # common practice, no source: simple spans: w = q (L1/2 + L2/2)
        "D": qd * KPA_N_PER_MM2 * half * nf + wa,
        "L": ql * KPA_N_PER_MM2 * half * nf,
    }
    r = {k: v * lb / 2.0 for k, v in w.items()}  # beam theory: simple span, R = w Lb / 2
    if temporary_lines == 2:
        side = np.maximum(l1, l2) / 2.0  # judgement: most loaded side's half span
        wt = {"D": qd * KPA_N_PER_MM2 * side * nf + wa / 2.0, "L": ql * KPA_N_PER_MM2 * side * nf}
    else:
        wt = dict(w)
    shore = {k: v * s for k, v in wt.items()}  # tributary length s per shore, judgement
    return WallRemoval(w, r, wt, shore, temporary_lines)


# --------------------------------------------------------------------------- soil


@dataclass(frozen=True)
class SoilCheck:
    """Bearing of a mudsill or pad on soil for n posts.

    ``pressure_kpa`` = P / A; ``allowable_kpa`` presumptive value (NaN: none, never assumed);
    ``ratio`` = pressure / allowable (NaN where no value); ``required_area_mm2`` = P / q_allow;
    ``flags`` bit mask (SOIL_UNKNOWN, SOIL_UNPREPARED, SOIL_ASSUMED, SOIL_OVER);
    ``soil`` the key per post; ``clause`` the source.
    """

    pressure_kpa: np.ndarray
    allowable_kpa: np.ndarray
    ratio: np.ndarray
    required_area_mm2: np.ndarray
    flags: np.ndarray
    soil: np.ndarray
    clause: np.ndarray

    def warnings(self, i: int) -> list[str]:
        return [msg for bit, msg in SOIL_FLAG_NAMES.items() if self.flags[i] & bit]


def soil_allowable_kpa(soil_class) -> np.ndarray:
    """Presumptive allowable vertical pressure in kPa per key (NaN where none); accepts keys of
    data/soil_bearing.csv or the IBC class numbers 1-5."""
    return _soil_lookup(soil_class)[0]


def _soil_lookup(soil_class) -> tuple[np.ndarray, np.ndarray]:
    keys = soil_keys()
    rows = _rows("soil_bearing")
    alias = {rows[k]["class_no"]: k for k in keys if rows[k]["class_no"]}
    vals = np.atleast_1d(np.asarray(soil_class, dtype=object))
    vals = np.array([alias.get(str(v).strip(), v) for v in vals.tolist()], dtype=object)
    idx = _keys("soil class", vals, keys, "sand")
    psf = np.array([_f(rows[k]["vertical_psf"]) for k in keys])
    return psf[idx] * PSF_KPA, idx  # IBC 2012 Table 1806.2


def soil_check(P_n, pad_area_mm2, soil_class) -> SoilCheck:
    """Bearing pressure of a post's pad or mudsill on soil against IBC 2012 Table 1806.2.

    P_n: load on the pad (N); pad_area_mm2: contact area of the pad/mudsill on the ground;
    soil_class: key of data/soil_bearing.csv (or IBC class 1-5). Unknown and unprepared soil
    get no capacity (allowable NaN) and a flag; the 1,500 psf HUD default (24 CFR 3285.202(e))
    applies only when the user picks ``unknown-hud-default``.
    """
    p = _arr("P_n", P_n, "N", "26689 (6,000 lbf)")
    a = _arr("pad_area_mm2", pad_area_mm2, "mm^2", "371612 (4 ft^2)", allow_zero=False)
    q_allow, idx = _soil_lookup(soil_class)
    keys = soil_keys()
    rows = _rows("soil_bearing")
    flag_of = {
        "none": SOIL_OK,
        "unknown": SOIL_UNKNOWN,
        "unprepared": SOIL_UNPREPARED,
        "assumed": SOIL_ASSUMED,
    }
    flag = np.array([flag_of[rows[k]["flag"]] for k in keys], dtype=np.int16)[idx]
    p, a, q_allow, flag, idx = np.broadcast_arrays(p, a, q_allow, flag, idx)
    pressure = p / a / KPA_N_PER_MM2  # q = P / A
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = pressure / q_allow  # IBC 2012 Table 1806.2 presumptive value
        req = p / (q_allow * KPA_N_PER_MM2)  # required pad area A = P / q_allow
    flags = flag | np.where(ratio > 1.0 + 1e-9, SOIL_OVER, 0).astype(np.int16)
    key_arr = np.array(keys, dtype=object)[idx]
    clause = np.array([rows[k]["source"] for k in keys], dtype=object)[idx]
    return SoilCheck(pressure, q_allow, ratio, req, flags, key_arr, clause)


def required_pad_area_mm2(P_n, allowable_kpa) -> np.ndarray:
    """Pad area needed for a load on soil of a given allowable pressure, A = P / q_allow (mm^2)."""
    p = _arr("P_n", P_n, "N", "26689 (6,000 lbf)")
    q = _arr("allowable_kpa", allowable_kpa, "kPa", "71.8 (1,500 psf)", allow_zero=False)
    return p / (q * KPA_N_PER_MM2)


# --------------------------------------------------------------------------- lateral


@dataclass(frozen=True)
class LateralDemand:
    """What the bracing of a shore must carry, N per post (or per shore system).

    ``minimum_n``: minimum lateral design load of the rule; ``thrust_n``: out-of-plumb thrust
    P delta / h; ``total_n``: their sum (judgement: the thrust is added to the minimum,
    FEMA US&R and Cal/OSHA T8 §1717, secondary); ``rule`` and ``clause`` name the source.
    """

    minimum_n: np.ndarray
    thrust_n: np.ndarray
    total_n: np.ndarray
    fraction: np.ndarray
    rule: str
    clause: str


@cache
def _lateral_rules() -> dict[str, dict[str, str]]:
    return _rows("shore_lateral")


def out_of_plumb_thrust_n(P_n, offset_mm, height_mm) -> np.ndarray:
    """Horizontal thrust from a post out of plumb by ``offset_mm`` over ``height_mm``:
    H = P delta / h (statics)."""
    p = _arr("P_n", P_n, "N", "26689 (6,000 lbf)")
    d = _arr("offset_mm", offset_mm, "mm", "25.4 (1 in)")
    h = _arr("height_mm", height_mm, "mm", "2438 (96 in)", allow_zero=False)
    return p * d / h  # statics: P x delta / h


def lateral_demand(
    P_n,
    rule: str = "fema-minimum",
    *,
    offset_mm=0.0,
    height_mm=None,
    dead_n=None,
    floor_edge_mm=None,
) -> LateralDemand:
    """Lateral load the bracing must carry.

    rule ``fema-minimum``: 2 % of the vertical load P; ``fema-aftershock``: 10 % where
    aftershocks are expected (FEMA US&R Rescue Specialist manual, secondary); ``cal-osha``: the
    greater of 100 plf of floor edge (``floor_edge_mm``) and 2 % of the total dead load
    (``dead_n``, default P) (Cal/OSHA T8 §1717(a)(4), secondary). Out-of-plumb thrust
    P offset/height is added when ``offset_mm`` > 0 (``height_mm`` then required).
    """
    rules = _lateral_rules()
    if rule not in rules:
        raise ValueError(
            f"lateral rule {rule!r} is not known; use one of {', '.join(rules)} "
            "(for example 'fema-minimum')."
        )
    row = rules[rule]
    p = _arr("P_n", P_n, "N", "26689 (6,000 lbf)")
    frac = float(row["fraction"])
    if rule == "cal-osha":
        dead = p if dead_n is None else _arr("dead_n", dead_n, "N", "26689 (6,000 lbf)")
        if floor_edge_mm is None:
            raise ValueError(
                "floor_edge_mm is needed for the cal-osha rule: the length "
                "of floor edge braced, in mm, for example 6096 (20 ft)."
            )
        edge = _arr("floor_edge_mm", floor_edge_mm, "mm", "6096 (20 ft)")
        # Cal/OSHA T8 §1717(a)(4): max(100 plf x edge, 2 % of total dead load)
        minimum = np.maximum(float(row["plf"]) * PLF_N_PER_MM * edge, frac * dead)
    else:
        minimum = frac * p  # FEMA US&R Rescue Specialist manual: 2 % (10 % with aftershocks)
    off = _arr("offset_mm", offset_mm, "mm", "25.4 (1 in)")
    if (off > 0).any():
        if height_mm is None:
            raise ValueError(
                "height_mm is needed with an out-of-plumb offset: the height "
                "over which the offset is measured, for example 2438 (96 in)."
            )
        thrust = out_of_plumb_thrust_n(p, off, height_mm)
    else:
        thrust = np.zeros(np.broadcast_shapes(p.shape, off.shape))
    minimum, thrust = np.broadcast_arrays(minimum, thrust)
    total = minimum + thrust  # judgement: add P delta/h to the minimum
    frac_arr = np.full(total.shape, frac)
    return LateralDemand(minimum.copy(), thrust.copy(), total, frac_arr, rule, row["source"])
