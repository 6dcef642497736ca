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
    from .compress import enable_gzip
    enable_gzip(app.server)
    from .security import harden
    return harden(app)


#: Pixels per side of the plane drawn at start (the smallest the page offers; the plane cache keeps each
#: resolution apart, so the first real map still computes its own plane, only without compiling).
WARM_UP_RESOLUTION = 20


def warm_up() -> float:
    """Draw a tiny default map once, so that the compiled kernels (numba) are compiled or loaded from their
    cache and the tables read before the first visitor asks for a map. Returns the seconds it took.
    Called by ``thermoplane serve`` and by the WSGI module (once per server with ``gunicorn --preload``)."""
    import logging
    import time
    from .callbacks.map import map_answer
    from .state import DEFAULT_VIEW, view_to_controls
    t0 = time.perf_counter()
    # through the map callback's own body (plain figure, typed arrays, fingerprint), as a first visitor would
    out = map_answer(None, None, ["comp-X.value"],
                     **view_to_controls({**DEFAULT_VIEW, "resolution": WARM_UP_RESOLUTION}))
    if out["figure"] is dash.no_update:
        logging.getLogger(__name__).warning("warm-up map failed: %s", {k: v for k, v in out.items()
                                                                       if isinstance(v, str) and v})
    return time.perf_counter() - t0
