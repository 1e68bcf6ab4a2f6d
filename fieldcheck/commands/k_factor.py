"""`fieldcheck k-factor`: effective-length factor of a post with spring or braced ends."""

from __future__ import annotations

import argparse
import json
import math

DESCRIPTION = (
    "Effective-length factor K of a prismatic post whose ends are rotational springs, "
    "R = k L / (E I) (0 for a pin, inf for full fixity), braced (both ends held sideways) or "
    "free to sway at the top, with optional braces. K is solved numerically (exact stability "
    "functions). Give a section, species and grade with --height to get the elastic critical "
    "load too."
)


MAX_BRACES = 20  # judgement: more braces on one post than any shore carries
MIN_SEGMENT_MM = 25.0  # judgement: a brace within an inch of an end or another brace is that one
MIN_SEGMENT_FRACTION = 0.01


def _ratio(s: str) -> float:
    from fieldcheck.records.spring_columns import parse_ratio

    try:
        return parse_ratio(s, "R")
    except ValueError as exc:  # argparse adds the option's name
        raise argparse.ArgumentTypeError(str(exc).removeprefix("R: ").rstrip(".")) from None


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--top-ratio",
        type=_ratio,
        default=0.0,
        metavar="R",
        help="top spring R = kL/(EI) (default 0, a pin)",
    )
    p.add_argument(
        "--bottom-ratio", type=_ratio, default=0.0, metavar="R", help="bottom spring R (default 0)"
    )
    p.add_argument(
        "--sway", action="store_true", help="the top may move sideways (unbraced); braced otherwise"
    )
    p.add_argument(
        "--height", metavar="LENGTH", help="post height, e.g. 10ft (needed with --brace-at)"
    )
    p.add_argument(
        "--brace-at",
        action="append",
        default=[],
        metavar="HEIGHT",
        help="a brace at this height above the bottom (repeat for more)",
    )
    p.add_argument(
        "--brace-axis",
        choices=("both", "weak", "strong"),
        default="both",
        help="which axis the braces hold (default both)",
    )
    p.add_argument(
        "--theoretical",
        action="store_true",
        help="report the solved K as the design K (no NDS margin for imperfect fixity)",
    )
    p.add_argument("--size", metavar="NOMINAL", help="nominal size for the critical load, e.g. 4x4")
    p.add_argument(
        "--section", metavar="BxD", help="measured section for the critical load, e.g. 89x89mm"
    )
    p.add_argument("--species", help="species group for E (critical load)")
    p.add_argument("--grade", help="grade for E (critical load)")
    p.add_argument("--json", action="store_true", help="print one JSON object")


