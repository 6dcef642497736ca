"""The view: everything that defines what the map shows, as plain data."""

from __future__ import annotations

DEFAULT_VIEW = {
    "X": 0.70,
    "Y": 0.28,
    "Z": 0.02,
    "log_rho": (-10.0, 10.0),
    "log_T": (3.0, 10.0),
    "resolution": 300,
}
