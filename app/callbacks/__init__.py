"""Callbacks, one module per panel. Each module exposes register(app)."""

from __future__ import annotations


def register_all(app) -> None:
    from . import composition, export, point, share, tracks
    from . import map as map_panel

    share.register(app)
    composition.register(app)
    map_panel.register(app)
    point.register(app)
    export.register(app)
    tracks.register(app)
