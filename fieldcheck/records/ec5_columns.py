"""Columns and builder for EN 1995-1-1 ratings: strength class, service class, duration class."""

from __future__ import annotations

from typing import Any

from fieldcheck.engine import ec5, en338
from fieldcheck.engine.batch import EC5, METHOD_NAMES
from fieldcheck.records.builders import RowError, load_duration
from fieldcheck.records.core_columns import Column

# NDS durations -> EN 1995-1-1 Table 2.1 load-duration classes (nearest; judgement)
EC5_DURATION = {
    "permanent": "permanent",
    "ten-years": "long-term",
    "two-months": "medium-term",
    "seven-days": "short-term",
    "ten-minutes": "instantaneous",
    "impact": "instantaneous",
}


def _class(s: str) -> str:
    name = s.strip().upper()
    try:
        en338.strength_class(name)
    except ValueError:
        raise ValueError(
            f"class: '{s}' is not an EN 338 strength class we hold; use one of "
            f"{', '.join(en338.class_names())}."
        ) from None
    return name


def _service(s: str) -> int:
    t = s.strip().upper().removeprefix("SC")
    if t not in ("1", "2", "3"):
        raise ValueError(
            f"service_class: '{s}' is not a service class; use 1, 2 or 3 (EN 1995-1-1 §2.3.1.3)."
        )
    return int(t)


COLUMNS: tuple[Column, ...] = (
    Column("class", "material", "EN 338 strength class (method ec5)", "C24", _class),
    Column(
        "service_class",
        "material",
        "EN 1995-1-1 service class 1, 2 or 3 (method ec5)",
        "1",
        _service,
        "1",
    ),
    Column(
        "cap_class", "bearing", "EN 338 class of the cap or beam above (method ec5)", "C24", _class
    ),
    Column(
        "sill_class",
        "bearing",
        "EN 338 class of the sill or plate below (method ec5)",
        "C24",
        _class,
    ),
)


def ec5_fields(row: dict[str, Any], out: dict[str, Any]) -> dict[str, Any]:
    if row.get("method", "asd") != METHOD_NAMES[EC5]:
        if "class" in row:
            raise RowError(
                "class",
                "class: a strength class needs --method ec5 (NDS ratings use --species and "
                "--grade).",
            )
        return {}
    if "class" not in row:
        raise RowError("class", "class: an EC5 rating needs a strength class, e.g. --class C24.")
    # EN 1995-1-1 has no temperature or incising factor in the checks fieldcheck makes: refused,
    # never ignored (judgement; the NDS Ct and Ci are not EN 1995-1-1 factors)
    if "temperature" in row:
        raise RowError(
            "temperature",
            "temperature: an EC5 rating has no temperature factor here (EN 1995-1-1 covers "
            "temperature through the service class only); leave --temperature out or rate it "
            "with --method asd.",
        )
    if row.get("incised"):
        raise RowError(
            "incised",
            "incised: an EC5 rating has no incising factor here (EN 1995-1-1 gives none); leave "
            "--incised out or rate it with --method asd.",
        )
    name = row["class"]
    f = dict(en338.batch_fields(name))
    out["_e_mpa"] = f["e_mpa"]
    duration = EC5_DURATION[load_duration(row)]
    product = "solid"
    # the service class follows the measured moisture (EN 1995-1-1 §2.3.1.3: class 1 about
    # 12 % or less, class 2 about 20 % or less, class 3 wetter; from memory): a reading wetter
    # than the class chosen uses the wetter class, and the material text says so
    chosen = int(row.get("service_class", 1))
    sc = chosen
    moisture_note = ""
    if "moisture" in row:
        mc = float(row["moisture"])
        by_moisture = 1 if mc <= 12.0 else 2 if mc <= 20.0 else 3
        if by_moisture > chosen:
            sc = by_moisture
            moisture_note = (
                f"; service class {sc}, not {chosen}: measured moisture {mc:g} % "
                "(EN 1995-1-1 §2.3.1.3)"
            )
    f["kmod"] = float(ec5.kmod(sc, duration, product))  # EN 1995-1-1 Table 3.1
    f["gamma_m"] = float(ec5.gamma_m(product))  # EN 1995-1-1 Table 2.3
    f["knowledge"] = 1.0
    for end, col in (("top", "cap_class"), ("bottom", "sill_class")):
        if col in row:
            f[f"{end}_fc_perp_mpa"] = en338.strength_class(row[col])["fc90k_mpa"]
    out["_values_status"] = en338.status(name)
    out["_values_source"] = en338.edition(name)
    out["_material"] = (
        f"{name} ({en338.edition(name)}), k_mod {f['kmod']:.2f} ({duration}, service class "
        f"{sc}), gamma_M {f['gamma_m']}{moisture_note}"
    )
    return f