def run(args: argparse.Namespace) -> int:
    import numpy as np

    from fieldcheck import units
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.engine import stability

    height = (
        units.parse_length(args.height, "height", lo=100.0, hi=30_000.0) if args.height else None
    )
    if len(args.brace_at) > MAX_BRACES:
        raise UsageError(
            f"brace-at: {len(args.brace_at)} braces given; give at most {MAX_BRACES} (a post "
            "braced that closely is rated as held along its length: check its segments instead)."
        )
    if args.brace_at and height is None:
        raise UsageError(
            "brace-at: give the post's --height too, so the brace can be placed along it."
        )
    if args.brace_axis != "both" and not args.brace_at:
        raise UsageError("brace-axis: says which axis the braces hold; give --brace-at too.")
    if (args.size or args.section or args.species or args.grade) and height is None:
        raise UsageError(
            "height: the critical load needs the post's --height; give it, or leave out "
            "--size, --section, --species and --grade."
        )
    if args.size and args.section:
        raise UsageError("section: give --size (nominal) or --section (measured), not both.")
    braces = []
    for text in args.brace_at:
        h = units.parse_length(text, "brace-at", lo=0.0, hi=30_000.0)
        gap = max(MIN_SEGMENT_MM, MIN_SEGMENT_FRACTION * height)
        if not gap <= h <= height - gap:
            raise UsageError(
                f"brace-at: a brace at {units.format_length(h)} is not between the bottom and the "
                f"top ({units.format_length(height)}) with at least {units.format_length(gap)} to "
                "either end."
            )
        if any(abs(h - b * height) < gap for b in braces):
            raise UsageError(
                f"brace-at: two braces lie closer than {units.format_length(gap)} "
                f"(at {units.format_length(h)}); give each brace once."
            )
        braces.append(h / height)
    frac = np.array([braces]) if braces else None
    rt, rb = np.array([args.top_ratio]), np.array([args.bottom_ratio])
    k_free = stability.k_from_ratios(rt, rb, sway=args.sway)  # the axis the braces do not hold
    k_braced = (
        stability.k_from_ratios(rt, rb, sway=args.sway, braces_frac=frac) if braces else k_free
    )
    axis_braced = {"both": (True, True), "weak": (False, True), "strong": (True, False)}[
        args.brace_axis
    ]
    k_axes = [
        float((k_braced if b else k_free)[0]) for b in axis_braced
    ]  # [axis 1 strong, axis 2 weak]
    design = [
        float(
            stability.design_k(np.array([k]), rt, rb, sway=args.sway, theoretical=args.theoretical)[
                0
            ]
        )
        for k in k_axes
    ]
    out: dict = {
        "K": max(k_axes),
        "K_design": max(design),
        "sway": args.sway,
        "R_top": _json_num(args.top_ratio),
        "R_bottom": _json_num(args.bottom_ratio),
    }
    if k_axes[0] != k_axes[1]:
        out.update(
            K_axis1=k_axes[0], K_axis2=k_axes[1], K_design_axis1=design[0], K_design_axis2=design[1]
        )
    stiff, flex = stability.bracketing_cases(rt, rb, sway=args.sway)
    out["bracketing_cases"] = [
        stability.IDEAL_CASES[int(stiff[0])][0],
        stability.IDEAL_CASES[int(flex[0])][0],
    ]
    if args.size or args.section or args.species or args.grade:
        out.update(_critical(args, height, k_axes))
    if args.json:
        print(json.dumps(out, indent=2))
        return 0
    print(
        f"K = {out['K']:.4f} (solved), design K = {out['K_design']:.4f}"
        + ("" if args.theoretical else " (NDS 2018 Appendix G margins for imperfect fixity)")
    )
    if "K_axis1" in out:
        print(
            f"  axis 1 (strong): K = {out['K_axis1']:.4f}; axis 2 (weak): K = {out['K_axis2']:.4f}"
        )
    print(
        f"  between the ideal cases: {out['bracketing_cases'][0]} and {out['bracketing_cases'][1]}"
    )
    if "critical_load_kN" in out:
        print(
            f"  elastic critical load (mean E, weaker axis): {out['critical_load_kN']:.2f} kN "
            f"({out['critical_load_lbf']:,.0f} lbf)"
        )
    return 0


def _json_num(x: float):
    return "inf" if math.isinf(x) else x


def _critical(args, height, k_axes) -> dict:
    from fieldcheck.commands.usage import UsageError
    from fieldcheck.records import parse_records

    if height is None:
        raise UsageError("height: give --height for the critical load, e.g. --height 10ft.")
    rec = {
        "height": args.height,
        "species": args.species or "unknown",
        "grade": args.grade or "unknown",
    }
    if args.section:
        rec["section"] = args.section
    if args.size:
        rec["size"] = args.size
    parsed = parse_records([rec])
    if parsed.errors:
        raise UsageError(parsed.errors[0].message)
    b = parsed.batch
    d1, d2, e = float(b.d1_mm[0]), float(b.d2_mm[0]), float(b.e_mpa[0])
    i1, i2 = d2 * d1**3 / 12.0, d1 * d2**3 / 12.0
    # Euler: P_cr = pi^2 E I / (K L)^2 (Timoshenko & Gere ch. 2); mean E x 1.03 shear-free
    # (NDS App. D)
    p = [
        math.pi**2 * 1.03 * e * i / (k * height) ** 2 for i, k in zip((i1, i2), k_axes, strict=True)
    ]
    pcr = min(p)
    return {
        "critical_load_kN": pcr / 1000.0,
        "critical_load_lbf": pcr / 4.4482216152605,
        "critical_load_axis": 1 if p[0] <= p[1] else 2,
    }
