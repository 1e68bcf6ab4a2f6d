"""The interface driven with Textual's Pilot, part two: a remedy proposed and later recorded as
done and a photo attached, conflicts from a real two-log sync, defects added by kind, the working
and the plot, the footer at 80 x 24 and units, and the rating on screen at 60 x 20, 80 x 24 and
120 x 40. Each test starts the app once and checks what only the screen shows; the logic behind
it is tested headless (tests/tui/test_tui_model.py, tests/store)."""

from __future__ import annotations

from textual.widgets import DataTable, Footer, Input, Static

from fieldcheck.tui import present


async def test_a_remedy_is_a_proposal_and_the_post_stays_rated_as_found(db, ui, tmp_path) -> None:
    from PIL import Image

    photo = tmp_path / "sill.jpg"
    Image.new("RGB", (64, 48), (120, 90, 60)).save(photo)
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.open_post(app, pilot, "B3")  # bowed, over-loaded  # store/demo.py
        editor = app.screen
        found = dict(editor.saved_record)
        ratio = editor.summary["demand_capacity_ratio"]
        assert ratio > 1.0 and editor.summary["remedies"]
        await pilot.press("f5")
        await ui.settle(app, pilot)
        listed = editor.query_one("#remedy-list")
        assert listed.option_count == len(editor.summary["remedies"])
        first = str(listed.get_option_at_index(0).prompt)
        assert "=" not in first and "_" not in first  # the inspector's words, no field dump
        await pilot.press("enter")  # propose the highlighted one
        await ui.settle(app, pilot)
        member = editor.member_id
        hist = await app.store.call(lambda log: log.history(member))
        assert len(hist) == 1 and hist[0].record == found  # the post as found, untouched
        assert editor.saved_record == found and editor.summary["demand_capacity_ratio"] == ratio
        state = await app.store.call(lambda log: log.remedy_states()[member])
        assert state.state == "proposed" and state.proposals[0].description in first
        assert "Proposed" in ui.text(app, "#remedy-help")
        assert "remedy proposed" in str(editor.query_one("#editor-title", Static).content)
        # the list shows it as found, with the proposal
        await pilot.press("escape")
        await ui.settle(app, pilot)
        table = app.screen.query_one("#posts", DataTable)
        row = next(
            table.get_row_at(i) for i in range(table.row_count) if table.get_row_at(i)[0] == "B3"
        )
        assert "remedy proposed" in str(row[2])
        assert "1 proposed" in ui.text(app, "#visit-status")
        # the work is done: record it as remedied, with the date
        await pilot.press("o")
        await ui.settle(app, pilot, 0.2)
        editor = app.screen
        await pilot.press("ctrl+o")
        await ui.settle(app, pilot)
        assert type(app.screen).__name__ == "RemedyDoneDialog"
        date = app.screen.query_one("#done-on", Input)
        date.value = "2026-03-14"
        await pilot.press("enter")
        await ui.settle(app, pilot, 0.2)
        hist = await app.store.call(lambda log: log.history(member))
        assert len(hist) == 2 and hist[0].record == found  # as found kept; as remedied added
        state = await app.store.call(lambda log: log.remedy_states()[member])
        assert state.state == "as remedied" and state.done_on == "2026-03-14"
        assert editor.summary["demand_capacity_ratio"] <= 1.0  # the remedied post passes
        assert "as remedied 2026-03-14" in str(editor.query_one("#editor-title", Static).content)
        # ctrl+t: a photo of the saved post (asked again while the path is not a file)
        await pilot.press("ctrl+t")
        await ui.settle(app, pilot)
        assert type(app.screen).__name__ == "PhotoDialog"
        app.screen.query_one("#photo-path", Input).value = str(tmp_path / "missing.jpg")
        await pilot.press("enter")
        await ui.settle(app, pilot)
        assert type(app.screen).__name__ == "PhotoDialog"  # not a file: asked again, kept open
        app.screen.query_one("#photo-path", Input).value = str(photo)
        await pilot.press("enter")
        await ui.settle(app, pilot)
        app.screen.query_one("#photo-caption", Input).value = "decay at the sill"
        await pilot.press("enter")
        await ui.settle(app, pilot, 0.2)
        assert app.screen is editor
        atts = await app.store.call(lambda log: log.attachments(member))
        assert [a.caption for a in atts] == ["decay at the sill"]
        assert len(atts[0].sha256) == 64  # SHA-256 of the file, hex


