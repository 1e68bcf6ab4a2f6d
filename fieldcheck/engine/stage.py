"""A stage of the rating, its flags, and the flag table built from the stages in order.

A stage declares what it reads (PostBatch fields), the checks it adds, the warnings it may
raise (each with the action it escalates to) and its functions:

- ``run(batch, checks, values)``: adds its checks and intermediates (runs in stage order);
- ``raise_flags(batch, values, flags)``: raises its warnings by name on a :class:`FlagSet`
  (runs in stage order after every stage's ``run``);
- ``summary(rating, i, out)``: adds its keys to a post's summary (explain layer);
- ``steps(rating, i)``: its lines of a post's working (explain layer).

The bit of each flag is its place in the table: the flags of the stages in the order of
``rating.STAGES``. Nobody keeps bit numbers by hand; code names flags, the table numbers them.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np

from fieldcheck.engine.blocks import at_least, set_bits


@dataclass(frozen=True)
class Flag:
    name: str
    text: str  # the warning shown to a person
    escalates_to: int = 0  # the least action when raised (0: none; 3 make safe now)


@dataclass(frozen=True)
class Stage:
    name: str
    inputs: tuple[str, ...]  # PostBatch fields read
    checks: tuple[str, ...]  # checks added (a stage may leave one not made: NaN capacity)
    flags: tuple[Flag, ...]
    run: Callable[[Any, dict, dict], None]
    raise_flags: Callable[[Any, dict, FlagSet], None] | None = None
    summary: Callable[[Any, int, dict], None] | None = None
    steps: Callable[[Any, int], list] | None = None


class FlagTable:
    """Every flag of the stages, in stage order; a flag's bit is its place in the table."""

    def __init__(self, stages: Iterable[Stage]) -> None:
        self.flags: tuple[Flag, ...] = tuple(f for s in stages for f in s.flags)
        if len(self.flags) > 63:
            raise ValueError("more than 63 flags: the flags no longer fit an int64")
        self.bit: dict[str, int] = {}
        for k, f in enumerate(self.flags):
            if f.name in self.bit:
                raise ValueError(f"flag {f.name!r} declared twice")
            self.bit[f.name] = 1 << k
        self.escalations: tuple[tuple[int, int], ...] = tuple(
            (lv, self.mask(*(f.name for f in self.flags if f.escalates_to == lv)))
            for lv in (1, 2, 3)
        )

    def mask(self, *names: str) -> int:
        """The bits of the flags named (a KeyError names a flag nobody declared)."""
        m = 0
        for name in names:
            m |= self.bit[name]
        return m

    def texts(self, flags: int) -> list[str]:
        """The warnings of a post's flags, in table order."""
        return [f.text for k, f in enumerate(self.flags) if flags >> k & 1]

    def escalate(self, act: np.ndarray, flags: np.ndarray) -> None:
        """Raise ``act`` (in place) to the least action of every flag raised."""
        present = int(np.bitwise_or.reduce(flags)) if flags.size else 0  # raised anywhere
        for level, bits in self.escalations:
            if bits & present:
                at_least(act, level, (flags & bits) != 0)


class FlagSet:
    """The flags one stage raises in one block: ``flags("wet", mask)``."""

    def __init__(self, table: FlagTable, n: int) -> None:
        self.table = table
        self.flags = np.zeros(n, dtype=np.int64)

    def __call__(self, name: str, where: np.ndarray) -> None:
        set_bits(self.flags, self.table.bit[name], where)

    def mask(self, *names: str) -> int:
        return self.table.mask(*names)
