"""The five-post job typed through the interface, keys counted: every key that is not part of a
value (Enter, Tab, PageDown, ctrl+n, ctrl+s, Esc...) is counted per post. The job is invented:
a cellar of old posts and one new shore, each with one defect seen."""

from __future__ import annotations

import pytest
from textual.widgets import Input

# (field values in form order; None skips the field with Enter) per post, as an inspector would
# type them; the defect kind is typed in the "add a defect" field
JOB = [
    {
        "location": "cellar, north bay",
        "size": "6x6",
        "height": "7ft 4in",
        "species": "d",
        "grade": "no2",
        "moisture": "18%",
        "defect": ("decay", [("decay_wide", "1in"), ("decay_narrow", None), ("decay_at", "b")]),
        "load": "9000 lbf",
    },
    {
        "location": "cellar, middle",
        "size": "6x6",
        "height": "7ft 4in",
        "species": "u",
        "grade": "u",
        "moisture": "22%",
        "defect": ("bow", [("bow_weak", "3/4in")]),
        "load": "8000 lbf",
    },
    {
        "location": "cellar, south bay",
        "size": "4x4",
        "height": "7ft 4in",
        "species": "h",
        "grade": "no1",
        "moisture": "15%",
        "defect": ("split", [("split", "t"), ("split_faces", "w")]),
        "load": "5000 lbf",
    },
    {
        "location": "by the stair",
        "size": "6x6",
        "height": "7ft",
        "species": "so",
        "grade": "no2",
        "moisture": "14%",
        "defect": ("knot", [("knot", "2in"), ("knot_face", "n")]),
        "load": "7000 lbf",
    },
    {
        "location": "under the new opening",
        "size": "4x4",
        "height": "8ft 4in",
        "species": "d",
        "grade": "no2",
        "moisture": "16%",
        "defect": ("notch", [("notch", "1in"), ("notch_face", "w")]),
        "load": "6000 lbf",
        "duration": "s",
    },
]


def post_keys(post: dict) -> tuple[list[str], int]:
    """The keys for one post from the visit's list, and how many of them are not values."""
    keys: list[str] = []
    other = 0

    def control(*ks: str) -> None:
        nonlocal other
        keys.extend(ks)
        other += len(ks)

    control("ctrl+n")  # a new post: the form opens on its tag, already the next number
    control("enter")  # tag kept
    keys.extend(post["location"])
    control("enter", "enter")  # location done; notes left empty
    keys.extend(post["size"])
    control("enter")
    keys.extend(post["height"])
    control("pagedown", "pagedown")  # both ends pinned (the default): on to the material
    for name in ("species", "grade", "moisture"):
        keys.extend(post[name])
        control("enter")
    kind, fields = post["defect"]
    keys.extend(kind)  # the kind of defect seen is part of what was recorded
    control("enter")
    for _name, value in fields:
        keys.extend(value or "")
        control("enter") if _name != fields[-1][0] else None
    control("pagedown")  # the rest of the defect's fields left empty: on to the load
    keys.extend(post["load"])
    if "duration" in post:
        control("enter")
        keys.extend(post["duration"])
    control("ctrl+s", "escape")  # save as found; back to the list
    return keys, other


@pytest.mark.slow  # a long walkthrough
async def test_five_post_job_takes_at_most_25_keys_that_are_not_values(db, ui, own_log) -> None:
    app = ui.app(db)
    async with app.run_test(size=(80, 24)) as pilot:
        await ui.settle(app, pilot)
        await pilot.press("ctrl+n")  # from the demo: the user's own survey
        await ui.settle(app, pilot)
        visit = [*"22 Quarry Lane", "enter", *"M. Daly", "enter", "enter", *"st", "enter"]
        visit += [*"cellar posts", "enter"]
        ui.burst(app, visit)
        await ui.drain(app, pilot)
        assert type(app.screen).__name__ == "VisitScreen"
        counts = []
        for post in JOB:
            keys, other = post_keys(post)
            for k in keys:  # one key at a time at typing speed, each where the focus is
                ui.burst(app, [k])
                if k in ("ctrl+n", "ctrl+s", "escape", "enter", "pagedown"):
                    await ui.settle(app, pilot)
            await ui.settle(app, pilot)
            counts.append(other)
        posts = await app.store.call(lambda log: log.posts(app.screen.visit_id))
        assert len(posts) == 5
        got = {p.tag: p.record for p in posts}
        assert got["P1"]["species"] == "douglas-fir-larch" and got["P1"]["decay_at"] == "bottom"
        assert got["P3"]["split"] == "through" and got["P4"]["knot_face"] == "narrow"
        assert got["P5"]["duration"] == "seven-days" and got["P2"]["bow_weak"] == "3/4in"
        assert all(p.ratio is not None for p in posts)  # every post rated
        print(f"non-value keys per post: {counts}, total {sum(counts)}")
        assert max(counts) <= 25
        assert app.screen.query_one("#filter", Input) is not None
