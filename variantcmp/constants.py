"""Exact unit conversion factors (SI per aviation unit), shared by every layer.

Sources: the international foot (0.3048 m, 1959 agreement), the international nautical mile
(1852 m) and the avoirdupois pound (0.45359237 kg), as in ICAO Annex 5.
"""

M_PER_FT = 0.3048
M_PER_NM = 1852.0
MS_PER_KT = M_PER_NM / 3600.0
MS_PER_FPM = M_PER_FT / 60.0
KG_PER_LB = 0.45359237
