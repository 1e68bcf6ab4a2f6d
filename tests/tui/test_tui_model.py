"""The interface's logic without a screen: the form's order and labels, defect kinds, remedy
words and ranking, the ratio bar, precision, sync words, no command-line syntax."""

from __future__ import annotations

from types import SimpleNamespace

from fieldcheck.records import COLUMNS
from fieldcheck.tui import form, present, remedy_words


def test_every_column_has_one_place_and_the_form_goes_in_inspector_order():
    lay = form.layout(COLUMNS)
    defects = form.defect_columns(COLUMNS)
    placed = [c.name for common, more in lay.values() for c in common + more]
    placed += [c.name for cols in defects.values() for c in cols]
    assert sorted(placed) == sorted(COLUMNS)  # each registry column exactly once
    order = [s[0] for s in form.SECTIONS]
    # where/what; section; the two ends; material; what is seen; the load  # issue order
    assert order[:6] == ["where", "section", "ends", "material", "seen", "load"]
    common = [c.name for sid in order for c in lay[sid][0]]
    assert common.index("tag") < common.index("size") < common.index("top")
    assert common.index("top") < common.index("species") < common.index("load")


def test_defects_are_added_by_kind_and_ask_only_their_own_fields():
    defects = form.defect_columns(COLUMNS)
    for kind in ("decay", "knot", "split", "bow", "notch", "crushing"):
        assert kind in defects
        assert 1 <= len(defects[kind]) <= 6
    assert [c.name for c in defects["bow"]] == ["bow_weak", "bow_strong"]
    assert form.defect_kind("b", defects) == "bow"
    assert form.defect_kind("de", defects) == "decay"
    assert form.defect_kind("cr", defects) == "crushing"  # a common kind before "char"
    assert form.defect_kind("x", defects) is None


def test_labels_fit_and_fixed_choices_show_in_place():
    for name in COLUMNS:
        assert len(form.label(name)) <= form.LABEL_WIDTH, name
    top = COLUMNS["top"]
    assert "pinned" in form.choices_text(top) and "guided" in form.choices_text(top)
    assert form.choices_text(COLUMNS["construction"]) == "yes · no"


def test_no_command_line_syntax_reaches_the_interface():
    for col in COLUMNS.values():
        assert "--" not in form.plain(col.help), col.name
    assert present.plain("give --rain-duration too") == "give rain duration too"


def test_ratio_bar_tells_079_from_089_at_the_narrowest():
    for width in (8, 12, 20, 30):
        a, b = present.ratio_bar(0.79, width), present.ratio_bar(0.89, width)
        assert a.split("]")[0] != b.split("]")[0], width  # the bars themselves differ
    assert "0.79" in present.ratio_bar(0.79) and "near limit" in present.ratio_bar(0.89)


def test_working_values_keep_three_or_four_significant_figures():
    assert present.sig_text("2757.903 MPa (400,000.0 psi)") == "2,758 MPa (400,000 psi)"
    assert present.sig_text("Cp = 0.871659") == "Cp = 0.8717"
    assert present.sig_text("NDS 2018 §3.7.1") == "NDS 2018 §3.7.1"  # clauses untouched
    # a standard's number is a name (common practice, no source): never '14,081'
    for name in ("C24, solid timber (EN 14081-1)", "GL24h (EN 14080)", "EN 14080:2013 Table 5"):
        assert present.sig_text(name) == name
    assert present.sig_text("24 CFR 3285.202(e)") == "24 CFR 3285.202(e)"
    assert present.sig(12.34567) == "12.35"


def test_from_memory_is_said_in_the_working():
    from fieldcheck.engine import explain
    from fieldcheck.engine.rating import rate
    from fieldcheck.records import parse_records

    # each NDS reference value carries its status in the working (the table's status columns):
    # DF-L No.2 Beams and Stringers values are from memory, DF-L No.2 dimension values secondary
    for size, note in (("6x10", " (from memory)"), ("4x4", " (secondary)")):
        rec = {"size": size, "species": "douglas-fir-larch", "grade": "no2", "height": "8ft"}
        steps = explain.working(rate(parse_records([rec]).batch), 0)
        fc = next(s for s in steps if s.label == "Reference Fc")
        assert fc.value.endswith(note)
    rec = {"species": "douglas-fir-larch", "grade": "no2"}
    assert present.memory_note("d_eff", "NDS 2018 §3.6.3 [M]", rec) == " (from memory)"
    assert present.memory_note("le/d", "NDS 2018 §3.7.1.3", rec) == ""


def test_load_missing_is_not_rated_and_eurocode_heads_in_kN():
    summary = {"allowable_load_kN": 50.0, "demand_kN": None, "action": "no-action", "checks": []}
    lines = present.head_lines(summary, "us", 60, "status")
    assert "not rated: load missing" in lines[1] and "no action" not in lines[1]
    summary = {
        "allowable_load_kN": 50.0,
        "demand_kN": 20.0,
        "demand_capacity_ratio": 0.4,
        "action": "no-action",
        "checks": [],
    }
    lines = present.head_lines(summary, "us", 60, "status", ec5=True)
    assert lines[2].startswith("N_Rd") and "50 kN (" in lines[2]  # kN first
    assert present.head_lines(None, "us", 60, "✖ NOT RATED")[2].endswith("—")  # nothing old


