"""EN 1995-1-1 Table 3.1 (k_mod) and Table 2.3 (gamma_M), EN 338 classes, visual grades, errors."""

import numpy as np
import pytest

from fieldcheck.engine import ec5, en338
from fieldcheck.engine.batch import GLULAM, TIMBER
from fieldcheck.engine.refdata import table

# EN 1995-1-1 Table 3.1, solid timber / glulam / LVL (EN 1995-1-1 Table 3.1)
KMOD = {
    1: [0.60, 0.70, 0.80, 0.90, 1.10],
    2: [0.60, 0.70, 0.80, 0.90, 1.10],
    3: [0.50, 0.55, 0.65, 0.70, 0.90],
}


@pytest.mark.parametrize("product", ["solid", "glulam", "lvl"])
@pytest.mark.parametrize("sc", [1, 2, 3])
def test_kmod_table_3_1(product, sc):
    # EN 1995-1-1 Table 3.1
    got = ec5.kmod(sc, list(ec5.DURATIONS), product)
    np.testing.assert_array_equal(got, KMOD[sc])


def test_kmod_vectorised_mixed_inputs():
    # EN 1995-1-1 Table 3.1; names forgive case, '_' and spaces; PostBatch product codes accepted
    got = ec5.kmod(
        np.array([1, 3, 2, 3]), ["Medium_Term", "short term", "permanent", "INSTANTANEOUS"], "lvl"
    )
    np.testing.assert_array_equal(got, [0.80, 0.70, 0.60, 0.90])
    got = ec5.kmod(
        3, np.array([2, 4]), np.array([TIMBER, GLULAM])
    )  # duration codes index DURATIONS
    np.testing.assert_array_equal(got, [0.65, 0.90])
    assert ec5.kmod(["1", "SC3"], "long-term").tolist() == [0.70, 0.55]


@pytest.mark.parametrize("product", ["solid", "glulam", "lvl"])
def test_kdef_table_3_2(product):
    # EN 1995-1-1 Table 3.2 (TU Delft open textbook reproduction for solid timber and glulam;
    # LVL from memory): k_def 0.6 / 0.8 / 2.0 in service classes 1 / 2 / 3, glulam as solid
    np.testing.assert_array_equal(ec5.kdef([1, 2, 3], product), [0.6, 0.8, 2.0])
    assert float(ec5.kdef("SC2", GLULAM)) == 0.8


def test_glulam_gamma_m_beta_c_and_kmod():
    # EN 1995-1-1 Table 2.3: gamma_M 1.25 for glued laminated timber (recommended value);
    # §6.3.2 Eq. 6.29: beta_c 0.1 for glulam (0.2 solid); Table 3.1: k_mod as solid timber
    assert float(ec5.gamma_m("glulam")) == 1.25 and float(ec5.beta_c("glulam")) == 0.1
    assert float(ec5.beta_c("solid")) == 0.2
    np.testing.assert_array_equal(
        ec5.kmod(2, list(ec5.DURATIONS), "glulam"), ec5.kmod(2, list(ec5.DURATIONS), "solid")
    )


def test_gamma_m_table_2_3():
    # EN 1995-1-1 Table 2.3 recommended values (EN 1995-1-1 Table 2.3)
    np.testing.assert_array_equal(ec5.gamma_m(["solid", "glulam", "lvl"]), [1.3, 1.25, 1.2])
    np.testing.assert_array_equal(
        ec5.gamma_m(["solid", "glulam", "lvl"], accidental=True), [1.0, 1.0, 1.0]
    )
    assert float(ec5.gamma_m(TIMBER)) == 1.3 and float(ec5.gamma_m(GLULAM)) == 1.25
    rows = {(r["material"], r["combination"]): float(r["gamma_m"]) for r in table("ec5_gamma_m")}
    assert rows[("connections", "fundamental")] == 1.3  # EN 1995-1-1 Table 2.3


def test_compression_design_strength_eq_2_14():
    # EN 1995-1-1 §2.4.1 Eq. 2.14; EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand: 0.8 x
    # 21 / 1.3
    assert float(ec5.compression_design_strength(21.0, 0.8, 1.3)) == pytest.approx(
        12.923077, rel=1e-7
    )


