"""Skipping a module for a block without its inputs gives exactly the numbers of the full path.

The engine skips wet-service, temperature, incising, section-loss, eccentricity, stress-wave and
ground work for blocks where no post has those inputs (rating.py, condition.py, ground.py). A sound
post rated beside a post that has every input goes through the full path; rated alone it goes
through the skipped path. Both must agree to the last bit (computed from the formulas; no source).
"""

import numpy as np
import pytest

from fieldcheck.engine import explain
from fieldcheck.engine.rating import rate
from fieldcheck.records import parse_records

SOUND = [
    {
        "size": "4x4",
        "height": "8ft",
        "species": "douglas-fir-larch",
        "grade": "no2",
        "load": "4000lbf",
    },
    {
        "size": "6x6",
        "height": "10ft",
        "species": "hem-fir",
        "grade": "no1",
        "load": "9 kip",
        "top": "fixed",
    },
    {
        "section": "3.5inx5.5in",
        "height": "2.4 m",
        "species": "southern-pine",
        "grade": "no2",
        "load": "12 kN",
        "method": "lrfd",
    },
]
EVERYTHING = {
    "size": "6x6",
    "height": "9ft",
    "species": "unknown",
    "grade": "unknown",
    "load": "6 kip",
    "moisture": "26%",
    "temperature": "110 F",
    "incised": "yes",
    "decay_wide": "1in",
    "hollow": "1 in",
    "knot": "1in",
    "slope": "1 in 10",
    "bow_weak": "1/2 in",
    "offset_strong": "1/2 in",
    "end_contact": "80%",
    "stress_wave": "900 us",
    "stress_wave_sound": "500 us",
    "pad": "2ftx2ft",
    "soil": "clay",
    "crushed_end": "top",
    "sill_species": "douglas-fir-larch",
}


@pytest.mark.parametrize("i", range(len(SOUND)))
def test_sound_post_same_alone_and_beside_a_damaged_one(i):
    alone = rate(parse_records([SOUND[i]]).batch)
    mixed = rate(parse_records([EVERYTHING, SOUND[i]]).batch)
    for name, c in alone.checks.items():
        a, m = c.capacity_n[0], mixed.checks[name].capacity_n[1]
        assert (np.isnan(a) and np.isnan(m)) or a == m, name
    assert alone.capacity_n[0] == mixed.capacity_n[1]
    assert alone.ratio[0] == mixed.ratio[1]
    assert alone.action[0] == mixed.action[1]
    assert alone.flags[0] == mixed.flags[1]
    assert explain.summary(alone, 0)["warnings"] == explain.summary(mixed, 1)["warnings"]


def test_damaged_post_rates_the_same_in_any_company():
    alone = rate(parse_records([EVERYTHING]).batch)
    mixed = rate(parse_records([*SOUND, EVERYTHING, *SOUND]).batch)
    assert alone.capacity_n[0] == mixed.capacity_n[3]
    assert alone.governing[0] == mixed.governing[3]


def test_large_batches_in_blocks_match_one_pass(monkeypatch):
    from fieldcheck.engine import rating as rating_mod

    rows = (
        [dict(SOUND[i % 3]) for i in range(50)]
        + [EVERYTHING] * 3
        + [dict(SOUND[1]) for _ in range(30)]
    )
    batch = parse_records(rows).batch
    whole = rating_mod.rate(batch)
    monkeypatch.setattr(rating_mod, "BLOCK", 16)  # 83 posts in blocks of 16 on two threads
    blocks = rating_mod.rate(batch)
    assert blocks.partial
    np.testing.assert_array_equal(whole.capacity_n, blocks.capacity_n)
    np.testing.assert_array_equal(whole.ratio, blocks.ratio)
    np.testing.assert_array_equal(whole.action, blocks.action)
    np.testing.assert_array_equal(whole.flags, blocks.flags)
    for i in (0, 51, 70):
        assert explain.summary(whole, i) == explain.summary(blocks, i)
        assert [s.value for s in explain.working(whole, i)] == [
            s.value for s in explain.working(blocks, i)
        ]
