"""What the command line says about itself and the user's defaults (no subcommand)."""

from __future__ import annotations

from fieldcheck import __version__


def version_text() -> str:
    """`fieldcheck --version`: the version, the engine and the edition of every reference table
    (read only when asked)."""
    from fieldcheck import ENGINE_VERSION
    from fieldcheck.engine.refdata import editions

    lines = [f"fieldcheck {__version__}", f"engine {ENGINE_VERSION}", "reference data:"]
    lines += [f"  {name}: {ed or 'edition not recorded'}" for name, ed in editions().items()]
    return "\n".join(lines)


def default_units() -> str:
    """The unit system when --units is not given: $FIELDCHECK_UNITS, the config file, else us."""
    from fieldcheck.config import load

    return load().units