# EN 338:2009 Table 1 as reproduced in the TU Delft open textbook (secondary)
EN338_2009 = [
    ("C16", 17, 2.2, 8000, 5400, 310, 370),
    ("C18", 18, 2.2, 9000, 6000, 320, 380),
    ("C24", 21, 2.5, 11000, 7400, 350, 420),
    ("C30", 23, 2.7, 12000, 8000, 380, 460),
    ("D30", 23, 8.0, 11000, 9200, 530, 640),
    ("D40", 26, 8.3, 13000, 10900, 550, 660),
]
# EN 338:2016 Table 1 (softwood) and Table 3 (hardwood) as reproduced in the Blueprints code
# library (en_338_2016 table_1.py, table_3.py) and the TU Delft open textbook (secondary)
EN338_2016 = [
    ("C14", 16, 2.0, 7000, 4700, 290, 350),
    ("C16", 17, 2.2, 8000, 5400, 310, 370),
    ("C18", 18, 2.2, 9000, 6000, 320, 380),
    ("C20", 19, 2.3, 9500, 6400, 330, 400),
    ("C22", 20, 2.4, 10000, 6700, 340, 410),
    ("C24", 21, 2.5, 11000, 7400, 350, 420),
    ("C27", 22, 2.5, 11500, 7700, 360, 430),
    ("C30", 24, 2.7, 12000, 8000, 380, 460),
    ("C35", 25, 2.7, 13000, 8700, 390, 470),
    ("C40", 27, 2.8, 14000, 9400, 400, 480),
    ("C45", 29, 2.9, 15000, 10100, 410, 490),
    ("C50", 30, 3.0, 16000, 10700, 430, 520),
    ("D18", 18, 4.8, 9500, 8000, 475, 570),
    ("D24", 21, 4.9, 10000, 8400, 485, 580),
    ("D27", 22, 5.1, 10500, 8800, 510, 610),
    ("D30", 24, 5.3, 11000, 9200, 530, 640),
    ("D35", 25, 5.4, 12000, 10100, 540, 650),
    ("D40", 27, 5.5, 13000, 10900, 550, 660),
    ("D45", 29, 5.8, 13500, 11300, 580, 700),
    ("D50", 30, 6.2, 14000, 11800, 620, 740),
    ("D55", 32, 6.6, 15500, 13000, 660, 790),
    ("D60", 33, 10.5, 17000, 14300, 700, 840),
    ("D65", 35, 11.3, 18500, 15500, 750, 900),
    ("D70", 36, 12.0, 20000, 16800, 800, 960),
    ("D75", 37, 12.8, 22000, 18500, 850, 1020),
    ("D80", 38, 13.5, 24000, 20200, 900, 1080),
]
# EN 14080:2013 Table 5, homogeneous glulam, as reproduced in the TU Delft open textbook
# (secondary); GL20h, GL22h, GL26h, GL30h from memory
EN14080_2013 = [
    ("GL20h", 20, 2.5, 8400, 7000, 340, 370),  # from memory
    ("GL22h", 22, 2.5, 10500, 8800, 370, 410),  # from memory
    ("GL24h", 24, 2.5, 11500, 9600, 385, 420),
    ("GL26h", 26, 2.5, 12100, 10100, 405, 445),  # from memory
    ("GL28h", 28, 2.5, 12600, 10500, 425, 460),
    ("GL30h", 30, 2.5, 13600, 11300, 430, 480),  # from memory
    ("GL32h", 32, 2.5, 14200, 11800, 440, 490),
]


def _check_values(cls, edition, fc0k, fc90k, e0mean, e005, rhok, rhomean):
    v = en338.strength_class(cls, edition)
    got = (v["fc0k_mpa"], v["fc90k_mpa"], v["e0mean_mpa"], v["e005_mpa"])
    assert got == (fc0k, fc90k, e0mean, e005), cls
    assert (v["rhok_kgm3"], v["rhomean_kgm3"]) == (rhok, rhomean), cls
    # EN 338 and EN 14080 name each class by its bending strength f_m,k
    assert v["fmk_mpa"] == float("".join(ch for ch in cls if ch.isdigit())), cls


@pytest.mark.parametrize("values", EN338_2009, ids=lambda v: v[0])
def test_en338_2009_classes(values):
    # EN 338:2009 Table 1 (TU Delft open textbook reproduction)
    _check_values(values[0], "EN 338:2009", *values[1:])
    assert en338.edition(values[0], "EN 338:2009") == "EN 338:2009"
    assert en338.status(values[0], "EN 338:2009") == "secondary"


@pytest.mark.parametrize("values", EN338_2016, ids=lambda v: v[0])
def test_en338_2016_classes_are_the_default(values):
    # EN 338:2016 Tables 1 and 3 (Blueprints and TU Delft reproductions)
    _check_values(values[0], None, *values[1:])
    assert en338.edition(values[0]) == "EN 338:2016"
    assert set(en338.value_status(values[0]).values()) == {"secondary"}


@pytest.mark.parametrize("values", EN14080_2013, ids=lambda v: v[0])
def test_en14080_glulam_classes(values):
    # EN 14080:2013 Table 5 (GL24h, GL28h, GL32h: TU Delft reproduction; the others from memory)
    _check_values(values[0], None, *values[1:])
    assert en338.edition(values[0]) == "EN 14080:2013" and en338.is_glulam(values[0])
    want = "secondary" if values[0] in ("GL24h", "GL28h", "GL32h") else "memory"
    assert en338.status(values[0]) == want


def test_hardwood_fc90k_differs_between_editions():
    # EN 338:2016 Table 3 lowered the D-class f_c,90,k (D30 5.3, D40 5.5) from EN 338:2009
    # Table 1 (D30 8.0, D40 8.3): the edition matters for bearing on a hardwood sill
    for cls, new, old in (("D30", 5.3, 8.0), ("D40", 5.5, 8.3)):
        assert en338.strength_class(cls)["fc90k_mpa"] == new
        assert en338.strength_class(cls, "EN 338:2009")["fc90k_mpa"] == old


