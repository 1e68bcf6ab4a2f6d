"""The spring-and-brace buckling solver against closed forms, published equations and scipy."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.linalg import eigh
from scipy.optimize import brentq

from fieldcheck.engine.stability import (
    IDEAL_CASES,
    bracketing_cases,
    critical_load,
    design_k,
    effective_length_factor,
    is_mechanism,
    k_from_ratios,
)

INF = np.inf
TOL = 1e-4  # issue 4: agreement within 1e-4 in K


# --- the six ideal cases --------------------------------------------------------------------


@pytest.mark.parametrize(
    ("r_top", "r_bottom", "sway", "expected", "source"),
    [
        (0.0, 0.0, False, 1.0, "Euler, pinned-pinned"),
        (0.0, INF, False, 0.699156, "fixed-pinned: root of tan u = u, Timoshenko & Gere ch. 2"),
        (INF, 0.0, False, 0.699156, "pinned-fixed: root of tan u = u, Timoshenko & Gere ch. 2"),
        (INF, INF, False, 0.5, "fixed-fixed, Timoshenko & Gere ch. 2"),
        (0.0, INF, True, 2.0, "flagpole, Timoshenko & Gere ch. 2"),
        (INF, INF, True, 1.0, "fixed-guided, Timoshenko & Gere ch. 2"),
        (INF, 0.0, True, 2.0, "pinned-guided, Timoshenko & Gere ch. 2"),
    ],
)
def test_ideal_cases(r_top, r_bottom, sway, expected, source):
    # Timoshenko & Gere ch. 2
    K = k_from_ratios(r_top, r_bottom, sway)
    assert K[0] == pytest.approx(expected, abs=TOL), source


def test_fixed_pinned_root_of_tan_u_equals_u_with_scipy():
    # Timoshenko & Gere ch. 2: fixed-pinned, tan u = u; root found independently with brentq
    u = brentq(lambda x: math.tan(x) - x, math.pi + 0.1, 1.5 * math.pi - 1e-9)
    assert k_from_ratios(INF, 0.0, False)[0] == pytest.approx(math.pi / u, abs=1e-9)


def test_dimensional_call_matches_euler():
    # Euler: P = pi^2 EI / L^2 for pinned-pinned (Timoshenko & Gere ch. 2)
    EI, L = 1.1e11, 2440.0
    P = critical_load(EI, L, 0.0, 0.0, INF, INF)
    assert P[0] == pytest.approx(math.pi**2 * EI / L**2, rel=1e-9)
    # flagpole: P = pi^2 EI / (2L)^2
    P = critical_load([EI, EI], [L, L], 0.0, INF, 0.0, INF)
    assert pytest.approx(math.pi**2 * EI / (2 * L) ** 2, rel=1e-9) == P


# --- AISC 360 Commentary Appendix 7 alignment-chart equations ---------------------------------

G_PAIRS = [(1, 1), (0.5, 2), (2, 2), (10, 0.1), (1, 10), (0.2, 0.2), (3, 3)]
K_BRACED = [0.774265, 0.764654, 0.855275, 0.720853, 0.859922, 0.591935, 0.893430]
K_SWAY = [1.317275, 1.366766, 1.589488, 1.695356, 1.902969, 1.066454, 1.825799]


def test_alignment_chart_braced_table():
    # AISC 360 Commentary App. 7 Eq. C-A-7-1 with R = 2/G; AISC 360-16 Commentary Appendix 7
    ga, gb = np.array(G_PAIRS, dtype=float).T
    K = k_from_ratios(2 / ga, 2 / gb, False)
    np.testing.assert_allclose(K, K_BRACED, atol=TOL)


def test_alignment_chart_sway_table():
    # AISC 360 Commentary App. 7 Eq. C-A-7-2 with R = 6/G; AISC 360-16 Commentary Appendix 7
    ga, gb = np.array(G_PAIRS, dtype=float).T
    K = k_from_ratios(6 / ga, 6 / gb, True)
    np.testing.assert_allclose(K, K_SWAY, atol=TOL)


def _chart_braced(K, ga, gb):
    # AISC 360 Commentary App. 7 Eq. C-A-7-1 (AISC 360-16 Commentary Appendix 7)
    x = math.pi / K
    return ga * gb / 4 * x**2 + (ga + gb) / 2 * (1 - x / math.tan(x)) + 2 * math.tan(x / 2) / x - 1


def _chart_sway(K, ga, gb):
    # AISC 360 Commentary App. 7 Eq. C-A-7-2 (AISC 360-16 Commentary Appendix 7)
    x = math.pi / K
    return (ga * gb * x**2 - 36) / (6 * (ga + gb)) - x / math.tan(x)


@settings(max_examples=40, deadline=None)
@given(
    ga=st.floats(0.1, 20.0),
    gb=st.floats(0.1, 20.0),
)
def test_alignment_chart_equations_with_brentq(ga, gb):
    # AISC 360 Commentary App. 7, Eq. C-A-7-1 and C-A-7-2 solved independently with scipy brentq
    kb = brentq(_chart_braced, 0.5 + 1e-9, 1.0 - 1e-12, args=(ga, gb), xtol=1e-13)
    ks = brentq(_chart_sway, 1.0 + 1e-12, 60.0, args=(ga, gb), xtol=1e-13)
    K = k_from_ratios([2 / ga, 6 / ga], [2 / gb, 6 / gb], [False, True])
    assert K[0] == pytest.approx(kb, abs=TOL)
    assert K[1] == pytest.approx(ks, abs=TOL)


# --- AISC 360-16 Commentary Appendix 7 -------------------------------------------------

R_COLS = [0.5, 1, 2, 5, 10, 20]


def test_spring_table_braced_both_ends():
    # AISC 360-16 Commentary Appendix 7, braced, both ends R
    K = k_from_ratios(R_COLS, R_COLS, False)
    np.testing.assert_allclose(K, [0.91565, 0.85528, 0.77427, 0.65982, 0.59194, 0.54870], atol=TOL)


def test_spring_table_braced_one_end():
    # AISC 360-16 Commentary Appendix 7, braced, one end R, other pinned
    K = k_from_ratios(R_COLS[:5], 0.0, False)
    np.testing.assert_allclose(K, [0.95605, 0.92248, 0.87488, 0.80377, 0.76024], atol=TOL)


def test_spring_table_sway_both_ends():
    # AISC 360-16 Commentary Appendix 7, sway, both ends R
    K = k_from_ratios(R_COLS, R_COLS, True)
    np.testing.assert_allclose(K, [3.27185, 2.40451, 1.82580, 1.37521, 1.19558, 1.09933], atol=TOL)


def test_spring_table_sway_base_fixed_top_spring():
    # AISC 360-16 Commentary Appendix 7, sway, base fixed, top R
    K = k_from_ratios(R_COLS[:5], INF, True)
    np.testing.assert_allclose(K, [1.71055, 1.54853, 1.37252, 1.18387, 1.09740], atol=TOL)


def test_spring_table_sway_base_spring_top_free():
    # AISC 360-16 Commentary Appendix 7, sway, base R, top free (u tan u = R, Timoshenko & Gere ch.
    # 2, stability functions)
    K = k_from_ratios(0.0, R_COLS[:5], True)
    np.testing.assert_allclose(K, [4.80902, 3.65160, 2.91733, 2.39116, 2.19866], atol=TOL)


def test_large_finite_stiffness_tends_to_fixed():
    # AISC 360-16 Commentary Appendix 7: R of 1e6 to 1e8 behaves as fixed
    K = k_from_ratios([1e8, 1e8, 1e8], [1e8, 0.0, 1e8], [False, False, True])
    np.testing.assert_allclose(K, [0.5, 0.699156, 1.0], atol=TOL)
    # far beyond that (1e14) the answer must not be spoiled by round-off (common practice, no
    # source)
    K = k_from_ratios([1e14, 1e14, 1e14], [1e14, 0.0, 1e14], [False, False, True])
    np.testing.assert_allclose(K, [0.5, 0.699156, 1.0], atol=TOL)
    K = effective_length_factor(1.0, 1.0, 0.0, 0.0, [1e12, 1e14], INF)
    np.testing.assert_allclose(K, [1.0, 1.0], atol=1e-9)


def _f_braced(u, ra, rb):
    # Timoshenko & Gere ch. 2, stability functions characteristic equation (no poles)
    return (
        u**3 * math.sin(u)
        + (ra + rb) * u * (math.sin(u) - u * math.cos(u))
        + ra * rb * (2 - 2 * math.cos(u) - u * math.sin(u))
    )


def _f_sway(u, ra, rb):
    # Timoshenko & Gere ch. 2, stability functions characteristic equation
    return (u * u - ra * rb) * math.sin(u) - (ra + rb) * u * math.cos(u)


def _first_root(f, lo, hi, args, steps=4000):
    grid = np.linspace(lo, hi, steps)
    vals = np.array([f(x, *args) for x in grid])
    i = int(np.flatnonzero(np.sign(vals[:-1]) * np.sign(vals[1:]) < 0)[0])
    return brentq(f, grid[i], grid[i + 1], args=args, xtol=1e-14)


@settings(max_examples=40, deadline=None)
@given(ra=st.floats(0.01, 1000.0), rb=st.floats(0.01, 1000.0))
def test_characteristic_equations_with_brentq(ra, rb):
    # Timoshenko & Gere ch. 2, stability functions, first root bracketed on a grid then refined by
    # scipy brentq
    ub = _first_root(_f_braced, math.pi - 1e-9, 2 * math.pi - 1e-6, (ra, rb))
    us = _first_root(_f_sway, 1e-6, math.pi, (ra, rb))
    K = k_from_ratios([ra, ra], [rb, rb], [False, True])
    assert K[0] == pytest.approx(math.pi / ub, abs=TOL)
    assert K[1] == pytest.approx(math.pi / us, abs=TOL)


# --- braces ---------------------------------------------------------------------------------------


def test_mid_height_brace_halves_the_effective_length_about_that_axis_only():
    # Timoshenko & Gere ch. 2: a rigid mid-height brace makes two pinned half-lengths (K = 0.5 of L)
    EI, L = 1.1e11, 3000.0
    k_axis1 = effective_length_factor(EI, L, 0.0, 0.0, INF, INF, braces=[[1500.0]])
    k_axis2 = effective_length_factor(EI, L, 0.0, 0.0, INF, INF)  # same post, other axis, no brace
    assert k_axis1[0] == pytest.approx(0.5, abs=TOL)
    assert k_axis2[0] == pytest.approx(1.0, abs=TOL)
    assert k_from_ratios(0.0, 0.0, False, braces_frac=[0.5])[0] == pytest.approx(0.5, abs=TOL)


def test_third_point_braces():
    # Timoshenko & Gere ch. 2: two rigid braces at third points of a pinned post give K = 1/3
    K = k_from_ratios(0.0, 0.0, False, braces_frac=[[1 / 3, 2 / 3]])
    assert K[0] == pytest.approx(1 / 3, abs=TOL)


def test_ideal_brace_stiffness_at_mid_height():
    # Timoshenko & Gere ch. 2 (from memory): a mid-height brace forces the second mode (K = 0.5)
    # once
    # its stiffness reaches 16 pi^2 EI / L^3 (= 4 P / L with P the half-length Euler load)
    EI, L = 1.0, 1.0
    k_ideal = 16 * math.pi**2 * EI / L**3
    K = effective_length_factor(
        EI,
        L,
        0.0,
        0.0,
        INF,
        INF,
        braces=[[0.5], [0.5]],
        brace_k=[[1.01 * k_ideal], [0.9 * k_ideal]],
    )
    assert K[0] == pytest.approx(0.5, abs=TOL)
    assert K[1] > 0.5 + 1e-3


def _fe_critical(EI, L, k_rt, k_rb, k_lt, k_lb, braces=(), brace_k=(), per_segment=40):
    """Independent check: Hermite beam elements with consistent geometric stiffness, scipy eigh.

    Przemieniecki 1968 beam element and geometric stiffness (from memory); infinite springs by
    removing DOFs.
    """
    cuts = [0.0, *sorted(braces), L]
    x = np.concatenate(
        [np.linspace(a, b, per_segment + 1)[:-1] for a, b in itertools.pairwise(cuts)] + [[L]]
    )
    nn = len(x)
    K = np.zeros((2 * nn, 2 * nn))
    G = np.zeros_like(K)
    for e in range(nn - 1):
        h = x[e + 1] - x[e]
        ke = (
            EI
            / h**3
            * np.array(
                [
                    [12, 6 * h, -12, 6 * h],
                    [6 * h, 4 * h * h, -6 * h, 2 * h * h],
                    [-12, -6 * h, 12, -6 * h],
                    [6 * h, 2 * h * h, -6 * h, 4 * h * h],
                ]
            )
        )
        ge = (
            1
            / (30 * h)
            * np.array(
                [
                    [36, 3 * h, -36, 3 * h],
                    [3 * h, 4 * h * h, -3 * h, -h * h],
                    [-36, -3 * h, 36, -3 * h],
                    [3 * h, -h * h, -3 * h, 4 * h * h],
                ]
            )
        )
        idx = np.arange(2 * e, 2 * e + 4)
        K[np.ix_(idx, idx)] += ke
        G[np.ix_(idx, idx)] += ge
    springs = {0: k_lb, 1: k_rb, 2 * (nn - 1): k_lt, 2 * (nn - 1) + 1: k_rt}
    for hb, kb in zip(braces, brace_k, strict=True):
        springs[2 * int(np.argmin(np.abs(x - hb)))] = kb
    held = [dof for dof, k in springs.items() if np.isinf(k)]
    for dof, k in springs.items():
        if np.isfinite(k):
            K[dof, dof] += k
    free = np.setdiff1d(np.arange(2 * nn), held)
    lam = eigh(K[np.ix_(free, free)], G[np.ix_(free, free)], eigvals_only=True)
    return float(lam[lam > 0].min())


@pytest.mark.parametrize(
    ("case", "braces", "brace_k"),
    [
        (
            (3.0e8, 1.0e8, INF, INF),
            (0.3,),
            (INF,),
        ),  # braced post, spring ends, rigid brace off-centre
        ((0.0, 5.0e8, 0.0, INF), (0.6,), (200.0,)),  # sway post, spring base, elastic brace
        ((2.0e8, INF, 50.0, INF), (0.25, 0.7), (INF, 80.0)),  # lateral spring top, two braces
        ((0.0, 0.0, 30.0, 0.0), (0.5,), (INF,)),  # pinned ends on lateral springs, rigid mid brace
    ],
)
def test_braced_and_spring_cases_against_scipy_finite_elements(case, braces, brace_k):
    # independent check: finite elements (Przemieniecki 1968) solved with scipy.linalg.eigh
    EI, L = 1.1e11, 3000.0
    hb = [b * L for b in braces]
    p_fe = _fe_critical(EI, L, *case, braces=hb, brace_k=brace_k)
    p = critical_load(EI, L, *case, braces=[hb], brace_k=[list(brace_k)])[0]
    K_fe = math.pi / L * math.sqrt(EI / p_fe)
    K = math.pi / L * math.sqrt(EI / p)
    assert pytest.approx(K_fe, abs=TOL) == K


def test_batch_with_mixed_brace_counts_matches_one_at_a_time():
    # common practice, no source: the batch path gives each post the answer it gets alone
    EI = np.array([1e11, 2e11, 5e10, 1e11])
    L = np.array([3000.0, 2500.0, 4000.0, 3000.0])
    krt = np.array([0.0, 1e8, INF, 3e7])
    krb = np.array([INF, 0.0, 1e9, 3e7])
    klt = np.array([INF, INF, 0.0, 100.0])
    braces = np.array([[np.nan, np.nan], [1000.0, np.nan], [3000.0, 500.0], [np.nan, np.nan]])
    batch = critical_load(EI, L, krt, krb, klt, INF, braces=braces)
    for i in range(4):
        one = critical_load(EI[i], L[i], krt[i], krb[i], klt[i], INF, braces=braces[i : i + 1])
        assert batch[i] == pytest.approx(one[0], rel=1e-10)


# --- bad input and mechanisms: one clear sentence each
# ----------------------------------------------


def _one_sentence(msg: str) -> None:
    assert "\n" not in msg
    assert msg.endswith(".")
    assert msg.count(". ") == 0


@pytest.mark.parametrize(
    ("kwargs", "field"),
    [
        ({"k_rot_top": -1.0}, "k_rot_top"),
        ({"k_rot_bottom": np.nan}, "k_rot_bottom"),
        ({"k_lat_top": -5.0}, "k_lat_top"),
        ({"EI_nmm2": 0.0}, "EI_nmm2"),
        ({"L_mm": -3.0}, "L_mm"),
        ({"braces": [[3000.0]]}, "brace height"),  # at the top
        ({"braces": [[3500.0]]}, "brace height"),  # above the top
        ({"braces": [[-10.0]]}, "brace height"),  # below the bottom
        ({"braces": [[1000.0]], "brace_k": [[0.0]]}, "brace stiffness"),
        ({"braces": [[1000.0, 1000.0]]}, "same height"),
    ],
)
def test_bad_input_is_one_sentence_naming_the_field(kwargs, field):
    # DEVELOPERS.md: bad input is a ValueError naming the field, the range and an example
    args = {
        "EI_nmm2": 1e11,
        "L_mm": 3000.0,
        "k_rot_top": 0.0,
        "k_rot_bottom": 0.0,
        "k_lat_top": INF,
        "k_lat_bottom": INF,
    }
    args.update(kwargs)
    with pytest.raises(ValueError) as exc:
        critical_load(**args)
    assert field in str(exc.value)
    _one_sentence(str(exc.value))


@pytest.mark.parametrize(
    ("ends", "words"),
    [
        (
            (0.0, 0.0, 0.0, INF),
            "tips over",
        ),  # pinned base, free top (Timoshenko & Gere ch. 2, stability functions: R = 0, 0)
        ((0.0, INF, 0.0, 0.0), "slides sideways"),  # fixed base on rollers, free top
        ((0.0, 0.0, 0.0, 0.0), "slides sideways"),  # nothing at all
    ],
)
def test_mechanism_is_one_sentence(ends, words):
    # Timoshenko & Gere ch. 2, stability functions: R_A = R_B = 0 with sway is a mechanism (u -> 0)
    with pytest.raises(ValueError) as exc:
        critical_load(1e11, 3000.0, *ends)
    assert "mechanism" in str(exc.value) and words in str(exc.value)
    _one_sentence(str(exc.value))
    assert is_mechanism(1e11, 3000.0, *ends)[0]
    assert np.isnan(critical_load(1e11, 3000.0, *ends, on_mechanism="nan")[0])


def test_mechanism_mask_is_vectorised_and_braces_rescue():
    # common practice, no source: a brace is a second lateral restraint
    mask = is_mechanism(1e11, 3000.0, 0.0, 0.0, [0.0, 0.0], INF, braces=[[np.nan], [1500.0]])
    assert mask.tolist() == [True, False]
    P = critical_load(
        1e11, 3000.0, 0.0, 0.0, [0.0, 0.0], INF, braces=[[np.nan], [1500.0]], on_mechanism="nan"
    )
    assert np.isnan(P[0]) and P[1] > 0


def test_ratio_errors_speak_in_ratios():
    # DEVELOPERS.md: the message names the field the user typed
    with pytest.raises(ValueError, match="R_top"):
        k_from_ratios(-1.0, 0.0)
    with pytest.raises(ValueError, match="mechanism"):
        k_from_ratios(0.0, 0.0, True)


# --- properties -----------------------------------------------------------------------------------

stiff = st.one_of(st.just(0.0), st.floats(1e-3, 1e4), st.just(INF))


@settings(max_examples=60, deadline=None)
@given(
    rt=stiff,
    rb=stiff,
    tt=stiff,
    tb=stiff,
    which=st.integers(0, 3),
    factor=st.floats(1.01, 100.0),
    brace=st.one_of(st.none(), st.floats(0.05, 0.95)),
)
def test_stiffer_spring_never_raises_k(rt, rb, tt, tb, which, factor, brace):
    # Rayleigh quotient: adding stiffness cannot lower the critical load (no source needed)
    base = [rt, rb, tt, tb]
    more = list(base)
    more[which] = more[which] * factor if more[which] > 0 else 1.0
    braces = None if brace is None else [[brace]]
    args = [1.0, 1.0]
    if is_mechanism(*args, *base, braces=braces)[0] or is_mechanism(*args, *more, braces=braces)[0]:
        return
    k0 = effective_length_factor(*args, *base, braces=braces)[0]
    k1 = effective_length_factor(*args, *more, braces=braces)[0]
    assert k1 <= k0 * (1 + 1e-9)


@settings(max_examples=60, deadline=None)
@given(rt=st.floats(1e-3, 1e4), rb=st.floats(1e-3, 1e4), sway=st.booleans())
def test_spring_ends_lie_between_the_bracketing_ideal_cases(rt, rb, sway):
    # NDS 2018 Appendix G Table G1; Timoshenko & Gere ch. 2: a spring end lies between pinned and
    # fixed
    K = k_from_ratios(rt, rb, sway)[0]
    stiff_case, flex_case = bracketing_cases(rt, rb, sway)
    assert IDEAL_CASES[int(stiff_case)][1] - TOL <= K <= IDEAL_CASES[int(flex_case)][1] + TOL
    Kd = design_k(K, rt, rb, sway)
    assert Kd >= K
    assert IDEAL_CASES[int(stiff_case)][2] - 1e-12 <= Kd <= IDEAL_CASES[int(flex_case)][2] + 1e-12


# --- design K (judgement rule) ------------------------------------------------------------------


@pytest.mark.parametrize(
    ("r_top", "r_bottom", "sway", "recommended"),
    [
        (INF, INF, False, 0.65),  # NDS 2018 App. G Table G1 (a)
        (0.0, INF, False, 0.80),  # (b)
        (INF, INF, True, 1.2),  # (c)
        (0.0, 0.0, False, 1.0),  # (d)
        (0.0, INF, True, 2.10),  # (e)
        (INF, 0.0, True, 2.4),  # (f)
    ],
)
def test_design_k_of_ideal_cases_is_the_nds_value(r_top, r_bottom, sway, recommended):
    # NDS 2018 Appendix G Table G1
    K = k_from_ratios(r_top, r_bottom, sway)
    assert design_k(K, r_top, r_bottom, sway)[0] == pytest.approx(recommended, abs=1e-5)
    assert design_k(K, r_top, r_bottom, sway, theoretical=True)[0] == K[0]


@settings(max_examples=40, deadline=None)
@given(r=st.floats(1e-3, 1e4), factor=st.floats(1.01, 100.0), sway=st.booleans())
def test_design_k_grows_with_flexibility(r, factor, sway):
    # judgement rule of design_k: monotone in the end stiffness
    k_stiff = k_from_ratios(r * factor, r * factor, sway)
    k_soft = k_from_ratios(r, r, sway)
    assert (
        design_k(k_stiff, r * factor, r * factor, sway)[0]
        <= design_k(k_soft, r, r, sway)[0] + 1e-12
    )