def test_remedies_in_the_inspectors_words_and_no_margin_last():
    rems = [
        {"kind": "plate", "ratio": 0.99, "record_changes": {"plate": "140 mm"}},
        {"kind": "brace-weak", "ratio": 0.72, "record_changes": {"brace_weak": "1219 mm"}},
        {"kind": "second-post", "ratio": 0.6, "record_changes": {"shared_by": "2"}},
    ]
    ranked = remedy_words.ranked(rems)
    assert [r["kind"] for r in ranked] == ["brace-weak", "second-post", "plate"]
    assert remedy_words.words(rems[1], "us") == "brace at mid-height on the weak axis (4' 0\" up)"
    plate = remedy_words.words(rems[0], "us", width_mm=139.7)
    x = "\u00d7"  # the multiplication sign
    assert plate == f"bear on a steel plate 6 {x} 6 {x} 1/2 in at the cap and the sill"
    assert remedy_words.words(rems[2]).startswith("add a post beside it")
    assert "no margin" in remedy_words.line(rems[0])
    replace = {"kind": "replace", "record_changes": {"size": "8x8", "species": "hem-fir"}}
    assert remedy_words.words(replace) == "replace it with a new 8x8 hem-fir post"
    for r in rems:  # never a dump of internal fields
        assert "=" not in remedy_words.line(r) and "_" not in remedy_words.line(r)


def test_sync_summary_in_the_inspectors_words():
    result = SimpleNamespace(
        sent={"members": 2, "observations": 5, "visits": 1, "ratings": 5, "engine_stamps": 1},
        received={"reviews": 1},
        conflicts=[],
        refused=[],
    )
    s = present.sync_sentence(result)
    assert s == "Sent 1 visit, 2 new posts, 5 post records; took back 1 office note."
    assert "ratings" not in s and "observations" not in s
    quiet = SimpleNamespace(sent={}, received={}, conflicts=[], refused=[])
    assert "nothing to send" in present.sync_sentence(quiet)


def test_a_key_means_one_thing_on_every_screen():
    # F5 was Reload on one screen and Remedies on another; "New visit" / "New post" is one
    # meaning (new, of what the screen lists): compared by the description's first word
    from fieldcheck.tui.app import FieldcheckApp
    from fieldcheck.tui.editor import PostEditor
    from fieldcheck.tui.office import OfficeScreen
    from fieldcheck.tui.sites import SitesScreen
    from fieldcheck.tui.visit import VisitScreen

    meaning: dict[str, tuple[str, str]] = {}
    for cls in (FieldcheckApp, SitesScreen, VisitScreen, PostEditor, OfficeScreen):
        for b in cls.BINDINGS:
            if not b.description:
                continue
            first = b.description.split()[0]
            for key in b.key.split(","):
                seen = meaning.setdefault(key.strip(), (first, cls.__name__))
                assert seen[0] == first, (key, seen, cls.__name__, b.description)
    assert meaning["f5"][0] == "Remedies" and meaning["ctrl+l"][0] == "Reload"


def test_tab_names_carry_the_keys_that_open_them():
    from fieldcheck.tui.editor import PostEditor

    keys = {b.action: b.key for b in PostEditor.BINDINGS if b.action.startswith("tab(")}
    names = {b.action: b.description for b in PostEditor.BINDINGS if b.action.startswith("tab(")}
    assert len(keys) == 5
    for action, key in keys.items():
        assert key.startswith("f") and names[action]


def test_a_check_with_no_ratio_is_never_ticked():
    # a post with no load is not rated: its checks have no ratio, and a tick would read as safe
    checks = [
        {"label": "column buckling and crushing", "clause": "NDS 2018 §3.7.1", "ratio": None},
        {"label": "bearing", "clause": "NDS 2018 §3.10.1", "ratio": float("nan")},
        {"label": "bending", "clause": "NDS 2018 §3.9.2", "ratio": 0.5},
        {"label": "net section", "clause": "NDS 2018 §3.1.2", "ratio": 1.2},
    ]
    lines = present.check_lines({"checks": checks})[1:]
    assert [ln.split()[0] for ln in lines] == ["?", "?", "✓", "✖"]


