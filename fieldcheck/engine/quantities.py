"""Numbers as the working and the remedies show them: SI first, US customary beside.

One place for these texts (the explain layer's); what people type is parsed, and what the
interface and the report show in the user's units is formatted, by fieldcheck/units.py.
"""

from __future__ import annotations

from fieldcheck.engine.customary import IN, LBF, PSI


def length(mm: float, nd: int = 1, nd_in: int = 3) -> str:
    """'88.9 mm (3.500 in)'."""
    return f"{mm:.{nd}f} mm ({mm / IN:.{nd_in}f} in)"


def force(n: float, nd: int = 3) -> str:
    """'13.345 kN (3,000 lbf)'."""
    return f"{n / 1000:.{nd}f} kN ({n / LBF:,.0f} lbf)"


def stress(mpa: float) -> str:
    """'7.929 MPa (1,150.0 psi)'."""
    return f"{mpa:.3f} MPa ({mpa / PSI:,.1f} psi)"
