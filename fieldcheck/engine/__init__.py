"""Pure numpy engine (SI inside). Modules that hook into the rating register on import."""

from fieldcheck.engine import ground as _ground  # noqa: F401  (soil, plate, load summary hooks)
from fieldcheck.engine import remedies as _remedies  # noqa: F401  (remedies in the summary)