def test_a_soil_check_on_a_pad_of_unknown_thickness_is_never_ticked():
    # judgement (engine/ground.py): a pad with no thickness is taken as rigid and the soil check
    # is not relied on (the action is raised to repair); a tick beside it would read as safe
    from fieldcheck.engine import explain
    from fieldcheck.records import rate_records

    post = {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2", "load": "4kip"}
    post |= {"pad": "2ft x 2ft", "soil": "clay"}
    r, _ = rate_records([post, {**post, "pad_thickness": "12in"}])  # spreads over the pad
    rigid, given = explain.summary(r, 0), explain.summary(r, 1)
    assert rigid["ground"]["soil_check"].startswith("not relied on")
    assert given["ground"]["soil_check"] == "verified"
    assert rigid["action"] == "repair-or-brace"
    soil = [ln for ln in present.check_lines(rigid) if "soil" in ln]
    assert soil and soil[0].split()[0] == "?" and "pad thickness not given" in soil[0]
    soil = [ln for ln in present.check_lines(given) if "soil" in ln]
    assert soil and soil[0].split()[0] == "✓"


def test_an_empty_field_with_a_default_says_it_is_the_default():
    # "1/2 in" alone in an empty field read as a value typed; the hint says "(default)"
    row = form.field_row(COLUMNS["decay_margin"], "")
    field = row._pending_children[1]
    assert field.placeholder == "1/2 in (default)" and field.value == ""


def test_a_eurocode_post_is_enterable_from_the_form_edition_and_glulam_included():
    from fieldcheck.engine import explain
    from fieldcheck.engine.rating import rate
    from fieldcheck.records import parse_records

    common, more = form.layout(COLUMNS)["material"]
    names = [c.name for c in common + more]
    # the EC5 fields sit together under the material section
    assert names.index("class") + 1 == names.index("en338_edition")
    assert names.index("en338_edition") + 1 == names.index("service_class")
    assert form.label("en338_edition") == "EN 338 edition"
    # its choices in place, the default first: EN 338:2016 is the current edition, 2009 the one
    # it replaced (EN 338:2016 foreword)
    assert form.choices_text(COLUMNS["en338_edition"]) == "2016 (default) · 2009"
    assert form.field_input(COLUMNS["en338_edition"], "").choices == ("2016", "2009")
    # the strength-class field names the glulam classes of EN 14080:2013 too
    hint = form.field_input(COLUMNS["class"], "").placeholder
    assert "C14 to C50" in hint and "GL20h to GL32h" in hint
    # what the form holds (field name -> text) rates with the edition chosen
    post = {"section": "150x150mm", "height": "3m", "method": "ec5", "load": "40kN"}
    for cls, edition, named in (
        ("C18", "2009", "EN 338:2009"),
        ("C18", "", "EN 338:2016"),  # left empty: the default edition
        ("GL24h", "", "EN 14080:2013"),
    ):
        rec = {**post, "class": cls, **({"en338_edition": edition} if edition else {})}
        parsed = parse_records([rec])
        assert not parsed.errors
        summary = explain.summary(rate(parsed.batch), 0, with_remedies=False)
        assert (summary["strength_class"], summary["strength_class_edition"]) == (cls, named)
    # a glulam class with an EN 338 edition is refused at the edition field, in one sentence
    parsed = parse_records([{**post, "class": "GL24h", "en338_edition": "2016"}])
    assert [e.column for e in parsed.errors] == ["en338_edition"]


def test_each_check_names_its_governing_combination_where_loads_are_combined():
    # every ASCE 7 combination is rated for every check (ASCE 7-16 §2.4.1, NDS 2018 §2.3.2):
    # 4x4 DF-L No.2, 11 ft, 45 sq ft of 55 psf dead and 20 psf roof live: D+Lr (CD 1.25) governs
    # the column, D alone (CD 0.9) the end grain (computed by hand: 2,475 / (1,350 x 0.9 x 1.15
    # x 12.25) = 0.145 > 3,375 / (1,350 x 1.25 x 1.15 x 12.25) = 0.142); a load given directly
    # names no combination
    from fieldcheck.engine import explain
    from fieldcheck.records import rate_records

    post = {"size": "4x4", "height": "11ft", "species": "dfl", "grade": "no2"}
    r, _ = rate_records(
        [
            {**post, "tributary": "45sqft", "dead": "55psf", "roof_live": "20psf"},
            {**post, "load": "2kip"},
        ]
    )
    lines = present.check_lines(explain.summary(r, 0))
    assert "combination" in lines[0]
    column = next(ln for ln in lines if "column buckling" in ln)
    end = next(ln for ln in lines if "end-grain" in ln)
    assert "; under D+Lr)" in column and "; under D)" in end
    lines = present.check_lines(explain.summary(r, 1))
    assert "combination" not in lines[0] and "under" not in "".join(lines)


def test_the_list_shows_an_office_override_in_force_beside_the_rating():
    # judgement: the engineer's raised action leads the post's row, and the rating as found on
    # site stays in view beside it (never overwritten)
    from fieldcheck.tui.visit import action_cell

    def post(label, office=None):
        return SimpleNamespace(
            action_label=label, capacity_n=1.0, demand_n=1.0, office_action=office
        )

    cell = action_cell(post("monitor", 3))
    assert cell.startswith(present.action_word("make-safe-now"))
    assert "office" in cell and present.action_word("monitor") in cell
    assert action_cell(post("monitor")) == present.action_word("monitor")