async def test_conflicts_screen_lists_a_post_revised_in_two_places(own_log, tmp_path, ui) -> None:
    from fieldcheck.store import Log
    from fieldcheck.store.demo import demo_rows
    from fieldcheck.store.sync import sync

    office = tmp_path / "office.fieldcheck"
    own_log.parent.mkdir(parents=True)
    field = Log.open(own_log)
    site = field.add_site("9 Birch Lane")
    visit = field.add_visit(site.id, "J. Ortiz")
    row = demo_rows()[0]
    row.pop("visit")
    post = field.save_post(visit.id, row)
    sync(field, office)
    with Log.open(office) as other:  # the office revises B1 ...
        other.save_post(visit.id, {**row, "notes": "office: re-measured"}, post.member_id)
    # ... and so does the field, without seeing it; the next sync brings both together
    field.save_post(visit.id, {**row, "notes": "field: shimmed at the top"}, post.member_id)
    sync(field, office)
    assert field.conflicts() == [post.member_id]  # store/sync.py: kept, never resolved silently
    field.close()

    app = ui.app(own_log, demo=False)
    async with app.run_test(size=(100, 30)) as pilot:
        await ui.settle(app, pilot)
        assert "⚡ 1 conflict" in ui.text(app, "#sites-status")
        await pilot.press("f7")
        await ui.settle(app, pilot)
        listing = ui.text(app, "#conflicts-list")
        assert "⚡ 1 post" in listing and "B1" in listing and "3 revisions" in listing


async def test_defects_are_added_by_kind_and_validate_like_the_rest(db, ui) -> None:
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.open_visit(app, pilot)
        await pilot.press("ctrl+n")
        await ui.settle(app, pilot)
        editor = app.screen
        for name, value in (("size", "4x4"), ("height", "8ft"), ("load", "2000 lbf")):
            editor.query_one(f"#f-{name}", Input).value = value
        await ui.settle(app, pilot)
        assert not editor.stale and editor.summary is not None
        assert not editor.query("#f-decay_wide")  # no defect fields until a defect is added
        editor.set_focus(editor.query_one("#add-defect", Input))
        ui.burst(app, [*"dec", "enter", *"lots"])
        await ui.drain(app, pilot)
        decay = editor.query_one("#f-decay_wide", Input)
        assert decay.value == "lots" and app.focused is decay
        assert [c.name for c in editor.query_one("#d-decay").columns][:3] == [
            "decay_wide",
            "decay_narrow",
            "decay_at",
        ]
        msg = str(editor.query_one("#m-decay_wide", Static).content)
        assert "decay" in msg.lower() and decay.has_class("-bad")
        assert "NOT RATED" in ui.text(app, "#rating-head")
        assert editor.query_one("#f-size", Input).value == "4x4"  # the rest kept
        await pilot.press("ctrl+z")
        await ui.settle(app, pilot)
        assert decay.value == "" and "decay_wide" not in editor.errors and not editor.stale


