"""What a rating is: checks, the working's steps, the rating of a batch, the actions.

Plain data. The stages (rating.STAGES) fill it; the explain layer (explain.py) turns one post
of it into text for a person.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from fieldcheck.engine.batch import EC5, LRFD, PostBatch
from fieldcheck.engine.loads import combination_name

# Action categories (our own wording; the ratio bands are judgement, common practice, no source).
# Code 4, NOT_RATED, is a state of its own: a decision input (the load) is missing, so no
# decision is made. It is never no-action or monitor and carries no due date. It sits after
# make-safe-now in the tuples so that ACTIONS[code] works; compare with NOT_RATED, never with >=.
ACTIONS = ("no-action", "monitor", "repair-or-brace", "make-safe-now", "not-rated")
ACTION_TEXT = (
    "No action: adequate as found.",
    "Monitor: re-inspect at the next visit and after any change; read the warnings.",
    "Repair or brace before the due date; restrict the load until then.",
    "Make safe now: clear the area under the load and call the engineer.",
    "Not rated: load missing. No decision can be made: give the load on the post (or the "
    "tributary area and the loads on it) and rate it again; until then treat it as unrated.",
)
DUE_DAYS = (None, 90, 14, 0, None)  # judgement defaults, editable later
NOT_RATED = 4
# Why a post is not rated (the state key of the --json output); one reason today.
STATE_RATED = "rated"
STATE_LOAD_MISSING = "not rated: load missing"
RATIO_BANDS = (0.8, 1.0, 1.25)  # <= 0.8 none, <= 1.0 monitor, <= 1.25 repair, above: make safe


def duration_factor(method, cd, lam, kmod) -> np.ndarray:
    """The duration factor per post: CD (ASD), lambda (LRFD), kmod (EC5)."""
    return np.where(method == LRFD, lam, np.where(method == EC5, kmod, cd))


@dataclass
class Check:
    name: str
    label: str
    clause: str
    capacity_n: np.ndarray
    demand_n: np.ndarray
    # the governing load combination of this check per post (row of data/load_combinations.csv,
    # -1 a load as given) and its duration factor; None: the batch's own combo and factor
    combo: np.ndarray | None = None
    factor: np.ndarray | None = None

    @property
    def ratio(self) -> np.ndarray:
        # a capacity too small to divide by is an infinite ratio: make safe now, said quietly
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            return self.demand_n / self.capacity_n


class DeferredCheck(Check):
    """A check of a large batch whose demand and duration factor per post are made when first
    read: ``make() -> (demand_n, factor)``. Both follow from the check's combination (``combo``)
    and the batch's nominal loads (combinations.load_at), and are seldom read for every post of
    a large batch, while each full-length array costs its page faults (engine/rating.py)."""

    def __init__(self, name, label, clause, capacity_n, combo, make) -> None:
        self._make, self._made = make, None
        super().__init__(name, label, clause, capacity_n, None, combo, None)

    def _pair(self) -> tuple[np.ndarray, np.ndarray]:
        if self._made is None:
            self._made = self._make()
        return self._made

    @property  # type: ignore[override]
    def demand_n(self) -> np.ndarray:
        return self._pair()[0]

    @demand_n.setter
    def demand_n(self, value) -> None:
        if value is not None:  # None: made when read
            self._made = (value, self._pair()[1])

    @property  # type: ignore[override]
    def factor(self) -> np.ndarray:
        return self._pair()[1]

    @factor.setter
    def factor(self, value) -> None:
        if value is not None:
            self._made = (self._pair()[0], value)


@dataclass
class Step:
    """One line of the working: what, its value and unit, and where it comes from."""

    label: str
    value: str
    clause: str = ""


@dataclass
class Rating:
    """The rating of a batch: arrays of length n, the checks by name, the intermediates.

    A batch of one block keeps every intermediate in ``values``; a larger one (``partial``)
    keeps the rating and the intermediates asked for (rate(keep=)): the explain layer re-rates
    one post alone (rating.detail) for its text.
    """

    batch: PostBatch
    checks: dict[str, Check]
    capacity_n: np.ndarray
    demand_n: np.ndarray
    ratio: np.ndarray
    governing: np.ndarray  # index into check_names
    action: np.ndarray
    flags: np.ndarray
    values: dict[str, np.ndarray] = field(default_factory=dict)  # intermediates by name
    partial: bool = False  # large batch: the rating and rate(keep=) only; per-post text re-rates

    @property
    def check_names(self) -> tuple[str, ...]:
        return tuple(self.checks)

    @property
    def n(self) -> int:
        return self.batch.n

    def __getattr__(self, name: str) -> np.ndarray:
        values = self.__dict__.get("values", {})
        if name in values:
            return values[name]
        raise AttributeError(name)

    def governing_name(self, i: int) -> str:
        return self.check_names[int(self.governing[i])]

    def duration_factor(self) -> np.ndarray:
        """The batch's duration factor per post: CD (ASD), lambda (LRFD), kmod (EC5)."""
        b = self.batch
        return duration_factor(b.method, b.cd, b.lam, b.kmod)

    def check_combination(self, name: str, i: int) -> tuple[str, float]:
        """(name of the load combination that governs check ``name`` for post i, its duration
        factor): every combination is rated for every check (engine/combinations.py)."""
        c = self.checks[name]
        combo = int((self.batch.combo if c.combo is None else c.combo)[i])
        factor = float((self.duration_factor() if c.factor is None else c.factor)[i])
        return combination_name(combo, self.batch, i), factor

    def combination_name(self, i: int) -> str:
        """The load combination of the governing check of post i (loads.GIVEN when the load
        was given directly)."""
        return self.check_combination(self.governing_name(i), i)[0]

    def state(self, i: int) -> str:
        """ "rated", or "not rated: load missing" (a decision input is missing: no decision)."""
        return STATE_LOAD_MISSING if int(self.action[i]) == NOT_RATED else STATE_RATED

    def rated(self) -> np.ndarray:
        """Boolean array: True where a decision was made (False: not rated, load missing)."""
        return self.action != NOT_RATED
