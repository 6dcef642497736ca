"""The map's faster paths give the same picture as the plain ones they replaced (issue 13): label places,
dominant neutrino process, named colour scales, and the whole figure of a composition change."""

from __future__ import annotations

import numpy as np
import pytest

from thermoplane.app import figures
from thermoplane.physics import neutrinos


def _overlap(a, b) -> float:
    dx = min(a[2], b[2]) - max(a[0], b[0])
    dy = min(a[3], b[3]) - max(a[1], b[1])
    return max(dx, 0.0) * max(dy, 0.0)


def place_labels_reference(lines, x_range, y_range, font, avoid=()):
    """app.figures.place_labels as it was written before (one call per candidate and placed box)."""
    P = figures._PLOT_PX
    wx0 = x_range[1] - x_range[0]
    wy0 = y_range[1] - y_range[0]
    placed, out = [], []
    for ax, ay in avoid:
        if np.isfinite(ax) and np.isfinite(ay):
            fx, fy = (ax - x_range[0]) / wx0, (ay - y_range[0]) / wy0
            placed.append((fx - 40 / P[0], fy - 14 / P[1], fx + 40 / P[0], fy + 34 / P[1]))
    for line in lines:
        x = np.asarray(line.log_rho, dtype=float)
        y = np.asarray(line.log_T, dtype=float)
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(x) & np.isfinite(y)
            ok &= (x > x_range[0]) & (x < x_range[1]) & (y > y_range[0]) & (y < y_range[1])
        idx = np.flatnonzero(ok)
        if idx.size == 0:
            out.append(None)
            continue
        best, best_cost = None, np.inf
        for frac in figures._CANDIDATES:
            i = idx[int(frac * (idx.size - 1))]
            fx, fy = (x[i] - x_range[0]) / wx0, (y[i] - y_range[0]) / wy0
            box = figures._label_box(fx, fy, line.label, font)
            cost = sum(_overlap(box, b) for b in placed)
            cost += 10 * (max(0.0, -box[0]) + max(0.0, box[2] - 1) + max(0.0, box[3] - 1) + max(0.0, -box[1]))
            if cost < best_cost:
                best, best_cost = (float(x[i]), float(y[i]), box), cost
            if cost == 0:
                break
        placed.append(best[2])
        out.append(best[:2])
    return out


@pytest.fixture(scope="module")
def map_lines():
    from thermoplane.app.state import DEFAULT_VIEW, controls_to_view, view_to_controls
    from thermoplane.app.view import overlay_lines, parse_view
    from thermoplane.physics import plane
    comp, opts, view = parse_view(controls_to_view(**view_to_controls(DEFAULT_VIEW)))
    grid = plane.plane_grid(comp, view["log_rho"], view["log_T"], 150, 150, **opts)
    lines, _ = overlay_lines(grid, comp, view, opts)
    assert len(lines) > 12
    return lines


@pytest.mark.parametrize("font", [13, 20])
def test_labels_go_where_they_went(map_lines, font):
    avoid = [(0.0, 5.0), (np.nan, 1.0), (3.0, 7.0), (-4.0, 6.5)]
    for x_range, y_range in (((-10.0, 10.0), (3.0, 10.0)), ((-2.0, 4.0), (5.0, 8.0))):
        assert (figures.place_labels(map_lines, x_range, y_range, font, avoid=avoid)
                == place_labels_reference(map_lines, x_range, y_range, font, avoid=avoid))


def test_crowded_labels_go_where_they_went():
    """Many lines through one corner: every candidate overlaps, so the least overlap decides."""
    rng = np.random.default_rng(5)
    lines = []
    for k in range(40):
        x = np.linspace(-1.0, 1.0, 50) + rng.normal(0, 0.05)
        y = 5.0 + 0.1 * rng.normal(size=50) + 0.01 * k
        x[rng.random(50) < 0.1] = np.nan
        lines.append(figures.Line(f"l{k}", "label " * (1 + k % 5), x, y))
    lines.append(figures.Line("out", "out of view", np.array([50.0, 60.0]), np.array([5.0, 5.0])))
    got = figures.place_labels(lines, (-10.0, 10.0), (3.0, 10.0), 13, avoid=[(0.0, 5.0)])
    assert got == place_labels_reference(lines, (-10.0, 10.0), (3.0, 10.0), 13, avoid=[(0.0, 5.0)])
    assert got[-1] is None


def test_dominant_process_is_the_argmax_of_the_parts():
    from thermoplane.physics import Composition
    comp = Composition.from_xyz(X=0.7, Y=0.28, Z=0.02)
    lr, lt = np.linspace(-10, 10, 120), np.linspace(3, 10, 110)
    parts = neutrinos.epsilon_parts(10.0 ** lr[None, :], 10.0 ** lt[:, None], comp)
    argmax = np.argmax(np.stack([parts[p] for p in neutrinos.PROCESSES]), axis=0).astype(np.int8)
    got = neutrinos.dominant_process(parts)
    assert got.dtype == np.int8 and np.array_equal(got, argmax)
    assert len(np.unique(got)) == 4                     # every process dominates somewhere on this plane
    rng = np.random.default_rng(0)
    for _ in range(50):                                 # ties (the first wins) and NaN (wins, as in argmax)
        parts = {p: rng.integers(0, 3, (6, 7)).astype(float) for p in neutrinos.PROCESSES}
        for p in neutrinos.PROCESSES:
            parts[p][rng.random((6, 7)) < 0.1] = np.nan
        argmax = np.argmax(np.stack([parts[p] for p in neutrinos.PROCESSES]), axis=0)
        assert np.array_equal(neutrinos.dominant_process(parts), argmax)
    assert int(neutrinos.dominant_process({p: np.float64(i == 2) for i, p in enumerate(neutrinos.PROCESSES)})) == 2


def test_named_colour_scales_are_plotlys():
    import plotly.colors as pc
    for name in ("PuOr_r", "RdBu_r", "Viridis", "Cividis", "Magma"):
        assert figures._scale_list(name) == [list(pair) for pair in pc.get_colorscale(name)]
    assert figures._scale_list(name) is not figures._scale_list(name)       # a fresh list each time
