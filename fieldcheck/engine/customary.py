"""US customary units in the engine's SI (exact definitions, NIST SP 811).

The engine computes in mm, N and MPa; these constants only convert reference values from the
NDS Supplement (psi) and label numbers in the working and summaries. Parsing and formatting of
what people type stays in fieldcheck/units.py.
"""

IN = 25.4  # mm per inch
FT = 304.8  # mm per foot
LBF = 4.4482216152605  # N per pound-force (0.45359237 kg x 9.80665 m/s^2)
PSI = LBF / IN**2  # MPa per psi
