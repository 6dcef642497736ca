"""Physical constants in cgs units, taken once from scipy.constants (CODATA).

Every module of :mod:`physics` takes its constants from here, so that a change
of CODATA release or of unit convention happens in one place.
"""

import math

import scipy.constants as _sc

__all__ = [
    "c", "h", "hbar", "k_B", "m_e", "m_u", "m_p", "e_esu", "eV", "sigma_sb",
    "a_rad", "G", "M_sun", "N_A", "m_e_c2", "n_e_relativistic",
]

#: speed of light, cm s^-1
c = _sc.c * 1e2
#: Planck constant, erg s
h = _sc.h * 1e7
#: reduced Planck constant, erg s
hbar = _sc.hbar * 1e7
#: Boltzmann constant, erg K^-1
k_B = _sc.k * 1e7
#: electron mass, g
m_e = _sc.m_e * 1e3
#: atomic mass constant (1 u), g
m_u = _sc.physical_constants["atomic mass constant"][0] * 1e3
#: proton mass, g
m_p = _sc.m_p * 1e3
#: elementary charge in esu (statcoulomb): e[C] * c[m/s] / 10
e_esu = _sc.e * _sc.c * 10.0
#: electron volt, erg
eV = _sc.eV * 1e7
#: Stefan–Boltzmann constant, erg cm^-2 s^-1 K^-4
sigma_sb = _sc.Stefan_Boltzmann * 1e3
#: radiation density constant a = 4 sigma / c, erg cm^-3 K^-4
a_rad = 4.0 * sigma_sb / c
#: Newtonian constant of gravitation, cm^3 g^-1 s^-2
G = _sc.G * 1e3
#: nominal solar mass (IAU 2015 Resolution B3: GM_sun = 1.3271244e26 cm^3 s^-2), g
M_sun = 1.3271244e26 / G
#: Avogadro constant, mol^-1
N_A = _sc.N_A
#: electron rest energy, erg
m_e_c2 = m_e * c * c
#: electron density (cm^-3) at which the T = 0 Fermi momentum equals m_e c (x_F = 1):
#: n = (8 pi / 3) (m_e c / h)^3 (Chandrasekhar 1939); rho ye = 9.739e5 g cm^-3 there
n_e_relativistic = 8.0 * math.pi / 3.0 * (m_e * c / h) ** 3

# sanity for readers: a_rad = 7.5657e-15 erg cm^-3 K^-4
assert math.isclose(a_rad, 7.5657e-15, rel_tol=1e-4)
