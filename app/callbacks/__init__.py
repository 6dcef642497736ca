"""Callbacks, one module per panel. Each module exposes register(app)."""

from __future__ import annotations


def register_all(app) -> None:
    from . import map as map_panel

    map_panel.register(app)
