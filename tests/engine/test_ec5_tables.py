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


def test_gamma_m_table_2_3():
    # EN 1995-1-1 Table 2.3 recommended values (EN 1995-1-1 Table 2.3)
    np.testing.assert_array_equal(ec5.gamma_m(["solid", "glulam", "lvl"]), [1.3, 1.25, 1.2])
    np.testing.assert_array_equal(
        ec5.gamma_m(["solid", "glulam", "lvl"], accidental=True), [1.0, 1.0, 1.0]
    )
    assert float(ec5.gamma_m(TIMBER)) == 1.3 and float(ec5.gamma_m(GLULAM)) == 1.25
    rows = {(r["material"], r["combination"]): float(r["gamma_m"]) for r in table("ec5_gamma_m")}
    assert rows[("connections", "fundamental")] == 1.3  # EN 1995-1-1 Table 2.3


def test_compression_design_strength_eq_2_17():
    # EN 1995-1-1 §2.4.1 Eq. 2.17; EN 1995-1-1 §6.3.2, C24 100 x 100 mm 3 m, computed by hand: 0.8 x
    # 21 / 1.3
    assert float(ec5.compression_design_strength(21.0, 0.8, 1.3)) == pytest.approx(
        12.923077, rel=1e-7
    )


@pytest.mark.parametrize(
    ("cls", "fc0k", "fc90k", "e0mean", "e005", "rhok", "rhomean"),
    [
        # EN 338:2009 (EN 338:2009 as reproduced in the TU Delft open textbook)
        ("C16", 17, 2.2, 8000, 5400, 310, 370),
        ("C18", 18, 2.2, 9000, 6000, 320, 380),
        ("C24", 21, 2.5, 11000, 7400, 350, 420),
        ("C30", 23, 2.7, 12000, 8000, 380, 460),
        ("D30", 23, 8.0, 11000, 9200, 530, 640),
        ("D40", 26, 8.3, 13000, 10900, 550, 660),
    ],
)
def test_en338_classes(cls, fc0k, fc90k, e0mean, e005, rhok, rhomean):
    v = en338.strength_class(cls)
    assert (v["fc0k_mpa"], v["fc90k_mpa"], v["e0mean_mpa"], v["e005_mpa"]) == (
        fc0k,
        fc90k,
        e0mean,
        e005,
    )
    assert (v["rhok_kgm3"], v["rhomean_kgm3"]) == (rhok, rhomean)
    assert v["fmk_mpa"] == float(cls[1:])  # EN 338: the class is named by f_m,k
    assert en338.edition(cls) == "EN 338:2009"


def test_en338_lookup_forgiving_and_fields():
    assert en338.strength_class(" c24 ") == en338.strength_class("C24")
    assert en338.batch_fields("C24") == {
        "fc_mpa": 21.0,
        "fc_perp_mpa": 2.5,
        "fb_mpa": 24.0,
        "e_mpa": 11000.0,
        "emin_mpa": 7400.0,
    }
    assert en338.is_softwood("C16") and not en338.is_softwood("D40")
    assert {"C14", "C16", "C18", "C20", "C22", "C24", "C27", "C30", "D30", "D40"} <= set(
        en338.class_names()
    )


def test_reference_tables_carry_source_edition_status():
    # DEVELOPERS.md "Adding a reference table"
    for name in ("en338_classes", "ec5_kmod", "ec5_gamma_m", "visual_grade_to_class"):
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


@pytest.mark.parametrize("bad", ["C25", "GL24h", "", "T2"])
def test_strength_class_error(bad):
    with pytest.raises(ValueError, match=r"^strength class must be one of C14, C16") as exc:
        en338.strength_class(bad)
    _one_sentence(str(exc.value))
    assert "D40" in str(exc.value) and "--class C24" in str(exc.value)


@pytest.mark.parametrize("bad", ["plywood", 9, -1])
def test_product_error(bad):
    with pytest.raises(ValueError, match=r"^product must be") as exc:
        ec5.gamma_m(bad)
    _one_sentence(str(exc.value))
