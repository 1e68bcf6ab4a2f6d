"""PostBatch: the engine's input, a struct of numpy arrays in fixed SI units.

Units inside the engine, always: lengths in mm, forces in N, stresses in MPa (N/mm^2),
moisture in percent, temperature in degrees C. One PostBatch holds n posts; every field is
an array of length n (scalars given to :func:`make_batch` are broadcast). A single post is a
batch of length one: there is no separate single-post path.

Axis convention: axis 1 buckles in the plane of ``d1_mm`` (the larger side), axis 2 in the
plane of ``d2_mm`` (the smaller side, and the total thickness of a built-up post). For a
round post both are the side of the equivalent square (NDS 2018 §3.7.3).

A NaN in an optional field means "not given": the check that needs it is skipped (and the
rating says so), never silently filled with a guess.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields

import numpy as np

from fieldcheck.engine.blocks import broadcast, constant

# End conditions, per end (NDS 2018 Appendix G, Table G1 cases).
PINNED, FIXED, FREE, GUIDED = 0, 1, 2, 3
END_NAMES = ("pinned", "fixed", "free", "guided")

# Design method.
ASD, LRFD, EC5 = 0, 1, 2
METHOD_NAMES = ("asd", "lrfd", "ec5")

# Product class: decides the column constant c, the wet-service table and the size rules.
DIMENSION, TIMBER, POLE, GLULAM = 0, 1, 2, 3
PRODUCT_NAMES = ("dimension", "timber", "pole", "glulam")

# Section shape.
RECT, ROUND, BUILT_UP = 0, 1, 2


def _f(default: float = np.nan):
    return field(
        default_factory=lambda: np.array([default], dtype=np.float64), metadata={"default": default}
    )


def _i(default: int = 0):
    return field(
        default_factory=lambda: np.array([default], dtype=np.int8), metadata={"default": default}
    )


def _b(default: bool = False):
    return field(
        default_factory=lambda: np.array([default], dtype=bool), metadata={"default": default}
    )


@dataclass
class PostBatch:
    """n posts as arrays. Build with :func:`make_batch`, not directly."""

    # --- section (measured; NDS 2018 §3.7.1.3: d is the dimension in the plane of buckling)
    d1_mm: np.ndarray = _f()
    d2_mm: np.ndarray = _f()
    shape: np.ndarray = _i(RECT)
    plies: np.ndarray = _i(1)
    kf: np.ndarray = _f(1.0)  # NDS 2018 §15.3: 0.6 nailed, 0.75 bolted, 1.0 solid (axis 2 only)

    # --- height and bracing
    height_mm: np.ndarray = _f()
    lu1_mm: np.ndarray = _f()  # unbraced length about axis 1 (NaN: the full height)
    lu2_mm: np.ndarray = _f()
    braced1: np.ndarray = _b()  # a brace point lies between the ends in axis 1
    # the first two brace heights per axis (mm from the bottom; NaN none), for the stability solver
    # when an end is a spring or free to sway; more braces only shorten lu (a solver given fewer
    # braces than there are errs on the safe side)
    brace1a_mm: np.ndarray = _f()
    brace1b_mm: np.ndarray = _f()
    brace2a_mm: np.ndarray = _f()
    brace2b_mm: np.ndarray = _f()
    braced2: np.ndarray = _b()

    # --- ends (NDS 2018 Appendix G)
    top: np.ndarray = _i(PINNED)
    bottom: np.ndarray = _i(PINNED)
    ke1: np.ndarray = _f()  # effective-length factor override per axis (NaN: from the ends)
    ke2: np.ndarray = _f()
    theoretical_k: np.ndarray = _b()  # use theoretical K instead of the recommended design Ke
    # an end the record does not state (no end and no spring given): pinned taken, with a warning
    ends_assumed: np.ndarray = _b()
    # rotational spring at an end as R = k L / (E I) (0 pin, inf fixed; NaN: from the end code);
    # the end's translation still comes from its code (free or guided: sways). stability.py
    r_top: np.ndarray = _f()
    r_bottom: np.ndarray = _f()

    # --- material reference values (NDS Supplement or EN 338), before adjustment
    fc_mpa: np.ndarray = _f()  # Fc (NDS) or f_c,0,k (EN 338)
    fc_perp_mpa: np.ndarray = _f()  # Fc-perp of the post itself (or f_c,90,k)
    fb_mpa: np.ndarray = _f()  # Fb (or f_m,k)
    e_mpa: np.ndarray = _f()  # E (or E_0,mean)
    emin_mpa: np.ndarray = _f()  # Emin (or E_0,05)
    cf_fc: np.ndarray = _f(1.0)  # size factor CF for Fc (NDS Supplement Table 4A)
    cf_fb: np.ndarray = _f(1.0)  # size factor CF for Fb
    product: np.ndarray = _i(DIMENSION)
    wet_tabulated: np.ndarray = _b()  # values already for wet service (no further CM)
    # grading class not known (a measured section thinner than a timber, a round post): in wet
    # service the lowest CM any class takes, without the low-value reliefs (judgement)
    class_unknown: np.ndarray = _b()
    knowledge: np.ndarray = _f(1.0)  # knowledge factor kappa (ASCE 41), 0.75 for default values
    strength_row: np.ndarray = _i(-1)  # EC5: en338.row_code of the class and edition (-1 none)
    # NDS: each reference value's status (read, secondary, memory), packed two bits a value by
    # materials.pack_statuses (-1: none given); the working and the summary say it per value
    value_status: np.ndarray = field(
        default_factory=lambda: np.array([-1], dtype=np.int16), metadata={"default": -1}
    )

    # --- service conditions
    method: np.ndarray = _i(ASD)
    cd: np.ndarray = _f(1.0)  # NDS 2018 Table 2.3.2 (ASD only)
    duration_assumed: np.ndarray = _b()  # no duration stated for a load given: permanent taken
    lam: np.ndarray = _f(0.8)  # NDS 2018 Appendix N Table N3 time effect factor (LRFD only)
    kmod: np.ndarray = _f(0.8)  # EN 1995-1-1 Table 3.1 (EC5 only)
    gamma_m: np.ndarray = _f(1.3)  # EN 1995-1-1 Table 2.3 (EC5 only)
    moisture_pct: np.ndarray = _f()  # NaN: not measured, dry service assumed (with a warning)
    temp_c: np.ndarray = _f()  # NaN: normal temperature (<= 38 C)
    incised: np.ndarray = _b()
    construction: np.ndarray = _b()  # construction-stage member: le/d limit 75 not 50

    # --- load (ASD: service load; LRFD: factored load; EC5: design load)
    load_n: np.ndarray = _f()
    # nominal loads by ASCE 7 type on this post (N; NaN in nom_d_n: no combinations, load_n with
    # cd or lam as given). With them, every ASCE 7 combination of the post's method is rated
    # for every check (engine/combinations.py) and load_n, cd, lam and combo are the governing
    # combination's in the rating's batch.
    nom_d_n: np.ndarray = _f()
    nom_l_n: np.ndarray = _f(0.0)
    nom_lr_n: np.ndarray = _f(0.0)
    nom_s_n: np.ndarray = _f(0.0)
    nom_r_n: np.ndarray = _f(0.0)
    nom_w_n: np.ndarray = _f(0.0)
    nom_e_n: np.ndarray = _f(0.0)
    cd_l: np.ndarray = _f(1.0)  # CD of the live load (ten years; seven days for construction)
    cd_r: np.ndarray = _f(1.25)  # CD of the rain load (no NDS default: the records layer asks)
    live_kind: np.ndarray = _i(0)  # loads.LIVE_KINDS: occupancy, storage, impact (LRFD lambda)

    # --- bearing at the ends (NDS 2018 §3.10)
    end_contact: np.ndarray = _f(1.0)  # fraction of the end area in contact
    end_plate: np.ndarray = _b()  # ends bear on a steel plate (NDS 2018 §3.10.1.3)
    top_fc_perp_mpa: np.ndarray = _f()  # Fc-perp of the cap or beam above (NaN: not checked)
    top_lb_mm: np.ndarray = _f()  # bearing length along the cap's grain (NaN: post dimension)
    top_cb: np.ndarray = _b()  # bearing >= 3 in from the cap's end, so Cb may exceed 1
    bottom_fc_perp_mpa: np.ndarray = _f()  # Fc-perp of the sill or plate below
    bottom_lb_mm: np.ndarray = _f()
    bottom_cb: np.ndarray = _b()
    top_not_wood: np.ndarray = _b()  # the cap was stated none (steel, concrete): not wood
    bottom_not_wood: np.ndarray = _b()  # the sill was stated none
    bearing_wet: np.ndarray = _b()  # the cap or sill is in wet service (CM = 0.67 on Fc-perp)

    # --- ground and load (engine/ground.py, engine/loads.py, engine/remedies.py) ----------------
    pad_area_mm2: np.ndarray = _f()  # mudsill or pad contact area on the ground (NaN: not given)
    pad_l1_mm: np.ndarray = _f()  # pad sides in plan (NaN: given as an area only)
    pad_l2_mm: np.ndarray = _f()
    pad_t_mm: np.ndarray = _f()  # pad or mudsill thickness (NaN: not given, rigid pad assumed)
    soil_kpa: np.ndarray = _f()  # presumptive allowable pressure, IBC 2012 Table 1806.2 (NaN: none)
    soil_flags: np.ndarray = _i(0)  # loads.SOIL_* bits: unknown / unprepared / assumed
    plate_lb_mm: np.ndarray = (
        _f()
    )  # steel bearing plate length along the cap and sill grain (NaN: none)
    combo: np.ndarray = _i(
        -1
    )  # governing combination: row of data/load_combinations.csv (-1: --load)
    lateral_rule: np.ndarray = _i(
        -1
    )  # row of data/shore_lateral.csv (-1: bracing demand not asked)
    lateral_edge_mm: np.ndarray = _f()  # floor edge braced (cal-osha rule)
    lean_mm: np.ndarray = _f()  # out of plumb over the height, for the bracing thrust (NaN: plumb)
    species_code: np.ndarray = _i(-1)  # index into materials.SPECIES (-1 unknown): remedies' stock

    # --- condition: the post as found (engine/condition.py; common practice, no source) -----------
    # Depths in mm from the original face, 0 or NaN: none. Faces: 1p/1m the two narrow faces
    # (loss there reduces d1), 2p/2m the two wide faces (reduces d2). Zones: condition.ZONE_NAMES
    # (0 full height, 1 middle half, 2 top end, 3 bottom end).
    decay_1p_mm: np.ndarray = _f(0.0)  # decay or insect loss, probed depth
    decay_1m_mm: np.ndarray = _f(0.0)
    decay_2p_mm: np.ndarray = _f(0.0)
    decay_2m_mm: np.ndarray = _f(0.0)
    decay_zone: np.ndarray = _i(0)
    decay_margin_mm: np.ndarray = _f(13.0)  # added past the probed boundary (judgement, 1/2 in)
    hollow_mm: np.ndarray = _f(0.0)  # diameter of a hollow (decayed) core at the centre
    hollow_zone: np.ndarray = _i(0)
    char_1p_mm: np.ndarray = _f(0.0)  # char depth; the 7 mm zero-strength layer is added
    char_1m_mm: np.ndarray = _f(0.0)
    char_2p_mm: np.ndarray = _f(0.0)
    char_2m_mm: np.ndarray = _f(0.0)
    char_zone: np.ndarray = _i(0)
    wane_mm: np.ndarray = _f(0.0)  # wane leg at a corner (45-degree triangle)
    wane_corners: np.ndarray = _i(0)  # 0-4 corners
    notch_mm: np.ndarray = _f(0.0)  # notch depth across one whole face
    notch_face: np.ndarray = _i(0)  # 0 a wide face, 1 a narrow face
    notch_z_mm: np.ndarray = _f()  # height of the notch above the bottom (NaN: mid-height assumed)
    hole_mm: np.ndarray = _f(0.0)  # bored hole diameter, through the member
    hole_face: np.ndarray = _i(0)  # 0 bored through the wide faces, 1 through the narrow faces
    hole_z_mm: np.ndarray = _f()
    knot_mm: np.ndarray = _f(0.0)  # largest knot measured across its face
    knot_face: np.ndarray = _i(0)  # 0 on a wide face (width d1), 1 on a narrow face (width d2)
    slope_n: np.ndarray = _f(np.inf)  # slope of grain 1 in n (inf: straight)
    slope_table: np.ndarray = _i(
        0
    )  # 0 grading (ASTM D245, memory), 1 clear-wood (Wood Handbook 5-12)
    sr_applies: np.ndarray = _b(True)  # knots/slope reduce the values (ungraded, or beyond grade)
    split: np.ndarray = _i(0)  # 0 none, 1 check, 2 through, 3 opening
    split_faces: np.ndarray = _i(0)  # faces a through split shows on: 0 unknown, 1 wide, 2 narrow
    split_zone: np.ndarray = _i(0)
    crushed_end: np.ndarray = _i(0)  # crushed or broomed: bit 1 top, bit 2 bottom
    crushing_active: np.ndarray = _b()  # crushing in progress (fresh fibres, growing indentation)
    settling_sill: np.ndarray = _b()
    post_moving: np.ndarray = _b()  # leaning or moving more than before
    bow1_mm: np.ndarray = _f(0.0)  # mid-height bow in the plane of d1 (string line), axis 1
    bow2_mm: np.ndarray = _f(0.0)
    plumb1_mm: np.ndarray = _f(0.0)  # top offset from the bottom over the height, in the d1 plane
    plumb2_mm: np.ndarray = _f(0.0)
    offset1_mm: np.ndarray = _f(
        0.0
    )  # load resultant off the post centroid on the cap, d1 direction
    offset2_mm: np.ndarray = _f(0.0)
    sw_time_us: np.ndarray = _f()  # stress-wave transit time across the member
    sw_path_mm: np.ndarray = _f()  # its path length
    sw_sound_us: np.ndarray = _f()  # transit time on sound wood of the same member, same path
    density_kgm3: np.ndarray = _f()  # density at the test moisture (for E_d = rho v^2)
    sw_suspect: np.ndarray = _f(1.3)  # time ratio flagging suspect decay (from memory, editable)
    sw_advanced: np.ndarray = _f(1.5)  # time ratio flagging advanced decay (from memory, editable)
    data_level: np.ndarray = _i(-1)  # condition.DATA_LEVELS index (-1 not stated)
    material_assumed: np.ndarray = _b()  # species or grade unknown: default values used
    shared_by: np.ndarray = _i(1)  # posts sharing the load under a stiff cap (load_n is per post)

    @property
    def n(self) -> int:
        return int(self.d1_mm.shape[0])

    def take(self, idx) -> PostBatch:
        """A new batch holding the posts at ``idx`` (an index array, slice or mask).

        A field holding one value for every post stays one value: its part is a shared,
        read-only contiguous array of that value (numpy's fast loops want contiguous input).
        """
        out = {}
        m = None  # the new length, found from the first field holding one value
        for name in FIELD_NAMES:
            a = getattr(self, name)
            if broadcast(a):
                if m is None:
                    m = len(range(*idx.indices(a.size))) if isinstance(idx, slice) else len(a[idx])
                out[name] = constant(a[0], m)
            else:
                out[name] = a[idx]
        return PostBatch(**out)

    def replace(self, **changes) -> PostBatch:
        """A copy with some fields replaced (scalars are broadcast)."""
        out = {f.name: getattr(self, f.name) for f in fields(self)}
        for k, v in changes.items():
            cur = out[k]
            out[k] = np.broadcast_to(np.asarray(v, dtype=cur.dtype), cur.shape).copy()
        return PostBatch(**out)

    def replace_arrays(self, **arrays) -> PostBatch:
        """A copy with some fields replaced by the arrays given (length n, not broadcast).

        The fields are copied as they are, without the dataclass's __init__ (it only assigns
        them): the load combinations replace a block's load twice per block. Whatever was kept
        on this batch (blocks.memo) is not carried over."""
        unknown = arrays.keys() - FIELD_SET
        if unknown:
            raise TypeError(f"unknown PostBatch fields: {sorted(unknown)}")
        out = object.__new__(PostBatch)
        d = self.__dict__
        out.__dict__.update({name: d[name] for name in FIELD_NAMES})
        out.__dict__.update(arrays)
        return out

    @staticmethod
    def concat(batches: list[PostBatch]) -> PostBatch:
        return PostBatch(
            **{
                f.name: np.concatenate([getattr(b, f.name) for b in batches])
                for f in fields(PostBatch)
            }
        )


FIELD_NAMES = tuple(f.name for f in fields(PostBatch))
FIELD_SET = frozenset(FIELD_NAMES)
DEFAULTS = {f.name: f.metadata["default"] for f in fields(PostBatch)}
DTYPES = {f.name: f.default_factory().dtype for f in fields(PostBatch)}  # type: ignore[misc]


def make_batch(n: int | None = None, **values) -> PostBatch:
    """Build a PostBatch; every field not given takes its default, scalars are broadcast.

    ``n`` is taken from the longest array given when not stated.
    """
    unknown = set(values) - set(FIELD_NAMES)
    if unknown:
        raise TypeError(f"unknown PostBatch fields: {sorted(unknown)}")
    if n is None:
        sizes = [np.size(v) for v in values.values() if np.ndim(v) > 0]
        n = max(sizes) if sizes else 1
    out = {}
    for name in FIELD_NAMES:
        v = values.get(name, DEFAULTS[name])
        arr = np.asarray(v, dtype=DTYPES[name])
        if arr.ndim == 0:
            # one value for every post: a read-only broadcast view, not n copies. It costs no
            # memory, and a block reading a field nobody gave reads one cached value.
            arr = np.broadcast_to(arr, (n,))
        elif arr.shape != (n,):
            raise ValueError(f"field {name} has shape {arr.shape}, expected ({n},)")
        out[name] = arr
    return PostBatch(**out)