async def test_working_and_plot_agree_with_the_rating(db, ui) -> None:
    from fieldcheck.engine import explain
    from fieldcheck.tui import present

    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.edit_post(app, pilot, "S1")
        editor = app.screen
        await pilot.press("f3")
        await ui.settle(app, pilot)
        working = ui.text(app, "#working-panel")
        # the governing check by its label, as a person reads it, never its key
        gov = editor.rating.governing_name(0)
        assert f"Governing check: [b]{editor.rating.checks[gov].label}[/b]" in working
        # the user's units first (US customary here), as the rating head and the report give
        # them (common practice, no source)
        assert app.units == "us" and " in (" in working and " mm (" not in working
        # said where a value was recalled (a clause marked [M], a reference value from memory)
        steps = explain.working(editor.rating, 0)
        recalled = "[M]" in "".join(s.clause or "" for s in steps) or any(
            "(from memory)" in s.value for s in steps
        )
        assert ("from memory" in working) == recalled
        await ui.type_into(app, pilot, "height", "12ft")
        await ui.settle(app, pilot, 0.2)
        assert working != ui.text(app, "#working-panel")  # follows once typing pauses
        await pilot.press("f4")
        await ui.settle(app, pilot)
        plot = ui.text(app, "#plot-panel")
        height = present.length(float(editor.batch.height_mm[0]), app.units)
        cap = present.force(float(editor.rating.capacity_n[0]), app.units)
        assert f"◆ this post: {height}, {cap}" in plot
        await pilot.press("f2")
        await ui.settle(app, pilot)
        assert cap in ui.text(app, "#rating-head")  # the same capacity as the rating


def footer_keys(app) -> dict[str, str]:
    """Footer keys drawn in full and not under the palette key docked at the right."""
    footer = app.screen.query_one(Footer)
    keys = list(footer.query("FooterKey"))
    palette = [k for k in keys if k.action == "command_palette"]
    limit = min([k.region.x for k in palette] + [app.size.width])
    return {
        k.description: k.key_display or k.key
        for k in keys
        if k.region.width > 0 and k.region.right <= limit
    }


def footer_line(app) -> str:
    """The footer as drawn: its keys, whole, and none cut by the palette key or the edge."""
    line = app.screen._compositor.render_strips()[-1].text
    left, bar, right = line.partition("▏")  # the palette key is docked right, after a bar
    assert bar and "palette" in right, line
    shown = [
        k
        for k in app.screen.query_one(Footer).query("FooterKey")
        if k.display and not k.has_class("-command-palette")
    ]
    labels = [f"{k.key_display or k.key} {k.description}" for k in shown]
    for text in labels:
        assert f" {text} " in left, (text, line)  # every label whole
    assert left.rstrip().endswith(labels[-1]), line  # nothing after the last whole label
    return line


async def test_footer_at_80_by_24_and_one_meaning_per_key(db, ui) -> None:
    app = ui.app(db)
    async with app.run_test(size=(80, 24)) as pilot:
        meaning: dict[str, str] = {}

        def same_everywhere() -> None:
            for key, active in app.screen.active_bindings.items():
                d = active.binding.description
                if d and not type(active.node).__module__.startswith("textual."):
                    # one meaning: "New visit" / "New post" is new, of what the screen lists
                    first = d.split()[0]
                    assert meaning.setdefault(key, first) == first, (key, meaning[key], d)

        await ui.settle(app, pilot)
        for needed in ("Open", "New visit", "Help"):
            assert needed in footer_keys(app), needed
        same_everywhere()
        await ui.open_post(app, pilot, "B1")
        for needed in ("Save", "Back", "Help", "Undo"):
            assert needed in footer_keys(app), needed
        assert "Propose remedy" in footer_line(app)  # issue 14 item 3: labels never cut
        await pilot.resize_terminal(60, 20)
        await ui.settle(app, pilot)
        assert "Propose" not in footer_line(app)  # left out whole: F1 and ctrl+p list it
        for needed in ("Save", "Back", "Help", "Undo"):
            assert needed in footer_keys(app), needed
        await pilot.resize_terminal(120, 40)  # wider again: the keys left out come back
        await ui.settle(app, pilot)
        assert "Remedy done" in footer_line(app)
        await pilot.resize_terminal(80, 24)
        await ui.settle(app, pilot)
        same_everywhere()
        tabs = [str(t.label) for t in app.screen.query("Tab")]
        keys = {b.description: b.key for b in app.screen.BINDINGS if b.key.startswith("f")}
        for tab in tabs:  # "Remedies F5": the tab's name and key are the binding's
            name, key = tab.rsplit(" ", 1)
            assert keys[name] == key.lower(), tab
        await pilot.press("escape")
        await ui.settle(app, pilot)
        for needed in ("Open", "New post", "Back", "Help"):
            assert needed in footer_keys(app), needed
        footer_line(app)
        same_everywhere()
        # F8 switches the units the list shows (the load column, last)
        table = app.screen.query_one("#posts", DataTable)
        loads = [str(table.get_row_at(i)[-1]) for i in range(table.row_count)]
        assert any("lbf" in x for x in loads)
        await pilot.press("f8")
        await ui.settle(app, pilot)
        assert app.units == "metric"
        assert any("kN" in str(table.get_row_at(i)[-1]) for i in range(table.row_count))
        await pilot.press("f8")
        await ui.settle(app, pilot)
        await pilot.press("f1")
        await ui.settle(app, pilot)
        helptext = "\n".join(str(w.content) for w in app.screen.query(Static))
        for word in ("Copy", "Withdraw", "Sort", "Worst", "Filter", "Sync", "Report", "Units"):
            assert word in helptext, word


