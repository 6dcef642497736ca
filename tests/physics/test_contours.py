"""Lines read off an evaluated plane against the refined lines of physics.regimes and physics.structure."""

from __future__ import annotations

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics import contours, plane, regimes, structure

COMP = ph.Composition.from_xyz(0.70, 0.28, 0.02)


def test_level_line_of_an_analytic_field():
    # field = y - (x/3 + 2): the crossing is the straight line y = x/3 + 2 (linear in each cell: exact)
    x = np.linspace(-6, 6, 61)
    y = np.linspace(0, 5, 41)
    field = y[:, None] - (x[None, :] / 3 + 2)
    xs, ys = contours.level_line(x, y, field, 0.0)
    ok = np.isfinite(ys)
    np.testing.assert_allclose(ys[ok], xs[ok] / 3 + 2, atol=1e-12)
    xr, yr = contours.level_line(x, y, x[None, :] - 1.234 + 0 * y[:, None], 0.0, along="x")
    np.testing.assert_allclose(xr[np.isfinite(xr)], 1.234, atol=1e-12)


def test_two_crossings_make_two_pieces():
    x = np.linspace(0, 1, 11)
    y = np.linspace(-2, 2, 81)
    field = 1 - y[:, None] ** 2 + 0 * x[None, :]        # crosses 0 at y = -1 and y = +1
    xs, ys = contours.level_line(x, y, field, 0.0)
    assert np.isnan(ys).sum() == 1
    np.testing.assert_allclose(np.sort(np.unique(np.round(ys[np.isfinite(ys)], 9))), [-1, 1], atol=1e-3)


def _reference_level_line(x, y, field, level):
    """Whole-array numpy version of the column scan (the k-th crossing of each column forms piece k), written
    here independently of the compiled kernel."""
    D = np.asarray(field, dtype=float) - np.broadcast_to(np.asarray(level, dtype=float), (field.shape[1],))[None, :]
    lo, hi = D[:-1], D[1:]
    cross = np.isfinite(lo) & np.isfinite(hi) & ((lo < 0) != (hi < 0))
    if not cross.any():
        return np.array([]), np.array([])
    rank = np.cumsum(cross, axis=0) - 1
    i, j = np.nonzero(cross & (rank < contours.MAX_PIECES))
    w = lo[i, j] / (lo[i, j] - hi[i, j])
    pieces = np.full((contours.MAX_PIECES, x.size), np.nan)
    pieces[rank[i, j], j] = y[i] + w * (y[i + 1] - y[i])
    pieces = pieces[np.isfinite(pieces).any(axis=1)]
    xs = np.concatenate([np.append(x, np.nan) for _ in pieces])[:-1]
    ys = np.concatenate([np.append(p, np.nan) for p in pieces])[:-1]
    return xs, ys


@pytest.mark.parametrize("dtype", [np.float32, np.float64])
def test_compiled_scan_equals_a_whole_array_scan(dtype):
    # a wavy field with up to six crossings per column (more than MAX_PIECES), NaN holes and a level per column
    rng = np.random.default_rng(5)
    x, y = np.linspace(-3, 3, 57), np.linspace(0, 10, 83)
    field = (np.sin(1.7 * y[:, None] + x[None, :]) + 0.3 * rng.normal(size=(83, 57))).astype(dtype)
    field[rng.random(field.shape) < 0.03] = np.nan
    for level in (0.0, 0.4, np.linspace(-0.5, 0.5, 57)):
        xs, ys = contours.level_line(x, y, field, level)
        xr, yr = _reference_level_line(x, y, field, level)
        assert np.array_equal(xs, xr, equal_nan=True) and np.array_equal(ys, yr, equal_nan=True)
    xs, ys = contours.level_line(x, y, field, 0.2, along="x")
    yr, xr = _reference_level_line(y, x, field.T, 0.2)
    assert np.array_equal(xs, xr, equal_nan=True) and np.array_equal(ys, yr, equal_nan=True)
    assert contours.level_line(x, y, np.ones((83, 57), dtype), 5.0)[0].size == 0
    with pytest.raises(ValueError):
        contours.level_line(x, y, field, np.zeros(57), along="x")


@pytest.mark.parametrize("key", ["coupling", "h_ionization", "he_ionization"])
def test_grid_boundaries_agree_with_refined_boundaries(key):
    grid = plane.plane_grid(COMP, (-10, 10), (3, 10), 200, 200)
    ours = {k: (x, y) for k, _, x, y in contours.grid_boundaries(grid, COMP)}
    x, y = ours[key]
    ref = {b.key: b for b in regimes.boundaries(COMP, n=200)}[key]
    first = np.flatnonzero(np.isnan(x))
    end = first[0] if first.size else x.size
    ok = np.isfinite(y[:end]) & np.isfinite(ref.log_T[:end])
    # a fraction of a pixel (the grid step is 0.035 dex in T)
    assert np.max(np.abs(y[:end][ok] - ref.log_T[:end][ok])) < 0.01


def test_grid_mass_lines_agree_with_central_line():
    grid = plane.plane_grid(COMP, (-10, 10), (3, 10), 200, 200)
    for m, x, y in contours.grid_mass_lines(grid, [0.1, 1.0, 10.0]):
        T = structure.central_line(m, COMP, 10.0**x)
        ok = np.isfinite(T) & np.isfinite(y)
        assert ok.sum() > 50
        assert np.max(np.abs(np.log10(T[ok]) - y[ok])) < 0.01
