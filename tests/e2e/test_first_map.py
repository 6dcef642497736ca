"""The first map in a real browser: the page loads, and changing X moves the equality line."""

from __future__ import annotations

import pytest

from tests.conftest import screenshot

pytestmark = pytest.mark.e2e

from tests.e2e.plotly_js import trace_values

EQUALITY_Y = trace_values("plane-graph", "equality", "y")


def _wait_for_line(pg, previous=None, timeout=30000):
    pg.wait_for_function(
        f"""(prev) => {{ const y = ({EQUALITY_Y})(); if (!y || y.length < 10) return false;
                      return prev === null || Math.abs(y[0] - prev[0]) > 1e-3; }}""",
        arg=previous, timeout=timeout)
    return pg.evaluate(EQUALITY_Y)


def _set(pg, selector, value):
    pg.fill(selector, str(value))
    pg.press(selector, "Enter")


def test_changing_X_moves_the_equality_line(server_url, page):
    page.goto(server_url)
    before = _wait_for_line(page)
    screenshot(page, "first_map_default")
    assert page.inner_text("#comp-readout").startswith("μ = 0.62")

    _set(page, "#comp-X", 0.0)                      # sum is now 0.30: the message appears, the map stays
    page.wait_for_selector("#comp-message:has-text('must be 1')")
    _set(page, "#comp-Y", 0.98)                     # pure helium plus metals: higher mu
    after = _wait_for_line(page, before)
    screenshot(page, "first_map_helium")
    # T_eq ∝ mu^(-1/3) for ideal gas + radiation: a larger mu lowers the line at every density
    assert after[0] < before[0]
    assert page.inner_text("#comp-message") == ""
    assert page.console_errors == []