async def test_ratio_action_and_governing_check_stay_on_screen_while_typing(db, ui) -> None:
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.edit_post(app, pilot, "B2")
        for size in ((120, 40), (80, 24), (60, 20)):
            await pilot.resize_terminal(*size)
            await ui.settle(app, pilot)
            editor = app.screen
            assert editor.has_class("-narrow") == (size[0] < 80)  # narrow screens stack panes
            screen = editor.region
            for field in ("tag", "load"):  # the top and the bottom of the form
                inp = editor.query_one(f"#f-{field}", Input)
                editor.set_focus(inp)
                await pilot.press("end", "1", "backspace")  # typed, re-rated, repainted
                await pilot.pause()
                assert screen.contains_region(inp.region) and inp.region.height == 1, field
                head = editor.query_one("#rating-head")
                lines = str(head.content).splitlines()
                assert not editor.stale and "not rated" not in lines[1]  # rated, values shown
                # action, ratio and governing check: lines 2, 5 and 6 of the head, on screen
                for k, word in ((1, "Action"), (4, "Ratio"), (5, "Governs")):
                    assert lines[k].startswith(word)
                    assert screen.y <= head.region.y + k < screen.bottom, (size, field, word)
                assert head.region.right <= size[0]


async def test_rating_pane_names_the_material_table_and_values_status(db, ui) -> None:
    # the table a post's values came from and how sure they are (read, secondary, memory)
    # reach the person at the interface as at the command line (the --json "material" and the
    # values' statuses)
    from fieldcheck.engine import explain
    from fieldcheck.records import parse_records

    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.edit_post(app, pilot, "S1")
        editor = app.screen
        await ui.settle(app, pilot, 0.3)
        panel = ui.text(app, "#rating-panel")
        meta = parse_records([editor.record]).meta[0]
        summary = explain.summary(editor.rating, 0, with_remedies=False)
        assert f"Material: {meta['_material']}" in " ".join(panel.split())
        assert f"Values: {explain.status_line(summary)}" in " ".join(panel.split())
        assert meta["_values_status"] in panel


