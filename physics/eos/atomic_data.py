"""Atomic and molecular data for the chemical picture: ionization energies, ground levels, and H2.

The chemical-picture free energy needs, for every element H..Zn (Z = 1..30), the energy chi_j that removes
one electron from the ion of charge j and the statistical weight g_j = 2J + 1 of each ion's ground level,
and, for molecular hydrogen, the internal (rotation-vibration) partition function of the ground electronic
state. This module holds those data with their sources and computes ln Z_int(T) of H2 by direct summation
over its bound levels.

Conventions: stage j is the ion of charge j (j = 0 the neutral atom, j = Z the bare nucleus); chi_j
(eV) takes stage j to stage j + 1; g_j excludes nuclear spin (the bare nucleus has g = 1).
"""

from __future__ import annotations

import numpy as np

from .. import constants as const

__all__ = ["SOURCE", "IONIZATION_TABLE", "SEMIEMPIRICAL", "THEORETICAL", "FROM_MEMORY", "Z_MAX",
           "ionization_data", "ground_level_rule", "H2_CONSTANTS", "H2_D0_EV", "H2_FROM_MEMORY", "H2_SOURCE",
           "h2_levels", "partition_from_levels", "h2_internal_partition", "h2_bound_partition"]

SOURCE = {
    "ionization": ("NIST Atomic Spectra Database, ionization energies: A. Kramida, Yu. Ralchenko, J. Reader "
                   "and NIST ASD Team, NIST Standard Reference Database 78; values as reproduced in the CRC "
                   "Handbook of Chemistry and Physics table 'Ionization Energies of Atoms and Atomic Ions'"),
    "ground_levels": ("NIST Atomic Spectra Database ground levels (same compilation, 'Ground Levels and "
                      "Ionization Energies' listing, ground level term and J of each ion)"),
    "h2": ("K. P. Huber and G. Herzberg, Molecular Spectra and Molecular Structure IV: Constants of Diatomic "
           "Molecules (Van Nostrand Reinhold, 1979), H2 X 1Sigma_g+"),
}
Z_MAX = 30

