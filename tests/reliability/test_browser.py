"""The hardened server still works in a real browser, and refuses to be framed."""

from __future__ import annotations

import pytest

from tests.e2e.plotly_js import trace_values

pytestmark = pytest.mark.e2e

EQUALITY_Y = trace_values("plane-graph", "equality", "y")


def test_page_draws_the_map_under_the_security_headers(gunicorn_server, page):
    response = page.goto(gunicorn_server.url)
    assert response.headers["x-frame-options"] == "DENY"
    assert "frame-ancestors" in response.headers["content-security-policy"]
    # Dash's inline config and renderer start-up still run: the map and its lines appear
    page.wait_for_function(f"() => {{ const y = ({EQUALITY_Y})(); return y && y.length >= 10; }}", timeout=60000)
    assert page.inner_text("#comp-readout").startswith("μ")
    assert not [e for e in page.console_errors if "Content Security Policy" in e or "Refused" in e]
    assert page.console_errors == []


def test_another_site_cannot_frame_the_dashboard(gunicorn_server, page):
    blocked = []
    page.on("console", lambda m: blocked.append(m.text) if "frame" in m.text.lower() else None)
    page.set_content(f'<iframe id="f" src="{gunicorn_server.url}" width="400" height="300"></iframe>')
    for _ in range(50):                               # the refusal is reported on the console
        if blocked:
            break
        page.wait_for_timeout(200)
    frame = page.frame_locator("#f")
    # the browser refuses to render it: no Dash app inside the frame
    assert frame.locator("#react-entry-point").count() == 0
    assert any("frame-ancestors" in t or "X-Frame-Options" in t or "refused" in t.lower() for t in blocked), blocked