async def test_remedies_and_shape_never_read_as_safe_when_the_action_says_otherwise(db, ui) -> None:
    # judgement (issue 13 item 9): a post whose ratio passes but whose action is repair (a pad
    # of unknown thickness) is never told "no remedy needed: the post passes"; a post with no
    # load is told to give it; an EC5 post's shape names beta (EN 1995-1-1 §6.3.2), never Ke
    app = ui.app(db)
    async with app.run_test(size=(120, 40)) as pilot:
        await ui.settle(app, pilot)
        visit = (await app.store.call(lambda log: log.posts()))[0].visit_id
        post = {"size": "4x4", "height": "8ft", "species": "dfl", "grade": "no2", "load": "4kip"}
        rows = {
            "Q1": {**post, "pad": "2ft x 2ft", "soil": "clay"},
            "Q2": {k: v for k, v in post.items() if k != "load"},
            "Q3": {"section": "100mmx100mm", "height": "2.4m", "method": "ec5", "class": "C24"}
            | {"load": "20kN"},
        }
        for tag, rec in rows.items():
            await app.store.call(lambda log, t=tag, r=rec: log.save_post(visit, {"tag": t, **r}))
        said = {}
        for tag in rows:
            await ui.edit_post(app, pilot, tag)
            await pilot.press("f5")
            await ui.settle(app, pilot, 0.2)
            said[tag] = ui.text(app, "#remedy-help")
            await pilot.press("f4")
            await ui.settle(app, pilot)
            said[tag + "shape"] = str(app.screen.query_one("#ends-panel").content)
            app.pop_screen()
            app.pop_screen()
            await ui.settle(app, pilot)
        assert app.screen is not None
        assert "passes (0.67)" in said["Q1"] and "repair" in said["Q1"]
        assert "No remedy needed" not in said["Q1"]
        assert "load missing" in said["Q2"] and "No remedy needed" not in said["Q2"]
        assert "β = 1.00" in said["Q3shape"] and "Ke" not in said["Q3shape"]
        assert "Ke = 1.00" in said["Q1shape"]


async def test_posts_rated_by_an_older_engine_are_said_and_re_rated_with_u(
    own_log, ui, older_engine
) -> None:
    # judgement: the first screen says when stored actions came from another engine version or
    # other reference data, and u re-rates the log (new ratings added, the old ones kept)
    from fieldcheck.store import Log
    from fieldcheck.store.demo import demo_rows

    own_log.parent.mkdir(parents=True)
    older_engine(True)
    with Log.open(own_log) as field:
        visit = field.add_visit(field.add_site("9 Birch Lane").id, "J. Ortiz")
        for row in demo_rows()[:2]:
            row.pop("visit")
            field.save_post(visit.id, row)
    older_engine(False)

    app = ui.app(own_log, demo=False)
    async with app.run_test(size=(140, 30)) as pilot:
        await ui.settle(app, pilot)
        assert "⟳ 2 posts rated by an older engine" in ui.text(app, "#sites-status")
        await ui.open_visit(app, pilot)  # each such post is marked in the list, and counted
        posts = app.screen.query_one("#posts", DataTable)
        assert all(str(posts.get_row_at(i)[2]).startswith("⟳") for i in range(posts.row_count))
        assert "⟳ 2 rated by an older engine" in ui.text(app, "#visit-status")
        await pilot.press("escape")
        await ui.settle(app, pilot)
        await pilot.press("u")
        await ui.settle(app, pilot, 0.2)
        assert "⟳" not in ui.text(app, "#sites-status")
    with Log.open(own_log, readonly=True) as log:
        assert log.older_rated() == 0
        versions = [r[0] for r in log.db.conn.execute("SELECT engine_version FROM ratings")]
        assert versions.count("0.0.9") == 2 and len(versions) == 4  # the old ratings kept


async def test_the_list_shows_an_office_override_in_force(own_log, ui) -> None:
    # judgement: the engineer's raised action leads the row, the rating as found beside it, and
    # the visit's counts count the post under the action in force (as the report does)
    from fieldcheck.store import Log
    from fieldcheck.store.demo import demo_rows

    own_log.parent.mkdir(parents=True)
    with Log.open(own_log) as field:
        visit = field.add_visit(field.add_site("9 Birch Lane").id, "J. Ortiz")
        row = next(r for r in demo_rows() if r["tag"] == "B1")
        row.pop("visit")
        post = field.save_post(visit.id, row)
        rated_as = field.posts(visit.id)[0].action_label
        field.review_post(post.member_id, "override", "sill crushed on site", "make-safe-now")
    app = ui.app(own_log, demo=False)
    async with app.run_test(size=(160, 30)) as pilot:
        await ui.open_visit(app, pilot)
        cell = str(app.screen.query_one("#posts", DataTable).get_row_at(0)[2])
        assert cell.startswith(present.action_word("make-safe-now")), cell
        assert f"office; rated {present.action_word(rated_as)}" in cell
        assert f"{present.action_word('make-safe-now')} 1" in ui.text(app, "#visit-status")