def test_every_value_has_a_status_and_row_status_is_the_weakest():
    # DEVELOPERS.md "Adding a reference table": per-value status read / secondary / memory
    rank = {"memory": 0, "secondary": 1, "read": 2}
    for r in en338.rows():
        assert set(r["statuses"].values()) <= set(rank), r["class"]
        assert r["status"] == min(r["statuses"].values(), key=rank.get), r["class"]
    # a class recalled rather than read says so per value
    st = en338.value_status("C35", "EN 338:2009")
    assert st["fc0k_mpa"] == "memory" and st["fmk_mpa"] == "secondary"


def test_edition_names_and_refusals():
    assert en338.edition_name(" 2009 ") == "EN 338:2009"
    assert en338.edition_name("EN 338:2016") == "EN 338:2016"
    with pytest.raises(ValueError, match=r"^en338_edition: '2003' is not") as exc:
        en338.edition_name("2003")
    _one_sentence(str(exc.value))
    # D27 first appears in EN 338:2016: with 2009 chosen, one sentence names the edition holding it
    with pytest.raises(ValueError, match="D27 is not in EN 338:2009") as exc:
        en338.strength_class("D27", "EN 338:2009")
    _one_sentence(str(exc.value))
    # a glulam class takes EN 14080:2013 whatever the EN 338 edition
    assert en338.strength_class("GL24h", "EN 338:2009") == en338.strength_class("gl24H")


def test_en338_lookup_forgiving_and_fields():
    assert en338.strength_class(" c24 ") == en338.strength_class("C24")
    assert en338.batch_fields("C24") == {
        "fc_mpa": 21.0,
        "fc_perp_mpa": 2.5,
        "fb_mpa": 24.0,
        "e_mpa": 11000.0,
        "emin_mpa": 7400.0,
        "strength_row": en338.row_code("C24", "EN 338:2016"),
    }
    assert en338.is_softwood("C16") and not en338.is_softwood("D40")
    assert en338.is_softwood("GL24h")
    assert {"C14", "C35", "C50", "D30", "D40", "D80", "GL20h", "GL32h"} <= set(en338.class_names())


def test_reference_tables_carry_source_edition_status():
    # DEVELOPERS.md "Adding a reference table"
    for name in (
        "en338_classes",
        "en14080_glulam",
        "ec5_kmod",
        "ec5_kdef",
        "ec5_gamma_m",
        "visual_grade_to_class",
    ):
        rows = table(name)
        assert rows, name
        for r in rows:
            assert r["source"] and r["edition"], (name, r)
            assert r["status"] in {"read", "secondary", "memory"}, (name, r)


def test_visual_grade_options_are_choices_for_the_user():
    # EN 1912-style assignments, from memory; every class offered exists in en338_classes
    ss = en338.grade_options("ss")
    assert {r["strength_class"] for r in ss} >= {"C24"}
    assert all(r["status"] == "memory" for r in en338.grade_options())
    for r in en338.grade_options():
        en338.strength_class(r["strength_class"])
    assert {r["strength_class"] for r in en338.grade_options("T3")} == {"C30"}


# --- error sentences ------------------------------------------------------------------------


def _one_sentence(msg: str) -> None:
    assert "\n" not in msg and msg.endswith(".") and ". " not in msg, msg


@pytest.mark.parametrize("bad", [4, 0, "4", "SC4", 1.5, "wet"])
def test_service_class_error(bad):
    with pytest.raises(ValueError, match=r"^service class must be 1, 2 or 3") as exc:
        ec5.kmod(bad, "medium-term")
    _one_sentence(str(exc.value))
    assert "--service-class 1" in str(exc.value)


@pytest.mark.parametrize("bad", ["weekly", "short", "", 5, -1])
def test_duration_error(bad):
    with pytest.raises(ValueError, match=r"load-duration class") as exc:
        ec5.kmod(1, bad)
    msg = str(exc.value)
    _one_sentence(msg)
    for name in ec5.DURATIONS:
        assert name in msg


def test_duration_error_reports_first_bad_value_in_an_array():
    with pytest.raises(ValueError, match="got 'fortnight'"):
        ec5.kmod([1, 1], ["medium-term", "fortnight"])


@pytest.mark.parametrize("bad", ["C25", "GL24c", "", "T2"])
def test_strength_class_error(bad):
    with pytest.raises(ValueError, match=r"^strength class must be one of C14, C16") as exc:
        en338.strength_class(bad)
    _one_sentence(str(exc.value))
    assert "D40" in str(exc.value) and "GL24h" in str(exc.value) and "--class C24" in str(exc.value)


@pytest.mark.parametrize("bad", ["plywood", 9, -1])
def test_product_error(bad):
    with pytest.raises(ValueError, match=r"^product must be") as exc:
        ec5.gamma_m(bad)
    _one_sentence(str(exc.value))