# --- Ionization energies and ground levels, Z = 1..30 ---------------------------------------------------------
# How the table was made: every chi_j, its uncertainty and its kind flag, and every ground level, were read
# from the NIST ASD ionization-energy table (Kramida, Ralchenko, Reader & NIST ASD Team) as redistributed
# machine-readably (with NIST's reference codes, uncertainties and semi-empirical/theoretical flags) in the
# database file of the PyPI package `mendeleev` 1.3.0, read once offline; that package is not a dependency.
# Values are rounded to 10 significant digits. Cross-checks against independent pages (largest relative
# difference found; the older tables differ mainly on NIST's semi-empirical values):
#   - chemlin.org "Ionization Energies of the Chemical Elements" IE1..IE5 table and its iron page IE1..IE8
#     (28 values for C, N, O, Ne, Na, Mg, Al, Si, Cl, Ar, K, Ca, Sc, Ti, Fe): <= 2.4e-3 (Ar V: 75.02 vs 74.84;
#     Fe II 16.1877 there is the pre-2013 value, NIST now 16.19921 from 130655.4 cm^-1, Nave & Johansson
#     2013, ApJS, which the NIST publication page states);
#   - webelements.com iron page, IE1..IE21 in kJ/mol (converted with 96.485307 kJ/mol per eV): <= 3.8e-3;
#   - LibreTexts "Table of Ionization Energies" kJ/mol (9 values, Ne..Ca, stages 6..10): <= 3.6e-4;
#   - X-ray Data Booklet (LBL) Table 1-4, H-, He-, Li-, Be-like C..Ne: <= 8.4e-5.
# Per-value status, from the compilation's own flags (column 5 below: one letter per stage j):
#   "m" measured (or derived from measured levels),
#   "t" theoretical (ab initio/QED: all H- and He-like ions and some Li-like; uncertainties < 1e-3 eV),
#   "s" semi-empirical: NIST's interpolation/extrapolation along isoelectronic sequences, i.e. an ESTIMATE,
#       with uncertainties up to a few eV (see the uncertainty column); SEMIEMPIRICAL lists these (Z, j).
# No value is from memory: FROM_MEMORY is empty.
#
# Ground levels (column 4, g_j = 2J + 1 for j = 0..Z; last entry the bare nucleus, g = 1): taken from the same
# compilation's ground level of each ion. The rule they follow, which ground_level_rule() states in code and the
# tests check against the table: an ion with N electrons has the ground level of the neutral atom with N
# electrons (isoelectronic sequence), true without exception for N <= 18 and Z <= 30 (closed-shell and
# LS-coupled ground terms of the 1s..3p shells keep their J along each sequence). Exceptions, all in the
# 3d/4s shells, because 3d falls below 4s as the ion charge grows:
#   N = 19 (K-like):  charge >= 2 (Sc III on): 3d 2D3/2, g = 4 (K I, Ca II: 4s 2S1/2, g = 2)
#   N = 20 (Ca-like): charge 1 (Sc II): 3d4s 3D1, g = 3; charge >= 2: 3d2 3F2, g = 5 (Ca I: 1S0)
#   N = 22 (Ti-like): charge >= 1: 3d4 5D0, g = 1 (Ti I: 3d2 4s2 3F2, g = 5)
#   N = 23 (V-like):  charge >= 1: 3d5 6S5/2, g = 6 (V I: 4F3/2, g = 4)
#   N = 24 (Cr-like): charge 1 (Mn II): 3d5 4s 7S3 as Cr I, g = 7; charge >= 2: 3d6 5D4, g = 9
#   N = 25 (Mn-like): charge 1 (Fe II): 3d6 4s 6D9/2; charge >= 2: 3d7 4F9/2; both g = 10 (Mn I: g = 6)
#   N = 26 (Fe-like): 3d8 3F4 for charge >= 1, g = 9 as Fe I (5D4): same g, no exception in g
#   N = 27 (Co-like): charge >= 1: 3d9 2D5/2, g = 6 (Co I: 4F9/2, g = 10)
#   N = 28 (Ni-like): charge >= 1: 3d10 1S0, g = 1 (Ni I: 3F4, g = 9)
#   N = 21 (Sc-like: 2D3/2 then 4F3/2, g = 4), N = 29 (Cu-like, 2S1/2): same g along the sequence.
#
# Row layout: Z: (symbol, chi_eV for j = 0..Z-1, uncertainty_eV for j = 0..Z-1, g for j = 0..Z, kind flags)
IONIZATION_TABLE = {
    1: ("H",
        (13.5984346,),
        (1.2e-11,),
        (2, 1),
        "t"),
    2: ("He",
        (24.58738901, 54.41776553,),
        (2.5e-08, 1e-09,),
        (1, 2, 1),
        "mt"),
    3: ("Li",
        (5.391714996, 75.640097, 122.4543591,),
        (2.2e-08, 1.2e-06, 1.1e-07,),
        (2, 1, 2, 1),
        "mtt"),
    4: ("Be",
        (9.322699, 18.21115, 153.896205, 217.7185846,),
        (7e-06, 4e-05, 4e-06, 1e-07,),
        (1, 2, 1, 2, 1),
        "mmtt"),
    5: ("B",
        (8.298019, 25.15483, 37.93059, 259.374379, 340.2260225,),
        (3e-06, 5e-05, 7e-05, 9e-06, 6e-07,),
        (2, 1, 2, 1, 2, 1),
        "mmmtt"),
    6: ("C",
        (11.260288, 24.383143, 47.88778, 64.49352, 392.09056, 489.9932078,),
        (1.1e-06, 1.2e-05, 0.00025, 0.00019, 4e-05, 2.2e-07,),
        (1, 2, 1, 2, 1, 2, 1),
        "mmmmtt"),
    7: ("N",
        (14.53413, 29.60125, 47.4453, 77.4735, 97.8901, 552.06741, 667.0461377,),
        (4e-05, 9e-05, 0.0025, 0.0004, 0.0004, 8e-05, 7e-07,),
        (4, 1, 2, 1, 2, 1, 2, 1),
        "mssmmtt"),
    8: ("O",
        (13.618055, 35.12112, 54.93554, 77.4135, 113.899, 138.1189, 739.32697, 871.4099138,),
        (7e-06, 6e-05, 0.00012, 0.00025, 0.0005, 0.0021, 0.00015, 1.2e-06,),
        (5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmsmmstt"),
    9: ("F",
        (17.42282, 34.97081, 62.70798, 87.175, 114.249, 157.16311, 185.1868, 953.8983, 1103.11753,),
        (5e-05, 0.00012, 0.00025, 0.017, 0.006, 0.00025, 0.0006, 0.0003, 1.9e-06,),
        (4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmsssmmtt"),
    10: ("Ne",
        (21.564541, 40.96297, 63.4233, 97.19, 126.247, 157.934, 207.271, 239.097, 1195.8082, 1362.199256,),
        (7e-06, 4e-05, 0.0003, 0.0025, 0.012, 0.005, 0.012, 0.0019, 0.0004, 4e-06,),
        (1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmsmmmstt"),
    11: ("Na",
        (5.13907696, 47.28636, 71.62, 98.936, 138.404, 172.23, 208.504, 264.192, 299.856, 1465.0992, 1648.702285,),
        (2.5e-07, 0.00025, 0.0012, 0.012, 0.012, 0.05, 0.012, 0.022, 0.007, 0.0007, 5e-06,),
        (2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmssmsssttt"),
    12: ("Mg",
        (7.646236, 15.035271, 80.1436, 109.2654, 141.33, 186.76, 225.02, 265.924, 327.99, 367.489, 1761.8049,
         1962.663889,),
        (4e-06, 6e-06, 0.0006, 0.0012, 0.03, 0.06, 0.06, 0.019, 0.04, 0.007, 0.001, 7e-06,),
        (1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmssssssttt"),
    13: ("Al",
        (5.985769, 18.82855, 28.447642, 119.9924, 153.8252, 190.49, 241.76, 284.64, 330.21, 398.65, 442.005,
         2085.97693, 2304.140359,),
        (3e-06, 5e-05, 2.5e-05, 0.0019, 0.0025, 0.05, 0.09, 0.07, 0.04, 0.06, 0.007, 0.00016, 1.2e-05,),
        (2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmmssssssttt"),
    14: ("Si",
        (8.15168, 16.34585, 33.493, 45.14179, 166.767, 205.279, 246.57, 303.59, 351.28, 401.38, 476.273, 523.415,
         2437.65805, 2673.177958,),
        (3e-05, 4e-05, 9e-05, 7e-05, 0.003, 0.005, 0.05, 0.05, 0.06, 0.04, 0.019, 0.007, 0.00017, 1.7e-05,),
        (1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmmmssssssttt"),
    15: ("P",
        (10.486686, 19.76949, 30.20264, 51.44387, 65.02511, 220.43, 263.57, 309.6, 372.31, 424.4, 479.44, 560.62,
         611.741, 2816.90868, 3069.842145,),
        (1.5e-05, 4e-05, 9e-05, 0.00012, 0.00012, 0.005, 0.06, 0.1, 0.21, 0.09, 0.05, 0.1, 0.007, 0.00019, 1.4e-05,),
        (4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "msmmmsssssssttt"),
    16: ("S",
        (10.36001, 23.33788, 34.86, 47.222, 72.5945, 88.0529, 280.954, 328.794, 379.84, 447.7, 504.55, 564.41, 651.96,
         706.994, 3223.78057, 3494.188518,),
        (0.00012, 0.00025, 0.04, 0.012, 0.0004, 0.0004, 0.007, 0.007, 0.21, 0.3, 0.12, 0.05, 0.12, 0.007, 0.0002,
         1.9e-05,),
        (5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmssmmmmsssssttt"),
    17: ("Cl",
        (12.967633, 23.81364, 39.8, 53.24, 67.68, 96.94, 114.2013, 348.306, 400.851, 456.7, 530.0, 591.58, 656.3,
         750.23, 809.198, 3658.34366, 3946.29179,),
        (1.6e-05, 0.00012, 0.11, 0.12, 0.1, 0.04, 0.0006, 0.007, 0.012, 0.4, 0.4, 0.19, 0.12, 0.19, 0.007, 0.00022,
         7e-05,),
        (4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmssssmmmsssssttt"),
    18: ("Ar",
        (15.7596119, 27.62967, 40.735, 59.58, 74.84, 91.29, 124.41, 143.4567, 422.6, 479.76, 540.4, 619.0, 685.5,
         755.13, 855.5, 918.375, 4120.66559, 4426.22407,),
        (5e-07, 0.00012, 0.012, 0.18, 0.17, 0.01, 0.06, 0.0012, 0.06, 0.12, 0.6, 0.4, 0.3, 0.22, 0.3, 0.007, 0.00022,
         4e-05,),
        (1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmsssmsssssssssttt"),
    19: ("K",
        (4.34066373, 31.625, 45.8031, 60.917, 82.66, 99.44, 117.56, 154.87, 175.8174, 503.67, 565.6, 631.1, 714.7,
         786.3, 860.92, 967.7, 1034.542, 4610.80714, 4934.04979,),
        (9e-08, 0.00019, 0.0017, 0.019, 0.16, 0.2, 0.11, 0.05, 0.0025, 0.07, 0.7, 0.9, 0.5, 0.3, 0.25, 0.3, 0.007,
         0.00025, 5e-05,),
        (2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmssssmsssssssssttt"),
    20: ("Ca",
        (6.11315547, 11.871719, 50.91316, 67.2732, 84.34, 108.78, 127.21, 147.24, 188.54, 211.275, 591.6, 658.2,
         728.6, 817.2, 894.0, 973.7, 1086.8, 1157.726, 5128.8576, 5469.86358,),
        (2.5e-07, 4e-06, 0.00025, 0.0021, 0.08, 0.25, 0.25, 0.12, 0.06, 0.004, 0.12, 0.9, 1.1, 0.6, 0.4, 0.3, 0.4,
         0.007, 0.0003, 6e-05,),
        (1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmssssmsssssssssttt"),
    21: ("Sc",
        (6.56149, 12.79977, 24.756839, 73.4894, 91.95, 110.68, 137.99, 158.08, 180.03, 225.18, 249.798, 687.36, 757.7,
         833.2, 926.5, 1008.6, 1093.5, 1213.1, 1287.957, 5674.9036, 6033.75643,),
        (6e-05, 0.00025, 1.2e-05, 0.0004, 0.03, 0.05, 0.25, 0.25, 0.12, 0.05, 0.005, 0.12, 1.0, 1.4, 0.7, 0.4, 0.4,
         0.4, 0.007, 0.0004, 9e-05,),
        (4, 3, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmmssssmssmssssssttt"),
    22: ("Ti",
        (6.82812, 13.5755, 27.49171, 43.26717, 99.299, 119.533, 140.68, 170.5, 192.1, 215.92, 265.07, 291.5, 787.67,
         864.0, 944.5, 1042.5, 1130.2, 1220.3, 1346.3, 1425.257, 6249.0226, 6625.81023,),
        (1.2e-05, 0.0025, 0.00025, 0.00019, 0.012, 0.025, 0.18, 0.4, 0.4, 0.12, 0.06, 0.005, 0.04, 1.2, 1.6, 0.8, 0.5,
         0.5, 0.5, 0.007, 0.0007, 0.0001,),
        (5, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmmmssssmssmssssssttt"),
    23: ("V",
        (6.746187, 14.634, 29.3111, 46.709, 65.28165, 128.125, 150.72, 173.55, 206.0, 230.5, 254.8, 308.5, 336.274,
         896.0, 977.2, 1062.9, 1165.2, 1258.9, 1354.2, 1486.7, 1569.656, 6851.3112, 7246.12624,),
        (2.1e-05, 0.007, 0.0025, 0.005, 0.00017, 0.025, 0.13, 0.21, 0.4, 0.5, 0.4, 0.3, 0.006, 0.4, 1.3, 2.0, 1.1,
         0.6, 0.5, 0.5, 0.007, 0.0008, 0.00014,),
        (4, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmmmmsssssssmssssssttt"),
    24: ("Cr",
        (6.76651, 16.486305, 30.959, 49.16, 69.46, 90.6349, 160.29, 184.76, 209.5, 244.5, 270.8, 296.7, 354.7,
         384.163, 1011.6, 1097.2, 1188.0, 1294.8, 1394.5, 1495.1, 1634.1, 1721.183, 7481.8624, 7894.80289,),
        (4e-05, 1.5e-05, 0.025, 0.05, 0.04, 0.0007, 0.06, 0.15, 0.3, 0.5, 0.5, 0.6, 0.3, 0.006, 0.5, 1.4, 2.1, 1.6,
         0.7, 0.7, 0.5, 0.007, 0.0012, 0.00019,),
        (7, 6, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmssmsssssssssssssssttt"),
    25: ("Mn",
        (7.434038, 15.63999, 33.668, 51.21, 72.41, 95.604, 119.203, 195.5, 221.89, 248.6, 286.1, 314.4, 343.6, 402.95,
         435.172, 1133.7, 1224.1, 1320.3, 1430.9, 1537.2, 1643.2, 1788.7, 1879.873, 8140.7864, 8571.95438,),
        (1.2e-06, 7e-05, 0.012, 0.12, 0.1, 0.025, 0.012, 0.3, 0.17, 0.3, 0.5, 0.6, 0.7, 0.25, 0.007, 0.6, 1.5, 2.5,
         2.2, 0.8, 0.7, 0.6, 0.007, 0.0014, 0.00022,),
        (6, 7, 6, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmssmmsssssssssssssssttt"),
    26: ("Fe",
        (7.9024681, 16.19921, 30.651, 54.91, 75.0, 98.985, 124.9671, 151.06, 233.6, 262.1, 290.9, 330.8, 361.0, 392.2,
         456.2, 489.312, 1262.7, 1357.8, 1460.0, 1575.6, 1687.0, 1798.4, 1950.4, 2045.759, 8828.1864, 9277.6886,),
        (1.2e-06, 5e-05, 0.012, 0.04, 0.15, 0.015, 0.0025, 0.012, 0.4, 0.12, 0.4, 0.6, 0.7, 0.7, 0.5, 0.014, 0.7, 1.9,
         3.0, 0.5, 1.0, 0.8, 1.8, 0.007, 0.0012, 0.0003,),
        (9, 10, 9, 6, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmmsmmmssssssmssssmsssttt"),
    27: ("Co",
        (7.88101, 17.0844, 33.5, 51.27, 79.5, 102.0, 128.9, 157.8, 186.14, 275.4, 305.32, 336.1, 378.5, 410.0, 441.1,
         511.96, 546.588, 1397.2, 1504.5, 1606.0, 1724.0, 1844.0, 1960.8, 2119.4, 2218.876, 9544.1817, 10012.1297,),
        (0.00012, 0.0012, 0.06, 0.1, 0.2, 0.2, 0.5, 0.6, 0.25, 0.4, 0.23, 0.4, 0.7, 1.0, 1.4, 0.06, 0.015, 0.5, 1.2,
         4.0, 3.0, 1.1, 0.8, 1.9, 0.007, 0.001, 0.0004,),
        (10, 9, 10, 9, 6, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmssssssmssssssssmmsssssttt"),
    28: ("Ni",
        (7.639878, 18.168838, 35.187, 54.92, 76.06, 108.0, 132.0, 162.0, 193.2, 224.7, 319.5, 351.6, 384.5, 429.3,
         462.8, 495.4, 571.07, 607.02, 1540.1, 1646.0, 1758.0, 1880.0, 2008.1, 2130.5, 2295.6, 2399.259, 10288.8848,
         10775.3948,),
        (1.7e-05, 2.5e-05, 0.019, 0.25, 0.06, 1.0, 2.0, 2.1, 0.5, 0.5, 0.7, 0.3, 0.5, 0.8, 1.1, 1.7, 0.12, 0.019, 0.5,
         3.0, 4.0, 5.0, 1.3, 0.9, 2.1, 0.007, 0.001, 0.0004,),
        (9, 6, 9, 10, 9, 6, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmsssttssssssssssmssssssttt"),
    29: ("Cu",
        (7.72638, 20.29239, 36.841, 57.38, 79.8, 103.0, 139.0, 166.0, 198.0, 232.2, 265.33, 367.0, 401.0, 436.0,
         483.1, 518.7, 552.8, 632.5, 670.608, 1690.5, 1800.0, 1918.0, 2044.0, 2179.4, 2307.3, 2479.1, 2586.954,
         11062.4309, 11567.6237,),
        (4e-06, 6e-05, 0.012, 0.05, 0.7, 1.0, 1.2, 2.1, 2.2, 0.5, 0.25, 0.9, 0.3, 0.6, 0.9, 1.2, 2.1, 0.6, 0.02, 0.9,
         3.0, 4.0, 6.0, 1.5, 1.0, 2.2, 0.007, 0.0011, 0.0005,),
        (2, 1, 6, 9, 10, 9, 6, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmssssttsmsssssssssssssssttt"),
    30: ("Zn",
        (9.394197, 17.96439, 39.7233, 59.573, 82.6, 108.0, 133.9, 173.9, 203.0, 238.0, 274.4, 310.8, 417.6, 453.4,
         490.6, 540.0, 577.8, 613.3, 697.5, 737.366, 1846.8, 1961.0, 2085.0, 2214.0, 2358.0, 2491.5, 2669.9, 2781.996,
         11864.9401, 12388.9427,),
        (6e-06, 0.00025, 0.00012, 0.019, 0.9, 1.0, 1.2, 1.7, 2.0, 2.2, 0.5, 1.0, 1.2, 0.3, 0.6, 1.0, 1.3, 2.4, 0.7,
         0.021, 1.0, 3.0, 5.0, 8.0, 1.6, 1.1, 2.5, 0.007, 0.0014, 0.0006,),
        (1, 2, 1, 6, 9, 10, 9, 6, 1, 4, 5, 4, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 2, 1),
        "mmmmssssstsssssssssssssssssttt"),
}

SEMIEMPIRICAL = frozenset((Z, j) for Z, row in IONIZATION_TABLE.items() for j, kind in enumerate(row[4])
                          if kind == "s")
THEORETICAL = frozenset((Z, j) for Z, row in IONIZATION_TABLE.items() for j, kind in enumerate(row[4])
                        if kind == "t")
FROM_MEMORY: frozenset = frozenset()


def ionization_data(Z: int) -> tuple[np.ndarray, np.ndarray]:
    """Successive ionization energies and ground-level weights of element Z.

    Parameters
    ----------
    Z : int
        Atomic number, 1..30.

    Returns
    -------
    chi : ndarray, shape (Z,)
        chi[j] (eV) removes one electron from the ion of charge j.
    g : ndarray, shape (Z + 1,)
        Ground-level statistical weight 2J + 1 of the ion of charge j (g[Z] = 1, the bare nucleus); nuclear
        spin not included.

    Raises
    ------
    ValueError
        If Z is not an integer in 1..30.

    References
    ----------
    NIST Atomic Spectra Database (Kramida, Ralchenko, Reader & NIST ASD Team), see ``SOURCE``.

    Examples
    --------
    >>> chi, g = ionization_data(2)
    >>> chi.round(3).tolist(), g.tolist()
    ([24.587, 54.418], [1.0, 2.0, 1.0])
    """
    if isinstance(Z, bool) or not isinstance(Z, (int, np.integer)) or not 1 <= Z <= Z_MAX:
        raise ValueError(f"atomic number Z = {Z!r} is outside the tabulated range: give an integer 1..{Z_MAX} "
                         f"(H to Zn)")
    _, chi, _, g, _ = IONIZATION_TABLE[int(Z)]
    return np.array(chi, dtype=float), np.array(g, dtype=float)


# Neutral-atom ground levels, N = 1..30 electrons (2J + 1), NIST ASD; used by ground_level_rule.
_NEUTRAL_G = (2, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 2, 1, 4, 5, 4, 1, 2, 1, 4, 5, 4, 7, 6, 9, 10, 9, 2, 1)


def ground_level_rule(Z: int, charge: int) -> int:
    """Ground-level weight 2J + 1 of the ion of element Z with the given charge, from the isoelectronic rule.

    The ion with N = Z - charge electrons has the neutral N-electron atom's ground level, except the 3d-shell
    cases listed in the module comments (K-, Ca-, Ti-, V-, Cr-, Mn-, Co- and Ni-like ions). Returns 1 for the
    bare nucleus. Valid for Z <= 30, which is what the table covers.
    """
    N = Z - charge
    if N == 0:
        return 1
    if charge >= 1:
        if N == 19 and charge >= 2:
            return 4
        if N == 20:
            return 3 if charge == 1 else 5
        if N == 24 and charge >= 2:
            return 9
        exceptions = {22: 1, 23: 6, 25: 10, 27: 6, 28: 1}
        if N in exceptions:
            return exceptions[N]
    return _NEUTRAL_G[N - 1]


# --- H2, ground electronic state X 1Sigma_g+ -------------------------------------------------------------------
# Huber & Herzberg (1979). Seen in pages: omega_e = 4401 (harmonic, "1979HUB/HER") and B_e = 60.853 on the NIST
# CCCBDB H2 page; that page's detailed row (Irikura 2007, J. Phys. Chem. Ref. Data 36, 389) gives
# omega_e 4401.213, omega_e x_e 121.336, B_e 60.853, alpha_e 3.0622, which agree with the Huber-Herzberg values
# below to their quoted digits. From memory (Huber & Herzberg; not seen in a page): omega_e x_e = 121.33,
# alpha_e = 3.062, D_e = 0.0471, D0 = 4.4781 eV. Check of D0: Cheng et al. 2018 (PRL 121, 013001; arXiv
# 1804.11143) measure D0 from the (v=0, N=1) ortho level, 35999.582894 cm^-1; adding that level's rotational
# energy (118.49 cm^-1, from memory, ~ 2 B_0 with B_0 = 59.32) gives 36118.07 cm^-1 = 4.47810 eV.
H2_CONSTANTS = {
    "D0_eV": 4.4781,        # from (v=0, J=0) to two ground-state H atoms; from memory, checked as above
    "omega_e": 4401.21,     # cm^-1
    "omega_e_x_e": 121.33,  # cm^-1, from memory (Irikura 2007 121.336)
    "B_e": 60.853,          # cm^-1
    "alpha_e": 3.062,       # cm^-1, from memory (Irikura 2007 3.0622)
    "D_e": 0.0471,          # cm^-1 (centrifugal distortion), from memory
}
H2_D0_EV = H2_CONSTANTS["D0_eV"]   # eV, dissociation energy from the lowest level (same number, short name)
H2_FROM_MEMORY = ("D0_eV", "omega_e_x_e", "alpha_e", "D_e")
H2_SOURCE = SOURCE["h2"]

_HC_OVER_K = const.h * const.c / const.k_B   # cm K: converts a term value in cm^-1 to a temperature
_CHUNK = 8192                                # temperatures per block: bounds the levels x T work array


def h2_levels(constants: dict | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Bound rovibrational levels of H2 X 1Sigma_g+ from the Dunham-type term values.

    E(v, J) = G(v) + F_v(J), the usual Dunham-type expansion (Herzberg, Spectra of Diatomic Molecules, 1950,
    ch. III; written from memory, equation numbers not checked):
        G(v)   = omega_e (v + 1/2) - omega_e x_e (v + 1/2)^2
        F_v(J) = B_v J(J+1) - D_e J^2 (J+1)^2,   B_v = B_e - alpha_e (v + 1/2)
    counted from E(0, 0). Kept: levels with E(v, J) - E(0, 0) < D0 (bound), G rising with v, and F_v rising
    with J (J(J+1) <= B_v / (2 D_e)); beyond that the truncated expansion turns over and means nothing. With
    these constants this keeps v = 0..13 (the true molecule has v = 0..14 and 301 bound levels).

    Returns
    -------
    energy_K : ndarray
        E(v, J) - E(0, 0) in kelvin (divided by k_B).
    weight : ndarray
        (2J + 1) times the nuclear-spin weight: 1 for even J (para), 3 for odd J (ortho).
    v, J : ndarray of int
    """
    c = H2_CONSTANTS if constants is None else constants
    D0_cm = c["D0_eV"] * const.eV / (const.h * const.c)
    v_top = int(np.floor(c["omega_e"] / (2.0 * c["omega_e_x_e"]) - 0.5))
    v = np.arange(v_top + 1)[:, None]
    J = np.arange(0, 200)[None, :]
    x = v + 0.5
    G = c["omega_e"] * x - c["omega_e_x_e"] * x ** 2
    B_v = c["B_e"] - c["alpha_e"] * x
    JJ = J * (J + 1.0)
    F = B_v * JJ - c["D_e"] * JJ ** 2
    E = G + F - G[0, 0]
    keep = (E < D0_cm) & (B_v > 0.0) & (JJ <= B_v / (2.0 * c["D_e"]))
    weight = (2 * J + 1) * np.where(J % 2 == 0, 1, 3)
    vv, Jv = np.broadcast_arrays(v, J)
    return (E[keep] * _HC_OVER_K, np.broadcast_to(weight, E.shape)[keep].astype(float), vv[keep], Jv[keep])


def partition_from_levels(T, energy_K, weight):
    """ln Z and its first two logarithmic temperature derivatives for a set of discrete levels.

    Z(T) = sum_i w_i exp(-E_i / T) with E_i >= 0 in kelvin. With beta = 1/T and <.> the Boltzmann average:
        d ln Z / d ln T     = <E> / T
        d2 ln Z / d ln T2   = (<E^2> - <E>^2) / T^2 - <E> / T
    (both from differentiating the same sum; the variance is formed from deviations about the mean, so it has
    no cancellation). Vectorised over T, any shape; each distinct temperature is summed once (a map whose T
    varies along one axis costs one row), in levels x temperatures blocks of at most 8192 columns.

    Returns
    -------
    lnZ, dlnZ_dlnT, d2lnZ_dlnT2 : ndarray, shape of T
    """
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T)) or np.any(T <= 0.0):
        raise ValueError("temperature T must be finite and > 0 K for the partition function")
    E = np.asarray(energy_K, dtype=float)[:, None]
    w = np.asarray(weight, dtype=float)[:, None]
    if E.size == 0 or np.any(E < 0.0):
        raise ValueError("level energies must be a non-empty set counted from the lowest level (all >= 0)")
    flat, inverse = np.unique(T.ravel(), return_inverse=True)
    out = np.empty((3, flat.size))
    for start in range(0, flat.size, _CHUNK):
        t = flat[None, start:start + _CHUNK]
        x = E / t
        terms = w * np.exp(-x)                # E >= 0: no overflow; underflow to 0 is harmless
        Z = terms.sum(axis=0)                 # >= weight of a zero-energy level, never 0
        mean = (terms * x).sum(axis=0) / Z
        var = (terms * (x - mean) ** 2).sum(axis=0) / Z
        out[0, start:start + _CHUNK] = np.log(Z)
        out[1, start:start + _CHUNK] = mean
        out[2, start:start + _CHUNK] = var - mean
    return tuple(o[inverse.ravel()].reshape(T.shape) for o in out)


_H2_E_K, _H2_W, _, _ = h2_levels()


def h2_internal_partition(T):
    """Internal partition function of H2 (rotation and vibration of X 1Sigma_g+), by direct summation.

    Z_int(T) = sum over bound (v, J) of g_ns(J) (2J + 1) exp(-[E(v, J) - E(0, 0)] / k T), g_ns = 1 (even J,
    para) or 3 (odd J, ortho), levels from :func:`h2_levels` with the Huber & Herzberg (1979) constants.
    Energies count from the lowest level, so D0 (not D_e) is the energy to dissociate: Z_int -> 1 as T -> 0,
    and at very high T the finite sum saturates at the total weight of the bound levels. Ortho and para are
    taken in equilibrium with each other (one sum).

    Parameters
    ----------
    T : array_like
        Temperature in K, > 0.

    Returns
    -------
    lnZ, dlnZ_dlnT, d2lnZ_dlnT2 : ndarray, shape of T

    Raises
    ------
    ValueError
        If any T is not finite and positive.

    Examples
    --------
    >>> lnZ, d1, d2 = h2_internal_partition([1.0, 300.0])
    >>> round(float(lnZ[0]), 6), round(float(lnZ[1]), 2)
    (0.0, 2.05)
    """
    return partition_from_levels(T, _H2_E_K, _H2_W)


def h2_bound_partition(T):
    """The H2 internal partition function with each level's Planck-Larkin weight, as the chemical picture uses it.

    Z_b(T) = sum over bound (v, J) of g (e^-E/T - (1 + y) e^-D0/T),  y = (D0 - E) / T  (E, D0 in kelvin)
           = e^-D0/T sum g (e^y - 1 - y)

    The same convention as the atoms' bound states (:func:`thermoplane.physics.planck_larkin.planck_larkin`;
    Planck 1924, Larkin 1960, Ebeling, Kraeft & Kremp 1976): of each level the sum keeps only what the
    scattering continuum of two H atoms cannot count as free, so a level near the dissociation limit fades
    out smoothly and, once kT exceeds D0, molecules are not kept alive by the ~2700 bound levels of the
    plain sum. Our choice for the molecule (the convention is derived for Coulomb pairs); where kT << D0
    it equals :func:`h2_internal_partition` to within (sum g) (1 + D0/kT) e^-D0/kT (3e-5 relative at 3000 K).

    Returns
    -------
    lnZ, dlnZ_dlnT, d2lnZ_dlnT2 : ndarray, shape of T
        The derivatives are those of the same sum (written out per level; levels with y < 1 in the
        factored form e^-D0/T (expm1(y) - y), which has no cancellation).
    """
    T = np.asarray(T, dtype=float)
    if not np.all(np.isfinite(T)) or np.any(T <= 0.0):
        raise ValueError("temperature T must be finite and > 0 K for the partition function")
    D = H2_D0_EV * const.eV / const.k_B
    E = _H2_E_K[:, None]
    w = _H2_W[:, None]
    flat, inverse = np.unique(T.ravel(), return_inverse=True)
    out = np.empty((3, flat.size))
    for start in range(0, flat.size, _CHUNK):
        t = flat[None, start:start + _CHUNK]
        a, y0 = E / t, D / t
        y = y0 - a
        A, B = np.exp(-a), np.exp(-y0)
        near = y < 1.0
        yn = np.where(near, y, 0.0)           # the factored form only where it is used (no overflow)
        e1 = np.expm1(yn)
        h = np.where(yn < 1e-4, yn * yn * (0.5 + yn / 6.0 + yn * yn / 24.0), e1 - yn)
        z = np.where(near, B * h, A - (1.0 + y) * B)
        z1 = np.where(near, B * (y0 * h - yn * e1), a * A + B * (y - (1.0 + y) * y0))
        z2 = np.where(near, B * (y0 * y0 * h - 2.0 * y0 * yn * e1 - y0 * h + yn * e1 + yn * yn * (1.0 + e1)),
                      (a * a - a) * A + B * (y0 * (y - (1.0 + y) * y0) - y + y0 + 2.0 * y * y0))
        Z = (w * z).sum(axis=0)
        d1 = (w * z1).sum(axis=0) / Z
        out[0, start:start + _CHUNK] = np.log(Z)
        out[1, start:start + _CHUNK] = d1
        out[2, start:start + _CHUNK] = (w * z2).sum(axis=0) / Z - d1 * d1
    return tuple(o[inverse.ravel()].reshape(T.shape) for o in out)
