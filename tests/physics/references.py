"""Reference values computed independently of the code under test, shared by several test modules."""

from __future__ import annotations

import mpmath as mp

from thermoplane.physics import constants as const


def chandrasekhar_P(x):
    """T = 0 electron pressure (source: Chandrasekhar 1939), in mpmath to avoid cancellation."""
    x = mp.mpf(x)
    pre = mp.pi * const.m_e ** 4 * const.c ** 5 / (3 * const.h ** 3)
    return float(pre * (x * (2 * x * x - 3) * mp.sqrt(1 + x * x) + 3 * mp.asinh(x)))
