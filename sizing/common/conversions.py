"""Exact conversions between SI and the US customary units reports show.

Legal definitions (the international foot and pound of 1959, the nautical
mile of 1929, the mechanical horsepower of 550 ft lbf/s); see
``docs/references.md`` (unit conversions).
"""
FT = 0.3048                       # m per foot
FT2 = FT * FT                     # m^2 per square foot
NMI = 1852.0                      # m per nautical mile
KN = NMI / 3600.0                 # m/s per knot
FPM = FT / 60.0                   # m/s per foot per minute
LB = 0.45359237                   # kg per pound mass
G0 = 9.80665                      # standard gravity [m/s^2]
N_PER_LBF = LB * G0               # N per pound force (4.4482216152605)
LBF_FT2 = N_PER_LBF / FT2         # Pa per lbf/ft^2 (47.880259)
HP = 550.0 * FT * N_PER_LBF       # W per mechanical horsepower (745.69987)
