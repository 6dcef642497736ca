"""The plane cache stays inside its bound under a stream of distinct requests."""

from __future__ import annotations

import numpy as np
import pytest

from thermoplane import physics as ph
from thermoplane.physics import plane

N_REQUESTS = 500
BOUND_MB = 0.2          # room for about ten 20 x 20 planes


@pytest.fixture
def small_cache(monkeypatch):
    plane.clear_cache()
    monkeypatch.setattr(plane, "CACHE_MB", BOUND_MB)
    yield BOUND_MB * 2**20
    plane.clear_cache()


def test_cache_stays_within_its_bound_under_500_distinct_planes(small_cache):
    bound = small_cache
    comps = [ph.Composition.from_xyz(0.70, 0.28, 0.02), ph.Composition.from_xyz(0.0, 0.98, 0.02),
             ph.Composition.from_xyz(0.35, 0.60, 0.05)]
    start = plane.evaluation_count()
    peak = 0
    sizes = set()
    for i in range(N_REQUESTS):
        comp = comps[i % len(comps)]
        lo = -8.0 + 0.01 * i                        # every request a different density range
        grid = plane.plane_grid(comp, (lo, lo + 6.0), (4.0 + 0.001 * i, 8.0), n_rho=20, n_T=20)
        n, nbytes = plane.cache_info()
        peak = max(peak, nbytes)
        sizes.add(grid.nbytes)
        assert nbytes <= bound, (i, n, nbytes, bound)
        # the newest plane is kept: it is smaller than the whole bound
        assert n >= 1
    # every request was distinct, so every one was computed; the cache forgot the old ones
    assert plane.evaluation_count() - start == N_REQUESTS
    n, nbytes = plane.cache_info()
    per_plane = max(sizes)
    assert n <= bound // min(sizes)
    # least recently used out: the cache is nearly full, not emptied on each insert
    assert nbytes > bound - 2 * per_plane
    print(f"\n{N_REQUESTS} distinct 20x20 planes: peak cache {peak / 2**20:.3f} MB of {BOUND_MB} MB bound, "
          f"{n} planes kept, {per_plane} bytes each")


def test_recently_used_plane_survives_and_oldest_goes(small_cache):
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    keep = plane.plane_grid(comp, (-5.0, 5.0), (4.0, 8.0), n_rho=20, n_T=20)
    first_other = plane.plane_grid(comp, (-6.0, 5.0), (4.0, 8.0), n_rho=20, n_T=20)
    for i in range(60):
        plane.plane_grid(comp, (-4.0 + 0.01 * i, 5.0), (4.0, 8.0), n_rho=20, n_T=20)
        # touching it moves it to the recent end
        assert plane.plane_grid(comp, (-5.0, 5.0), (4.0, 8.0), n_rho=20, n_T=20) is keep
    count = plane.evaluation_count()
    again = plane.plane_grid(comp, (-6.0, 5.0), (4.0, 8.0), n_rho=20, n_T=20)
    assert plane.evaluation_count() == count + 1      # recomputed: it had been dropped
    assert again is not first_other and np.array_equal(again.regime, first_other.regime)


def test_plane_larger_than_the_bound_is_returned_but_not_kept(small_cache):
    comp = ph.Composition.from_xyz(0.70, 0.28, 0.02)
    big = plane.plane_grid(comp, (-5.0, 5.0), (4.0, 8.0), n_rho=200, n_T=200)
    assert big.nbytes > small_cache
    assert plane.cache_info() == (0, 0)
