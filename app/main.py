"""create_app(): the Dash application, its layout and its callbacks."""

from __future__ import annotations

import dash

from .paths import assets_dir


def create_app() -> dash.Dash:
    """Build the Thermoplane dashboard (layout and every panel's callbacks)."""
    from . import layout
    from .callbacks import register_all

    app = dash.Dash(
        __name__,
        title="Thermoplane",
        assets_folder=assets_dir(),
        suppress_callback_exceptions=True,
        serve_locally=True,
        update_title=None,
    )
    app.layout = layout.build_layout
    register_all(app)
    from .security import harden
    return harden(app)
