"""Columns and builder for EN 1995-1-1 ratings: strength class, service class, duration class."""

from __future__ import annotations

from typing import Any

from fieldcheck.engine import ec5, en338
from fieldcheck.engine.batch import EC5, GLULAM, METHOD_NAMES
from fieldcheck.records.builders import load_duration
from fieldcheck.records.core_columns import Column
from fieldcheck.row_error import RowError

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
    key = s.strip().upper().replace(" ", "")
    names = {n.upper(): n for n in en338.class_names()}
    if key not in names:
        raise ValueError(
            f"class: '{s}' is not an EN 338 or EN 14080 strength class we hold; use one of "
            f"{', '.join(en338.class_names())}."
        )
    return names[key]  # as the standard writes it (C24, GL24h)


def _end_class(s: str) -> str | None:
    """The class of a cap or sill, or None where it is stated none (not wood: steel, concrete)."""
    return None if s.strip().lower() in ("none", "no", "-") else _class(s)


def _edition(s: str) -> str:
    return en338.edition_name(s)


def _service(s: str) -> int:
    t = s.strip().upper().removeprefix("SC")
    if t not in ("1", "2", "3"):
        raise ValueError(
            f"service_class: '{s}' is not a service class; use 1, 2 or 3 (EN 1995-1-1 §2.3.1.3)."
        )
    return int(t)


COLUMNS: tuple[Column, ...] = (
    Column(
        "class",
        "material",
        "EN 338 strength class, or EN 14080 glulam class GL20h to GL32h (method ec5)",
        "C24",
        _class,
    ),
    Column(
        "en338_edition",
        "material",
        "edition of the EN 338 values: 2016 (the default) or 2009 (method ec5)",
        "2016",
        _edition,
        "2016",
        ("2016", "2009"),  # the editions held (en338.EDITIONS), shown as choices in the form
    ),
    Column(
        "service_class",
        "material",
        "EN 1995-1-1 service class 1, 2 or 3 (method ec5)",
        "1",
        _service,
        "1",
    ),
    Column(
        "cap_class",
        "bearing",
        "EN 338 class of the cap or beam above (method ec5), or none",
        "C24",
        _end_class,
    ),
    Column(
        "sill_class",
        "bearing",
        "EN 338 class of the sill or plate below (method ec5), or none",
        "C24",
        _end_class,
    ),
)


# the NDS material inputs an EC5 record refuses, and what to give instead
NDS_MATERIAL = {
    "species": "an EC5 rating takes its material from --class (an EN 338 or EN 14080 class), "
    "not an NDS species; leave --species out.",
    "grade": "an EC5 rating takes its material from --class (an EN 338 or EN 14080 class), "
    "not an NDS grade; leave --grade out.",
    "cap_species": "an NDS species gives no EN 338 f_c,90,k for the cap (its Fc-perp is not "
    "on the same basis); give the cap's strength class with --cap-class, e.g. C16.",
    "sill_species": "an NDS species gives no EN 338 f_c,90,k for the sill (its Fc-perp is "
    "not on the same basis); give the sill's strength class with --sill-class, e.g. C16.",
}


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
    # NDS material inputs are refused, never ignored or misused: an NDS reference Fc-perp is not
    # an EN 338 f_c,90,k (judgement: not the same basis), and a strength class is a material known
    for col, say in NDS_MATERIAL.items():
        if col in row and row[col] not in ("unknown", None):  # None: a cap or sill of none
            raise RowError(col, f"{col}: {say}")
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
    glulam = en338.is_glulam(name)
    if glulam and "en338_edition" in row:
        raise RowError(
            "en338_edition",
            f"en338_edition: {name} is a glulam class of EN 14080:2013, not of EN 338; leave "
            "--en338-edition out.",
        )
    edition = row.get("en338_edition", en338.DEFAULT_EDITION)
    try:
        f = dict(en338.batch_fields(name, edition))
    except ValueError as e:
        raise RowError("class", f"class: {e}") from None
    bearing = {}  # end -> the row of the cap or sill class
    for end, col in (("top", "cap_class"), ("bottom", "sill_class")):
        if col in row and row[col] is None:  # stated none: not wood (steel, concrete)
            f[f"{end}_not_wood"] = True
        elif col in row:
            try:
                bearing[end] = en338.row(en338.row_code(row[col], edition))
            except ValueError as e:
                raise RowError(col, f"{col}: {e}") from None
    out["_e_mpa"] = f["e_mpa"]
    duration = EC5_DURATION[load_duration(row)]
    # EN 14080 classes are glued laminated timber: gamma_M 1.25 (EN 1995-1-1 Table 2.3,
    # recommended value; a National Annex may set another), beta_c 0.1 (§6.3.2 Eq. 6.29) and the
    # glulam rows of k_mod (Table 3.1), through the PostBatch product
    product = "glulam" if glulam else "solid"
    if glulam:
        f["product"] = GLULAM
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
    bearing_note = ""
    for end, r in bearing.items():
        f[f"{end}_fc_perp_mpa"] = r["values"]["fc90k_mpa"]  # f_c,90,k of the cap or sill
        bearing_note += (
            f"; {'cap' if end == 'top' else 'sill'} {r['class']} ({r['edition']}, f_c,90,k "
            f"{r['values']['fc90k_mpa']:g} MPa {r['statuses']['fc90k_mpa']})"
        )
    held = en338.row(f["strength_row"])
    out["_service_class"] = sc  # the class used (EN 1995-1-1 §2.3.1.3), for the report
    out["_values_status"] = held["status"]
    out["_values_source"] = held["edition"]
    out["_material"] = (
        f"{name} ({held['edition']}, values {_statuses(held)}), k_mod {f['kmod']:.2f} "
        f"({duration}, service class {sc}), \u03b3_M {f['gamma_m']}{moisture_note}{bearing_note}"
    )
    return f


def _statuses(held: dict) -> str:
    """'secondary' when every value has one status, else each value's: 'f_c,0,k secondary, ...'."""
    st = held["statuses"]
    if len(set(st.values())) == 1:
        return next(iter(st.values()))
    return ", ".join(f"{SYMBOLS[c]} {s}" for c, s in st.items() if c in SYMBOLS)


# the values the EC5 checks use, as EN 338 writes them
SYMBOLS = {k: v for k, v in en338.SYMBOLS.items() if not k.startswith("rho")}
